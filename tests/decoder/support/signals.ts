import { BitRecovery, type BitRecoveryOptions, type CaptureReader, type ChannelInfo, type LineEvent, type Transitions, type TransitionSink } from '../../../shared/decoder';
import { type Waveform, seededRandom } from '../../../shared/decoder/encode';

export interface Recorded {
  channels: ChannelInfo[];
  samplePeriodSeconds: number;
  /** one [channel, sample, value] per transition */
  list: [number, number, number][];
  headers: number;
}

export function recordingSink(): TransitionSink & { rec: Recorded } {
  const rec: Recorded = { channels: [], samplePeriodSeconds: 0, list: [], headers: 0 };
  return {
    rec,
    header(channels, period) {
      rec.channels = channels.map((c) => ({ ...c }));
      rec.samplePeriodSeconds = period;
      rec.headers++;
    },
    transitions(t: Transitions) {
      for (let i = 0; i < t.n; i++) rec.list.push([t.channel[i], t.sample[i], t.value[i]]);
    },
  };
}

/** splits `bytes` into random pieces (some empty, some single bytes) */
export function randomSplit(bytes: Uint8Array, seed: number, maxPiece = 97): Uint8Array[] {
  const rnd = seededRandom(seed);
  const out: Uint8Array[] = [];
  let at = 0;
  while (at < bytes.length) {
    const len = Math.floor(rnd() * rnd() * maxPiece);
    out.push(bytes.subarray(at, at + len));
    at += len;
  }
  return out;
}

export function feed(reader: CaptureReader, pieces: Iterable<Uint8Array>): CaptureReader {
  for (const p of pieces) reader.push(p);
  reader.finish();
  return reader;
}

export function waveformList(w: Waveform): [number, number, number][] {
  const list: [number, number, number][] = [];
  for (const t of w.batches(1000)) for (let i = 0; i < t.n; i++) list.push([t.channel[i], t.sample[i], t.value[i]]);
  return list;
}

/** orders transitions of the same sample by channel, for comparing readers that differ only there */
export function canonical(list: [number, number, number][]): [number, number, number][] {
  return [...list].sort((a, b) => a[1] - b[1] || a[0] - b[0]);
}

export interface Recovered {
  bits: Map<string, number[]>;
  samples: Map<string, number[]>;
  events: LineEvent[];
}

export function recoverySink() {
  const r: Recovered = { bits: new Map(), samples: new Map(), events: [] };
  return {
    r,
    bits(link: string, chunk: { bits: Uint8Array; samples: Float64Array; n: number }) {
      const b = r.bits.get(link) ?? [];
      const s = r.samples.get(link) ?? [];
      for (let i = 0; i < chunk.n; i++) {
        b.push(chunk.bits[i]);
        s.push(chunk.samples[i]);
      }
      r.bits.set(link, b);
      r.samples.set(link, s);
    },
    event(e: LineEvent) {
      r.events.push({ ...e });
    },
  };
}

/** runs BitRecovery over a waveform's own transitions */
export function recoverFromWaveform(w: Waveform, opts: Omit<BitRecoveryOptions, 'samplePeriodSeconds'>): Recovered {
  const sink = recoverySink();
  const br = new BitRecovery({ ...opts, samplePeriodSeconds: w.samplePeriodSeconds }, sink);
  for (const t of w.batches(777)) br.transitions(t);
  br.finish();
  return sink.r;
}

export function randomBits(n: number, seed: number): Uint8Array {
  const rnd = seededRandom(seed);
  const out = new Uint8Array(n);
  for (let i = 0; i < n; i++) out[i] = rnd() < 0.5 ? 1 : 0;
  return out;
}

/** inserts a 0 after five 1s in a row (ISO/IEC 13239 zero-bit insertion), as a line would carry */
export function stuffed(bits: Uint8Array): Uint8Array {
  const out: number[] = [];
  let ones = 0;
  for (const b of bits) {
    out.push(b);
    ones = b ? ones + 1 : 0;
    if (ones === 5) {
      out.push(0);
      ones = 0;
    }
  }
  return Uint8Array.from(out);
}
