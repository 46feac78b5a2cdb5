import { useQuery } from '@tanstack/react-query';
import { Link, useNavigate } from 'react-router';
import type { CaptureSummaryRow, CaptureSettingsInput, RigDetail } from '../../../shared/schemas';
import { Button } from '../button';
import { ErrorNotice } from '../notice';
import { useStartDecode } from '../../lib/decode-job';
import { useSaveSettings } from '../../lib/save-settings';
import { canCapture } from '../../lib/permissions';
import { overviewQueryOptions } from '../../lib/overview';
import { useCallLayer } from '../../lib/call-layer';
import { useDiscovery } from './get-discovery';
import { diagnose } from './diagnose';
import { NothingFound } from './finder-panel';
import { captureScope } from '../../lib/scope';

/**
 * After a decode: what is wrong in plain words (wrong line settings, directions not known or
 * swapped, a field map that does not fit) with the fix one click away. Shows nothing when all is well.
 */
export function DecodeDiagnosis({ rig, capture, onRedecode }: { rig: RigDetail; capture: CaptureSummaryRow; onRedecode?: () => void }) {
  const decoded = capture.status === 'decoded' && capture.settings !== null;
  const overview = useQuery({ ...overviewQueryOptions(rig.id, capture.id), enabled: decoded });
  const discovery = useDiscovery(rig.id, capture.id, decoded);
  const layer = useCallLayer(rig.id, capture.id);
  const save = useSaveSettings(rig.id, capture.id);
  const start = useStartDecode(rig.id, capture.id);
  const navigate = useNavigate();
  if (!decoded || !overview.data || !capture.settings) return null;
  const o = overview.data;
  const frames = Object.values(o.byStatus).reduce((n, v) => n + (v ?? 0), 0);
  const problems = diagnose(
    { settings: capture.settings, frames, goodFrames: o.byStatus.ok ?? 0, exchanges: layer.data?.current ? layer.data.current.exchanges : null, mapName: layer.data?.mapName ?? null },
    discovery.data,
  );
  if (problems.length === 0) return null;
  const mayDecode = canCapture.decode(rig.myRole);
  const redecode = (settings: CaptureSettingsInput) =>
    save.mutate(settings, {
      onSuccess: () =>
        start.mutate(undefined, {
          onSuccess: () => (onRedecode ? onRedecode() : navigate(`${captureScope(rig.id, capture.id).page}/setup`)),
        }),
    });
  const base = captureScope(rig.id, capture.id).page;
  return (
    <section aria-label="What is wrong with this decode" className="space-y-3 rounded-md border border-flare-500/50 bg-flare-500/10 px-4 py-3 text-sm" data-testid="decode-diagnosis">
      {problems.map((p) => (
        <div key={p.kind} className="space-y-2">
          <p className="font-medium">{p.text}</p>
          {p.kind === 'directions' ? (
            <ul className="list-disc pl-5 text-xs">
              {p.reasons.map((r) => (
                <li key={r}>{r}</li>
              ))}
            </ul>
          ) : null}
          {p.kind === 'nothing-found' && discovery.data ? <NothingFound d={discovery.data} /> : null}
          {(p.kind === 'damaged' || p.kind === 'directions') && p.fix && mayDecode ? (
            <Button busy={save.isPending || start.isPending} onClick={() => redecode(p.fix!.settings)}>
              {p.fix.label}
            </Button>
          ) : null}
          {p.kind === 'no-exchanges' ? (
            <p className="flex flex-wrap gap-4">
              <Link to={`${base}/field-hints`} className="font-medium text-link hover:underline">
                Field hints of this capture →
              </Link>
              <a href="#field-map-choice" className="font-medium text-link hover:underline">
                Choose the field map ↓
              </a>
            </p>
          ) : null}
        </div>
      ))}
      <p className="text-xs text-muted">The current decode stays as it is until a new one finishes.</p>
      {save.error || start.error ? <ErrorNotice error={save.error ?? start.error} /> : null}
    </section>
  );
}
