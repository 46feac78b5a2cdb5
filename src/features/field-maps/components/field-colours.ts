// Field colours of the preview: the same colour marks a field's row in the table and its octets
// in the hex view. Light tints keep the hex digits readable in both colour schemes.
const SWATCHES = [
  'bg-sky-300/60',
  'bg-amber-300/60',
  'bg-emerald-300/60',
  'bg-rose-300/60',
  'bg-violet-300/60',
  'bg-lime-300/60',
  'bg-orange-300/60',
  'bg-cyan-300/60',
  'bg-fuchsia-300/60',
  'bg-teal-300/60',
];

export function swatch(index: number): string {
  return SWATCHES[index % SWATCHES.length];
}
