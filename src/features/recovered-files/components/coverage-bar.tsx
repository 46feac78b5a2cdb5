import type { RecordCoverageName } from '../../../../shared/schemas';
import { coverageRuns, coverageText } from './coverage';

export const coverageStyle: Record<RecordCoverageName, { label: string; className: string }> = {
  seen: { label: 'seen', className: 'bg-tide-500' },
  // missing records are drawn hatched as well as pale, so they differ without colour
  missing: { label: 'missing', className: 'bg-raised bg-[repeating-linear-gradient(135deg,transparent_0_3px,var(--fl-line)_3px_5px)]' },
  conflict: { label: 'conflicting', className: 'bg-flare-500 bg-[repeating-linear-gradient(90deg,transparent_0_2px,var(--color-flare-700)_2px_3px)]' },
};

/** One segment per run of records; the text alternative lists the missing and conflicting records. */
export function CoverageBar({ coverage, className = '' }: { coverage: readonly RecordCoverageName[]; className?: string }) {
  const text = coverageText(coverage);
  const total = Math.max(1, coverage.length);
  return (
    <div role="img" aria-label={text} title={text} className={`flex h-3 overflow-hidden rounded-sm border border-line ${className}`}>
      {coverageRuns(coverage).map((run) => (
        <span
          key={run.first}
          className={`h-full border-r border-surface/60 last:border-r-0 ${coverageStyle[run.state].className}`}
          style={{ width: `${((run.last - run.first + 1) / total) * 100}%` }}
        />
      ))}
    </div>
  );
}

export function CoverageLegend() {
  return (
    <ul className="flex flex-wrap gap-4 text-xs text-muted" aria-label="Coverage colours">
      {(['seen', 'missing', 'conflict'] as const).map((s) => (
        <li key={s} className="flex items-center gap-1.5">
          <span className={`inline-block h-3 w-5 rounded-sm border border-line ${coverageStyle[s].className}`} aria-hidden />
          {coverageStyle[s].label}
        </li>
      ))}
    </ul>
  );
}
