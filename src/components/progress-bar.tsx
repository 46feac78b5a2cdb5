/** A labelled progress bar; `value` 0–1, or null while the total is unknown. */
export function ProgressBar({ label, value, detail }: { label: string; value: number | null; detail?: string }) {
  const percent = value === null ? null : Math.max(0, Math.min(100, Math.round(value * 100)));
  return (
    <div className="space-y-1">
      <div className="flex items-baseline justify-between gap-3 text-sm">
        <span className="font-medium">{label}</span>
        <span className="font-mono text-xs text-muted">
          {detail ? `${detail} · ` : ''}
          {percent === null ? '…' : `${percent} %`}
        </span>
      </div>
      <div
        role="progressbar"
        aria-label={label}
        aria-valuemin={0}
        aria-valuemax={100}
        aria-valuenow={percent ?? undefined}
        className="h-2.5 overflow-hidden rounded-full bg-raised"
      >
        <div
          className={`h-full rounded-full bg-flare-500 transition-[width] duration-200 ${percent === null ? 'w-1/3 animate-pulse' : ''}`}
          style={percent === null ? undefined : { width: `${percent}%` }}
        />
      </div>
    </div>
  );
}
