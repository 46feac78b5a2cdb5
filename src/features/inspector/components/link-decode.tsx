import type { FrameDetail } from '../../../../shared/schemas';
import { formatAddress } from '../../../lib/format';
import { octetsOf } from './frame-bits';

const kindWords = { I: 'I frame (information)', S: 'S frame (supervisory)', U: 'U frame (unnumbered)' } as const;

/** The link layer: address, control octet, frame kind and its counters. */
export function LinkDecode({ frame }: { frame: FrameDetail['frame'] }) {
  const octets = octetsOf(frame.hexAll);
  const control = octets.length > 1 ? octets[1] : null;
  const rows: [string, string][] = [
    ['Address', frame.address === null ? '—' : `${formatAddress(frame.address)}${frame.stationName ? ` · ${frame.stationName}` : ''}`],
    ['Control', control === null ? '—' : `0x${control.toString(16).padStart(2, '0')} · ${control.toString(2).padStart(8, '0')}`],
    ['Kind', frame.kind ? kindWords[frame.kind] : '—'],
    ['Command', frame.command ?? '—'],
    ['N(S)', frame.ns === null ? '—' : String(frame.ns)],
    ['N(R)', frame.nr === null ? '—' : String(frame.nr)],
    ['P/F', frame.pf === null ? '—' : frame.pf ? 'set' : 'clear'],
    ['Information', `${frame.infoLength} octets`],
  ];
  return (
    <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-1 text-sm" data-testid="link-decode">
      {rows.map(([k, v]) => (
        <div key={k} className="contents">
          <dt className="text-muted">{k}</dt>
          <dd className="font-mono">{v}</dd>
        </div>
      ))}
    </dl>
  );
}
