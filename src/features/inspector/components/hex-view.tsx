import { formatHexByte } from '../../../components/units';
import { fieldOf, type FieldName } from './frame-bits';

export const fieldStyles: Record<FieldName, { label: string; cell: string; swatch: string }> = {
  address: { label: 'Address', cell: 'bg-tide-500/15 text-tide-700 dark:text-tide-300', swatch: 'bg-tide-500/40' },
  control: { label: 'Control', cell: 'bg-[#4f6fd6]/15 text-[#3450b0] dark:text-[#a9baf2]', swatch: 'bg-[#4f6fd6]/40' },
  info: { label: 'Information', cell: 'text-text', swatch: 'bg-raised border border-line' },
  fcs: { label: 'FCS', cell: 'bg-flare-500/18 text-flare-700 dark:text-flare-300', swatch: 'bg-flare-500/45' },
};

/** Call-layer fields alternate between two underlines, so neighbours stay apart without a colour key. */
const spanTones = ['underline decoration-2 decoration-tide-600 underline-offset-4', 'underline decoration-2 decoration-dotted decoration-flare-600 underline-offset-4'];

/** A call-layer field's octets: [start, end) counted from the address octet. */
export interface HexSpan {
  start: number;
  end: number;
  label: string;
}

const printable = (b: number) => (b >= 0x20 && b < 0x7f ? String.fromCharCode(b) : '·');

interface Props {
  octets: number[];
  hasFcs: boolean;
  suspectOctet: number | null;
  /** the call decode's fields, underlined in turn; the active one is shaded */
  spans?: HexSpan[];
  activeSpan?: number | null;
  onSpan?: (index: number | null) => void;
}

/** Offsets, hex and ASCII, 16 octets a line, the frame's parts shaded; the suspect octet outlined; call fields underlined. */
export function HexView({ octets, hasFcs, suspectOctet, spans = [], activeSpan = null, onSpan }: Props) {
  const lines: number[][] = [];
  for (let i = 0; i < octets.length; i += 16) lines.push(octets.slice(i, i + 16).map((_, k) => i + k));
  const spanOf = new Int32Array(octets.length).fill(-1);
  spans.forEach((s, k) => {
    for (let i = Math.max(0, s.start); i < Math.min(octets.length, s.end); i++) spanOf[i] = k;
  });
  return (
    <div>
      <ul className="mb-2 flex flex-wrap gap-3 text-xs text-muted" aria-label="Legend">
        {(Object.keys(fieldStyles) as FieldName[]).map((f) => (
          <li key={f} className="flex items-center gap-1.5">
            <span className={`inline-block h-3 w-3 rounded-sm ${fieldStyles[f].swatch}`} aria-hidden />
            {fieldStyles[f].label}
          </li>
        ))}
        {spans.length > 0 ? (
          <li className="flex items-center gap-1.5">
            <span className="font-mono underline decoration-2 decoration-tide-600 underline-offset-4" aria-hidden>
              00
            </span>
            call fields (point at one to see its name)
          </li>
        ) : null}
        {suspectOctet !== null ? (
          <li className="flex items-center gap-1.5">
            <span className="inline-block h-3 w-3 rounded-sm ring-2 ring-[#e0582f]" aria-hidden /> octet with the suspect bit
          </li>
        ) : null}
      </ul>
      <div className="overflow-x-auto font-mono text-[13px] leading-7" data-testid="hex-view" onMouseLeave={() => onSpan?.(null)}>
        {lines.map((line) => (
          <div key={line[0]} className="flex gap-4 whitespace-pre">
            <span className="w-12 text-muted">{line[0].toString(16).padStart(4, '0')}</span>
            <span className="flex">
              {line.map((i) => {
                const field = fieldOf(i, octets.length, hasFcs);
                const suspect = i === suspectOctet;
                const k = spanOf[i];
                const span = k >= 0 ? spans[k] : null;
                const active = span !== null && k === activeSpan;
                return (
                  <span
                    key={i}
                    // the notes form reads the octet number from the end of this title
                    title={`${span ? `${span.label} (${fieldStyles[field].label})` : fieldStyles[field].label}, octet ${i}`}
                    data-suspect={suspect || undefined}
                    data-span={span ? k : undefined}
                    data-active={active || undefined}
                    onMouseEnter={span ? () => onSpan?.(k) : undefined}
                    className={`mx-px rounded-sm px-0.5 ${fieldStyles[field].cell} ${span ? spanTones[k % 2] : ''} ${active ? 'bg-flare-500/35 font-semibold text-text' : ''} ${suspect ? 'ring-2 ring-[#e0582f] font-semibold' : ''}`}
                  >
                    {formatHexByte(octets[i])}
                  </span>
                );
              })}
            </span>
            <span className="text-muted">{line.map((i) => printable(octets[i])).join('')}</span>
          </div>
        ))}
      </div>
    </div>
  );
}
