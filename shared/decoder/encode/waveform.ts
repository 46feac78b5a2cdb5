import type { ChannelInfo, ClockEdge, LineEncoding, Transitions } from '../types';

/**
 * The signal side of the encoder: line bits → line levels (NRZ/NRZI, inversion) → sampled
 * waveforms of a clock, one data channel per link and optional handshake lines, with faults
 * injected on purpose. The result is a stream of Transitions exactly as a reader reports
 * them (initial levels, changes, end-of-capture repeat), so writers turn it into any input
 * format and tests compare a reader's output with it.
 *
 * Timing: bit cell i starts at boundary b(i). On the boundary the data changes and the clock
 * goes to its inactive level; halfway through the cell the clock makes its active edge (the
 * one bit recovery samples on). Before bit 0 and after the last bit the clock stands still
 * at its active level, so a clocked capture yields exactly the given bits.
 */

export interface WaveformLink {
  name: string;
  /** line bits (after zero-bit insertion), one 0/1 per element; shorter links idle at 1 */
  bits: Uint8Array;
}

export interface HandshakeLine {
  name: string;
  initial: 0 | 1;
  /** level changes on the boundary of bit cell `bit`; a negative or fractional `bit` (lead, mid-cell) is placed at its nominal time */
  edges: { bit: number; level: 0 | 1 }[];
}

export interface Glitch {
  /** channel name */
  channel: string;
  /** first sample of the pulse */
  sample: number;
  /** samples the level stays flipped */
  width: number;
}

export interface WaveformFaults {
  /** relative bit-rate error: 0.03 sends 3 % fast (cells 3 % shorter) */
  rateError?: number;
  /** peak displacement of every cell boundary (data and clock together), as a fraction of a bit */
  jitter?: number;
  /** short pulses laid over a channel's level */
  glitches?: Glitch[];
  /** bit indices whose clock pulse is left out, so that bit is never sampled */
  missingClockEdges?: number[];
  /**
   * Stretched clock periods: the active clock edge of bit cell `bit` comes `by` bit times late
   * (the cell's first half is longer), and every later boundary moves with it. The clock period
   * ending at that edge is 1 + `by` bit times, the ones around it stay one bit; the data still
   * changes only on cell boundaries, so every bit is sampled as sent.
   */
  stretchedClock?: { bit: number; by: number }[];
  /** seed of the jitter's random sequence */
  seed?: number;
}

export interface WaveformOptions {
  links: WaveformLink[];
  /** samples per bit cell at the nominal rate (fractional allowed; at least 4 with a clock) */
  samplesPerBit: number;
  samplePeriodSeconds: number;
  encoding: LineEncoding;
  /** invert the line levels (NRZI data is unchanged by this; NRZ bits flip) */
  invert?: boolean;
  /** the clock channel and its active edge; omit for a capture without a clock */
  clock?: { name?: string; edge: ClockEdge };
  handshake?: HandshakeLine[];
  /** idle bit periods before bit 0 (default 2) */
  leadBits?: number;
  /** idle bit periods after the last bit (default 2) */
  tailBits?: number;
  faults?: WaveformFaults;
}

export interface Waveform {
  channels: ChannelInfo[];
  samplePeriodSeconds: number;
  /** samples 0 … totalSamples-1 */
  totalSamples: number;
  clockChannel: number | null;
  dataChannels: number[];
  handshakeChannels: number[];
  /** the transitions, in batches; each call starts over; the batch object is reused */
  batches(size?: number): Generator<Transitions>;
}

