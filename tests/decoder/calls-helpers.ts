// Shared by the call-layer tests: encode a session script, render it, decode it back.
import { CPM_ENVELOPE, pairExchanges, type LinkRole } from '../../shared/decoder/calls';
import { encodeSession, type EncodedSession, type SessionScript, renderWaveform, type WaveformFaults, collect, rawChunks, encodeLineBits } from '../../shared/decoder/encode';
import { checkFrame, createDecoder, type DecodedFrame, type LineEvent, type RawFrame } from '../../shared/decoder';

export const BIT_RATE = 800_000;

export interface DecodedSession {
  session: EncodedSession;
  frames: DecodedFrame[];
  events: LineEvent[];
  period: number;
  roles: LinkRole[];
  rts: { channel: string; station: number }[];
}

/** script → line bits → NRZI waveform (clocked: 5 samples a bit; else 8 with faults) → raw bytes → createDecoder */
export function decodeScript(script: SessionScript, opts: { clocked?: boolean; faults?: WaveformFaults } = {}): DecodedSession {
  const session = encodeSession(script);
  const clocked = opts.clocked ?? true;
  const spb = clocked ? 5 : 8;
  const w = renderWaveform({
    links: session.links.map((l) => ({ name: l.name, bits: l.bits })),
    samplesPerBit: spb,
    samplePeriodSeconds: 1 / (BIT_RATE * spb),
    encoding: 'nrzi',
    clock: clocked ? { name: 'clk', edge: 'rising' } : undefined,
    handshake: session.rts,
    faults: opts.faults,
  });
  const width = w.channels.length > 8 ? 2 : 1;
  const bytes = collect(rawChunks(w, { width }));
  const frames: DecodedFrame[] = [];
  const events: LineEvent[] = [];
  const dec = createDecoder(
    {
      format: 'raw',
      rawWidth: width,
      sampleRate: BIT_RATE * spb,
      channelNames: w.channels.map((c) => c.name),
      clock: clocked ? 'clk' : undefined,
      data: session.links.map((l) => l.name),
      handshake: session.rts.map((r) => r.name),
      encoding: 'nrzi',
      bitRate: clocked ? undefined : BIT_RATE,
    },
    { frame: (f) => frames.push(f), event: (e) => events.push(e) },
  );
  dec.push(bytes);
  dec.finish();
  if (dec.fatal()) throw new Error(dec.fatal()!.message);
  return {
    session,
    frames,
    events,
    period: dec.samplePeriodSeconds!,
    roles: session.links.map((l) => ({ link: l.name, direction: l.direction, station: l.station ?? undefined })),
    rts: session.rts.map((r) => ({ channel: r.name, station: r.station })),
  };
}

export function pairDecoded(d: DecodedSession, timeoutSeconds?: number) {
  return pairExchanges(d.frames, d.events, { map: CPM_ENVELOPE, links: d.roles, rts: d.rts, samplePeriodSeconds: d.period, timeoutSeconds });
}

/**
 * The frames of an encoded session as the FCS stage would give them, without rendering a
 * waveform (fast, for call-layer tests): sample = line-bit index, period = 1 / bit rate.
 */
export function framesOfSession(session: EncodedSession): { frames: DecodedFrame[]; period: number; roles: LinkRole[] } {
  const frames: DecodedFrame[] = [];
  for (const l of session.links) {
    const wires = encodeLineBits(l.frames.map((f) => ({ kind: 'frame' as const, bytes: f.bytes, faults: f.damaged ? { wrongFcs: true } : undefined })));
    l.frames.forEach((f, i) => {
      const raw: RawFrame = {
        link: l.name,
        seq: f.seq,
        firstSample: f.startBit,
        lastSample: f.lastBit,
        bytes: wires.frames[i].wire,
        bitLength: wires.frames[i].bitLength,
        stuffed: [],
        status: 'ok',
      };
      frames.push(checkFrame(raw));
    });
  }
  frames.sort((a, b) => a.firstSample - b.firstSample);
  return { frames, period: 1 / session.bitRate, roles: session.links.map((l) => ({ link: l.name, direction: l.direction, station: l.station ?? undefined })) };
}
