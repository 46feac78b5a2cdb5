import type { LineBit } from './frame-bits';

/**
 * The line bits between the flags in the order they were sent (each octet LSB first), cut
 * into octets of destuffed bits; a deleted stuffing zero sits between them, marked.
 */
export function BitView({ bits, suspectBit }: { bits: LineBit[]; suspectBit: number | null }) {
  const groups: LineBit[][] = [];
  let current: LineBit[] = [];
  for (const b of bits) {
    current.push(b);
    if (!b.stuffed && b.bit % 8 === 7) {
      groups.push(current);
      current = [];
    }
  }
  if (current.length) groups.push(current);
  return (
    <div>
      <p className="mb-2 text-xs text-muted">
        <span className="mr-1 inline-block rounded-sm border border-dashed border-flare-600 px-1 font-mono text-flare-700 line-through dark:text-flare-300">0</span>
        a zero inserted after five 1s and deleted by the receiver ·{' '}
        <span className="mx-1 inline-block rounded-sm bg-[#e0582f] px-1 font-mono text-white">1</span> the suspect bit
      </p>
      <div className="flex flex-wrap gap-x-3 gap-y-1.5 font-mono text-[13px]" data-testid="bit-view">
        {groups.map((g, gi) => (
          <span key={gi} className="flex items-center gap-px" title={`octet ${gi}`}>
            <span className="mr-1 text-[10px] text-muted">{gi}</span>
            {g.map((b, k) =>
              b.stuffed ? (
                <span key={k} data-stuffed className="rounded-sm border border-dashed border-flare-600 px-[2px] text-flare-700 line-through dark:text-flare-300" title="stuffed zero (deleted)">
                  0
                </span>
              ) : (
                <span
                  key={k}
                  data-suspect={b.bit === suspectBit || undefined}
                  title={`bit ${b.bit}`}
                  className={b.bit === suspectBit ? 'rounded-sm bg-[#e0582f] px-[2px] font-semibold text-white' : b.value ? 'px-[2px] text-text' : 'px-[2px] text-muted'}
                >
                  {b.value}
                </span>
              ),
            )}
          </span>
        ))}
      </div>
    </div>
  );
}
