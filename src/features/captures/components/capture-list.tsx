import { Link } from 'react-router';
import type { CaptureSummaryRow, RigDetail } from '../../../../shared/schemas';
import { ButtonLink } from '../../../components/button';
import { Card, CardTitle } from '../../../components/card';
import { ErrorNotice } from '../../../components/notice';
import { formatBytes, formatCount } from '../../../components/units';
import { formatDateTime } from '../../../lib/format';
import { useCaptures } from '../api/get-captures';
import { DeleteCaptureButton } from './delete-capture-button';
import { canCapture } from '../../../lib/permissions';
import { captureScope } from '../../../lib/scope';

const statusWords: Record<CaptureSummaryRow['status'], string> = {
  uploaded: 'needs channel roles',
  queued: 'waiting to decode',
  decoding: 'decoding…',
  decoded: 'decoded',
  failed: 'decode failed',
  cancelled: 'decode cancelled',
  interrupted: 'decode interrupted',
};

function captureHref(rigId: number, c: CaptureSummaryRow): string {
  return c.status === 'decoded' ? `${captureScope(rigId, c.id).page}` : `${captureScope(rigId, c.id).page}/setup`;
}

export function CaptureList({ rig }: { rig: RigDetail }) {
  const captures = useCaptures(rig.id);
  const mayUpload = canCapture.upload(rig.myRole);
  const mayRemove = canCapture.remove(rig.myRole);
  return (
    <Card>
      <CardTitle aside={mayUpload ? <ButtonLink to={`/rigs/${rig.id}/captures/new`}>Upload a capture</ButtonLink> : null}>Captures</CardTitle>
      {captures.isPending ? <p className="text-sm text-muted">Loading captures…</p> : null}
      {captures.error ? <ErrorNotice error={captures.error} /> : null}
      {captures.data?.length === 0 ? (
        <p className="text-sm text-muted">
          No captures yet.{mayUpload ? ' Upload a recording from your logic analyzer to see its frames.' : ' An analyst or the owner can upload one.'}
        </p>
      ) : null}
      {captures.data && captures.data.length > 0 ? (
        <table className="w-full text-sm">
          <thead>
            <tr className="border-b border-line text-left text-xs uppercase tracking-wide text-muted">
              <th className="py-2 pr-4 font-medium">Capture</th>
              <th className="py-2 pr-4 font-medium">State</th>
              <th className="py-2 pr-4 text-right font-medium">Frames</th>
              <th className="py-2 pr-4 text-right font-medium">Size</th>
              <th className="py-2 pr-4 font-medium">Uploaded</th>
              {mayRemove ? (
                <th className="py-2 font-medium">
                  <span className="sr-only">Remove</span>
                </th>
              ) : null}
            </tr>
          </thead>
          <tbody>
            {captures.data.map((c) => (
              <tr key={c.id} className="border-b border-line/70 last:border-0" data-testid="capture-row" data-capture={c.name}>
                <td className="py-2 pr-4">
                  <Link to={captureHref(rig.id, c)} className="font-medium text-link hover:underline">
                    {c.name}
                  </Link>
                </td>
                <td className="py-2 pr-4 text-muted">{statusWords[c.status]}</td>
                <td className="py-2 pr-4 text-right font-mono">{c.status === 'decoded' ? formatCount(c.frameCount) : '—'}</td>
                <td className="py-2 pr-4 text-right font-mono text-muted">{formatBytes(c.size)}</td>
                <td className="py-2 pr-4 text-muted">
                  {formatDateTime(c.uploadedAt)} · {c.uploadedBy}
                </td>
                {mayRemove ? (
                  <td className="py-2 text-right">
                    <DeleteCaptureButton rigId={rig.id} capture={c} compact />
                  </td>
                ) : null}
              </tr>
            ))}
          </tbody>
        </table>
      ) : null}
      {captures.data?.some((c) => c.status === 'failed' || c.status === 'cancelled' || c.status === 'interrupted') && !mayRemove ? (
        <p className="mt-3 text-xs text-muted">A capture that failed to decode can be set up and decoded again from its channel roles; only the rig's owner can remove one.</p>
      ) : null}
    </Card>
  );
}
