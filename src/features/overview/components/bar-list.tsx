/** Horizontal bars with the number written beside each: readable without a legend. */
export function BarList({ items, colour = 'bg-tide-500' }: { items: { label: string; value: number; colour?: string; hint?: string }[]; colour?: string }) {
  const max = Math.max(1, ...items.map((i) => i.value));
  return (
    <ul className="space-y-1.5 text-sm">
      {items.map((item) => (
        <li key={item.label} className="grid grid-cols-[9rem_1fr_4.5rem] items-center gap-3" title={item.hint}>
          <span className="truncate">{item.label}</span>
          <span className="h-3 overflow-hidden rounded-sm bg-raised">
            <span
              className={`block h-full rounded-sm ${item.colour ? '' : colour}`}
              style={{ width: `${(item.value / max) * 100}%`, background: item.colour }}
            />
          </span>
          <span className="text-right font-mono tabular-nums">{item.value.toLocaleString('en-GB')}</span>
        </li>
      ))}
    </ul>
  );
}
