import type { FrameDetail } from '../../../../shared/schemas';
import { ProbingCautions } from '../../../components/safety-panel';
import { formatFcs } from '../../../components/units';
import { plural } from '../../../lib/format';

type Frame = FrameDetail['frame'];

/** A residue frame: how many bits were left over, and what the FCS over the whole octets says about them. */
function ResidueNote({ frame, match }: { frame: Frame; match: boolean }) {
  const extra = frame.bitLength % 8;
  const whole = Math.floor(frame.bitLength / 8);
  return (
    <div role="note" className="rounded-md border border-[#4f6fd6]/50 bg-[#4f6fd6]/10 px-3 py-2" data-testid="residue-note">
      <p className="font-medium">
        Residue: {plural(frame.bitLength, 'bit')} between the flags, {plural(whole, 'whole octet')} and {plural(extra, 'bit')} over
      </p>
      <p className="mt-0.5 text-muted">
        {match
          ? `The FCS in the last two whole octets checks out against the octets before it, so those octets most likely arrived as sent; the ${plural(extra, 'bit')} after them, just before the closing flag, do not make an octet and are left out. A sender that ran on for a few bits before its flag, or a glitch that added a transition near the end, leaves this.`
          : `The FCS over the whole octets does not check out either: bits were most likely lost or added inside the frame (a missing or extra clock edge, a glitch), so every octet after that point is shifted.`}{' '}
        Compare the bits and the waveform below with a good frame of the same kind.
      </p>
    </div>
  );
}

/** Received versus computed FCS, and which single bit explains a mismatch when one does. */
export function FcsPanel({ frame }: { frame: Frame }) {
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
      {frame.status === 'residue' ? (
        <ResidueNote frame={frame} match={match} />
      ) : frame.fcsReceived === null ? (
        <p className="text-muted">This frame has no complete FCS ({frame.status === 'abort' ? 'the sender aborted it' : 'too few octets'}).</p>
      ) : match ? (
        <p className="text-ok">The FCS matches: the octets arrived as sent.</p>
      ) : flipped !== null ? (
        <div className="space-y-2">
          <div role="note" className="rounded-md border border-[#e0582f]/50 bg-[#e0582f]/10 px-3 py-2" data-testid="diagnosis">
            <p className="font-medium">Single-bit diagnosis: bit {flipped} is flipped</p>
            <p className="mt-0.5 text-muted">
              Octet {flipped >> 3}, bit {flipped & 7} (counted LSB first, as sent). Inverting it makes the FCS match — look for a timing race, a
              marginal edge or noise at that moment on the waveform below.
            </p>
          </div>
          <ProbingCautions />
        </div>
      ) : (
        <div className="space-y-2">
          <p role="note" className="rounded-md border border-[#e0582f]/50 bg-[#e0582f]/10 px-3 py-2" data-testid="diagnosis">
            The FCS does not match and no single flipped bit explains it: more than one bit is wrong, or octets were lost or added.
          </p>
          <ProbingCautions />
        </div>
      )}
    </div>
  );
}