/** small deterministic PRNG (mulberry32) so a seed reproduces the same jitter */
export function seededRandom(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

export function renderWaveform(opts: WaveformOptions): Waveform {
  const spb = opts.samplesPerBit;
  const faults = opts.faults ?? {};
  const cellLength = spb / (1 + (faults.rateError ?? 0));
  const jitter = (faults.jitter ?? 0) * spb;
  const lead = (opts.leadBits ?? 2) * spb;
  const tail = opts.tailBits ?? 2;
  const bitCount = opts.links.reduce((m, l) => Math.max(m, l.bits.length), 0);
  const cells = bitCount + tail;
  if (opts.clock && cellLength < 4) throw new Error('a clocked waveform needs at least 4 samples per bit');

  const channels: ChannelInfo[] = [];
  let clockChannel: number | null = null;
  if (opts.clock) {
    clockChannel = 0;
    channels.push({ index: 0, name: opts.clock.name ?? 'clock' });
  }
  const dataChannels = opts.links.map((l) => {
    channels.push({ index: channels.length, name: l.name });
    return channels.length - 1;
  });
  const handshake = opts.handshake ?? [];
  const handshakeChannels = handshake.map((h) => {
    channels.push({ index: channels.length, name: h.name });
    return channels.length - 1;
  });
  if (channels.length > 255) throw new Error('too many channels');

  // Cell boundaries depend only on the seed: each run regenerates them instead of storing
  // them, so benchmark waveforms of hundreds of millions of samples stay small in memory.
  // extra samples of each stretched cell, in its first half (before its active clock edge)
  const stretch = new Map<number, number>();
  for (const st of faults.stretchedClock ?? []) {
    if (!(st.by > 0) || !Number.isInteger(st.bit) || st.bit < 0) throw new RangeError(`a stretched clock period needs a bit index ≥ 0 and by > 0 (bit ${st.bit}, by ${st.by})`);
    stretch.set(st.bit, (stretch.get(st.bit) ?? 0) + st.by * cellLength);
  }
  const boundaries = () => {
    const rnd = seededRandom(faults.seed ?? 1);
    let prev = -Infinity;
    let i = 0;
    let shift = 0;
    return (): number => {
      const j = jitter > 0 ? (rnd() * 2 - 1) * jitter : 0;
      if (i > 0) shift += stretch.get(i - 1) ?? 0;
      let b = Math.round(lead + i * cellLength + shift + j);
      if (b < prev + 2) b = prev + 2;
      if (b < 1) b = 1;
      prev = b;
      i++;
      return b;
    };
  };
  let lastBoundary = 0;
  {
    const next = boundaries();
    for (let i = 0; i <= cells; i++) lastBoundary = next();
  }
  const totalSamples = lastBoundary + 1;
  const missing = new Set(faults.missingClockEdges ?? []);
  const invert = opts.invert ? 1 : 0;
  const nrzi = opts.encoding === 'nrzi';
  const activeLevel = opts.clock?.edge === 'falling' ? 0 : 1;

  // handshake edges on cell boundaries; those outside the cells (lead, beyond the tail) at their nominal time
  const handshakeAt = new Map<number, { ch: number; level: number }[]>();
  const earlyHandshake: { time: number; ch: number; level: number }[] = [];
  handshake.forEach((h, k) => {
    for (const e of h.edges) {
      const ch = handshakeChannels[k];
      if (e.bit < 0 || e.bit > cells || !Number.isInteger(e.bit)) {
        const time = Math.max(1, Math.min(totalSamples - 1, Math.round(lead + e.bit * cellLength)));
        earlyHandshake.push({ time, ch, level: e.level });
      } else {
        const list = handshakeAt.get(e.bit) ?? [];
        list.push({ ch, level: e.level });
        handshakeAt.set(e.bit, list);
      }
    }
  });

  // glitches as level toggles at their two edges
  const toggles: { time: number; ch: number }[] = [];
  for (const g of faults.glitches ?? []) {
    const ch = channels.find((c) => c.name === g.channel)?.index;
    if (ch === undefined) throw new Error(`glitch on unknown channel ${g.channel}`);
    for (const time of [g.sample, g.sample + g.width]) {
      if (time >= 1 && time < totalSamples) toggles.push({ time, ch });
    }
  }
  toggles.sort((a, b) => a.time - b.time);

  function* batches(size = 16384): Generator<Transitions> {
    const count = channels.length;
    const t: Transitions = {
      channel: new Uint8Array(size + count),
      sample: new Float64Array(size + count),
      value: new Uint8Array(size + count),
      n: 0,
    };
    const base = new Uint8Array(count);
    const mask = new Uint8Array(count);
    const shown = new Uint8Array(count);
    const nrziLevel = new Uint8Array(opts.links.length);
    if (clockChannel !== null) base[clockChannel] = activeLevel;
    opts.links.forEach((_, k) => {
      base[dataChannels[k]] = 1 ^ invert;
      nrziLevel[k] = 1;
    });
    handshake.forEach((h, k) => (base[handshakeChannels[k]] = h.initial));
    for (let c = 0; c < count; c++) {
      shown[c] = base[c];
      t.channel[t.n] = c;
      t.sample[t.n] = 0;
      t.value[t.n] = base[c];
      t.n++;
    }
    let toggleAt = 0;
    const early = [...earlyHandshake].sort((a, b) => a.time - b.time);
    let earlyAt = 0;
    // the next cell event: boundary of cell `cell` (phase 0) or its clock's active edge (phase 1)
    let cell = 0;
    let phase = 0;
    const hasMid = (i: number) => clockChannel !== null && i < bitCount && !missing.has(i);
    const nextBoundary = boundaries();
    // boundaries of the current cell and the one after it
    let bCur = nextBoundary();
    let bNext = cells > 0 ? nextBoundary() : Infinity;
    const advance = () => {
      cell++;
      bCur = bNext;
      bNext = cell + 1 <= cells ? nextBoundary() : Infinity;
    };

    for (;;) {
      const extra = stretch.size > 0 ? Math.round(stretch.get(cell) ?? 0) : 0;
      const cellTime = cell > cells ? Infinity : phase === 0 ? bCur : bCur + extra + Math.floor((bNext - bCur - extra) / 2);
      const toggleTime = toggleAt < toggles.length ? toggles[toggleAt].time : Infinity;
      const earlyTime = earlyAt < early.length ? early[earlyAt].time : Infinity;
      const time = Math.min(cellTime, toggleTime, earlyTime);
      if (time === Infinity) break;
      while (toggleAt < toggles.length && toggles[toggleAt].time === time) mask[toggles[toggleAt++].ch] ^= 1;
      while (earlyAt < early.length && early[earlyAt].time === time) {
        base[early[earlyAt].ch] = early[earlyAt].level;
        earlyAt++;
      }
      if (cellTime === time) {
        if (phase === 0) {
          // boundary of cell i: data takes bit i's level, the clock goes inactive
          const i = cell;
          if (i < bitCount) {
            if (hasMid(i)) base[clockChannel!] = 1 - activeLevel;
            for (let k = 0; k < opts.links.length; k++) {
              const bits = opts.links[k].bits;
              const bit = i < bits.length ? bits[i] : 1;
              let level: number;
              if (nrzi) {
                if (bit === 0) nrziLevel[k] ^= 1;
                level = nrziLevel[k];
              } else level = bit;
              base[dataChannels[k]] = level ^ invert;
            }
          }
          const hs = handshakeAt.get(i);
          if (hs) for (const e of hs) base[e.ch] = e.level;
          if (hasMid(i)) phase = 1;
          else advance();
        } else {
          base[clockChannel!] = activeLevel;
          phase = 0;
          advance();
        }
      }
      if (time > totalSamples - 1) break;
      for (let c = 0; c < count; c++) {
        const v = base[c] ^ mask[c];
        if (v !== shown[c]) {
          shown[c] = v;
          t.channel[t.n] = c;
          t.sample[t.n] = time;
          t.value[t.n] = v;
          t.n++;
        }
      }
      if (t.n >= size) {
        yield t;
        t.n = 0;
      }
    }
    // end of capture: every channel's level repeated at the last sample
    for (let c = 0; c < count; c++) {
      if (t.n >= size + count - 1) {
        yield t;
        t.n = 0;
      }
      t.channel[t.n] = c;
      t.sample[t.n] = totalSamples - 1;
      t.value[t.n] = shown[c];
      t.n++;
    }
    yield t;
    t.n = 0;
  }

  return {
    channels,
    samplePeriodSeconds: opts.samplePeriodSeconds,
    totalSamples,
    clockChannel,
    dataChannels,
    handshakeChannels,
    batches,
  };
}
