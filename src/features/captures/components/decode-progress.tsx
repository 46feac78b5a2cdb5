import type { DecodeJob } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { ProgressBar } from '../../../components/progress-bar';
import { formatBytes, formatCount } from '../../../components/units';

const stateWords: Record<DecodeJob['state'], string> = {
  queued: 'Waiting for the decoder',
  running: 'Decoding',
  done: 'Decoded',
  failed: 'The decode failed',
  cancelled: 'Decode cancelled',
  interrupted: 'The decode was interrupted (the server restarted)',
};

/** Progress of one decode job: share of the file read, frames found, the stage the decoder is in. */
export function DecodeProgress({ job, onCancel, cancelling, canCancel }: { job: DecodeJob; onCancel: () => void; cancelling: boolean; canCancel: boolean }) {
  const active = job.state === 'queued' || job.state === 'running';
  const share = job.state === 'done' ? 1 : job.bytesTotal > 0 ? job.bytesRead / job.bytesTotal : null;
  return (
    <section aria-label="Decode progress" className="space-y-3 rounded-lg border border-line bg-surface p-5 shadow-sm">
      <div className="flex items-center justify-between gap-3">
        <h2 className="text-base font-semibold">{stateWords[job.state]}</h2>
        {active && canCancel ? (
          <Button variant="danger" busy={cancelling} onClick={onCancel}>
            Cancel decode
          </Button>
        ) : null}
      </div>
      <ProgressBar label="File read" value={share} detail={`${formatBytes(job.bytesRead)} of ${formatBytes(job.bytesTotal)}`} />
      <dl className="grid grid-cols-2 gap-x-6 gap-y-1 text-sm sm:grid-cols-3">
        <div>
          <dt className="text-xs text-muted">Frames so far</dt>
          <dd className="font-mono" data-testid="frames-so-far">{formatCount(job.frames)}</dd>
        </div>
        <div>
          <dt className="text-xs text-muted">Stage</dt>
          <dd className="font-mono">{job.stage || '—'}</dd>
        </div>
      </dl>
      {job.state === 'done' && job.warnings.length > 0 ? (
        <details className="rounded-md border border-line bg-raised px-3 py-2 text-sm">
          <summary className="cursor-pointer font-medium">
            {job.warnings.length === 1 ? '1 part of the file was read past' : `${job.warnings.length} parts of the file were read past`}
          </summary>
          <ul className="mt-2 list-disc space-y-1 pl-5 text-muted">
            {job.warnings.map((w, i) => (
              <li key={i}>{w}</li>
            ))}
          </ul>
        </details>
      ) : null}
    </section>
  );
}
