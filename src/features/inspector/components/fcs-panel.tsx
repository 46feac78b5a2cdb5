import type { FrameDetail } from '../../../../shared/schemas';
import { formatFcs } from '../../../components/units';

/** Received versus computed FCS, and which single bit explains a mismatch when one does. */
export function FcsPanel({ frame }: { frame: FrameDetail['frame'] }) {
  const match = frame.fcsReceived !== null && frame.fcsReceived === frame.fcsComputed;
  const flipped = frame.flippedBit;
  return (
    <div className="space-y-3 text-sm" data-testid="fcs-panel">
      <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-1">
        <dt className="text-muted">Received</dt>
        <dd className="font-mono">{formatFcs(frame.fcsReceived)}</dd>
        <dt className="text-muted">Computed</dt>
        <dd className="font-mono">{formatFcs(frame.fcsComputed)}</dd>
      </dl>
      {frame.fcsReceived === null ? (
        <p className="text-muted">This frame has no complete FCS ({frame.status === 'abort' ? 'the sender aborted it' : 'too few octets'}).</p>
      ) : match ? (
        <p className="text-ok">The FCS matches: the octets arrived as sent.</p>
      ) : flipped !== null ? (
        <div role="note" className="rounded-md border border-[#e0582f]/50 bg-[#e0582f]/10 px-3 py-2" data-testid="diagnosis">
          <p className="font-medium">Single-bit diagnosis: bit {flipped} is flipped</p>
          <p className="mt-0.5 text-muted">
            Octet {flipped >> 3}, bit {flipped & 7} (counted LSB first, as sent). Inverting it makes the FCS match — look for a timing race,
            a marginal edge or noise at that moment on the waveform below.
          </p>
        </div>
      ) : (
        <p role="note" className="rounded-md border border-[#e0582f]/50 bg-[#e0582f]/10 px-3 py-2" data-testid="diagnosis">
          The FCS does not match and no single flipped bit explains it: more than one bit is wrong, or octets were lost or added.
        </p>
      )}
    </div>
  );
}
