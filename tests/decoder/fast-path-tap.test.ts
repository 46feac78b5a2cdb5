// The fused raw path with the anomaly tap on long, mostly clean captures: most stretches are quiet
// (handed to the tap in one step, their clock intervals counted by length), a few carry a glitch
// or a missing clock edge and go change by change. Frames, line events, anomalies and the clock's
// period spread must match the general path (reader → transitions → bit recovery, the tap fed
// every transition) for any split of the input. The bit patterns are ISO/IEC 13239:2002 HDLC
// (flag 01111110, zero-bit insertion; from memory); the faults are our encoder's.
import { afterEach, describe, expect, it, vi } from 'vitest';
import { AnomalyTap, type AnomalySink, type LineAnomaly } from '../../shared/decoder/faults';
import { ClockPeriodHistogram, type ClockSpread } from '../../shared/decoder/timing';
import { collect, rawChunks, renderWaveform, seededRng } from '../../shared/decoder/encode';
import type { DecoderOptions } from '../../shared/decoder';
import { mixedLine } from './fast-path-helpers';
import { runDecoder } from './pipeline-helpers';

function runWithTap(options: DecoderOptions, input: Uint8Array, chunkSizes: number[]) {
  const anomalies: LineAnomaly[] = [];
  const spreads: ClockSpread[] = [];
  const sink: AnomalySink = { anomaly: (a) => anomalies.push(a), clockSpread: (s) => spreads.push(s) };
  const r = runDecoder({ ...options, anomalies: sink }, input, chunkSizes);
  return { ...r, anomalies, spreads };
}

describe('fused raw path with the tap, long quiet captures', () => {
  it('gives what the general path gives, for random chunk splits (seeded PRNG)', () => {
    for (let seed = 1; seed <= 4; seed++) {
      const rng = seededRng(seed * 7);
      const spb = 8 + Math.floor(rng() * 5);
      const links = [
        { name: 'a', bits: mixedLine(seed * 31, 400) },
        { name: 'b', bits: mixedLine(seed * 31 + 1, 400) },
      ].slice(0, seed % 2 === 0 ? 2 : 1);
      const long = Math.max(...links.map((l) => l.bits.length)) * spb;
      const w = renderWaveform({
        links,
        samplesPerBit: spb,
        samplePeriodSeconds: 1e-6,
        encoding: seed % 3 === 0 ? 'nrzi' : 'nrz',
        clock: { name: 'clk', edge: seed % 2 === 0 ? 'rising' : 'falling' },
        faults: {
          // jitter keeps the clock intervals uneven, so the counts by length are not all one length
          jitter: 0.1 + rng() * 0.1,
          seed,
          // a few faults far apart: the stretches between them are quiet
          missingClockEdges: [Math.floor(long / spb / 3)],
          glitches: [{ channel: 'a', sample: Math.floor(long * 0.7), width: 1 }],
        },
      });
      const bytes = collect(rawChunks(w));
      expect(bytes.length).toBeGreaterThan(4 * 65536);
      const options: DecoderOptions = {
        format: 'raw',
        sampleRate: 1e6,
        channelNames: w.channels.map((c) => c.name),
        clock: 'clk',
        data: links.map((l) => l.name),
        edge: seed % 2 === 0 ? 'rising' : 'falling',
        encoding: seed % 3 === 0 ? 'nrzi' : 'nrz',
        // half give the nominal rate, half leave the tap to learn the period from the clock
        ...(seed <= 2 ? { bitRate: 1e6 / spb } : {}),
      };
      const general = runWithTap({ ...options, rawFastPath: false }, bytes, [bytes.length]);
      expect(general.dec.fatal()).toBeNull();
      expect(general.frames.filter((f) => f.status === 'ok').length).toBeGreaterThan(100);
      expect(general.anomalies.some((a) => a.kind === 'clock-missing')).toBe(true);
      expect(general.anomalies.some((a) => a.kind === 'glitch')).toBe(true);
      expect(general.spreads).toHaveLength(1);
      const sizes = Array.from({ length: 6 }, () => 1 + Math.floor(rng() * (rng() < 0.3 ? 9 : 200_000)));
      for (const split of [[bytes.length], [1 << 20], sizes]) {
        const fused = runWithTap({ ...options, rawFastPath: true }, bytes, split);
        expect(fused.anomalies).toEqual(general.anomalies);
        expect(fused.spreads).toEqual(general.spreads);
        expect(fused.frames).toEqual(general.frames);
        expect(fused.events).toEqual(general.events);
      }
    }
  });
});

/** the capture's bytes with channel c moved to bit positions[c] (1-byte samples) */
function moveChannels(bytes: Uint8Array, positions: number[]): Uint8Array {
  const out = new Uint8Array(bytes.length);
  for (let i = 0; i < bytes.length; i++) {
    let v = 0;
    for (let c = 0; c < positions.length; c++) if ((bytes[i] >> c) & 1) v |= 1 << positions[c];
    out[i] = v;
  }
  return out;
}

describe('fused raw path with the tap, data pulses at the limit of the screen', () => {
  afterEach(() => vi.restoreAllMocks());

  // The screen passes a stretch to the tap in one step only when no data line changes twice
  // within ⌈screen⌉ - 1 samples; a pulse of just that width, alone in an otherwise quiet
  // stretch, must still come out as the general path reports it (a glitch when under half a bit).
  it('gives what the general path gives for pulses one sample either side of the limit, one or two lines on any bit (seeded PRNG)', () => {
    const quietTaken = { n: 0 };
    const quiet = AnomalyTap.prototype.quiet;
    vi.spyOn(AnomalyTap.prototype, 'quiet').mockImplementation(function (this: AnomalyTap, ...args) {
      const taken = quiet.apply(this, args);
      if (taken) quietTaken.n++;
      return taken;
    });
    const rng = seededRng(16);
    let glitches = 0;
    // 9 and 11 samples per bit: a pulse of ⌈screen⌉ - 1 samples is under half a bit; 26: past the bit history's reach
    for (const spb of [5, 7, 9, 10, 11, 13, 20, 26]) {
      for (const linkCount of [1, 2]) {
        const names = ['a', 'b'].slice(0, linkCount);
        const limit = Math.ceil(0.5 * spb * 1.0625) - 1;
        const widths = [limit - 1, limit, limit + 1, limit + 2].filter((w) => w >= 1);
        // one pulse per stretch of the fused feed (65 536 samples), each line in turn
        const pulses = names.flatMap((channel, k) => widths.map((width, j) => ({ channel, sample: (1 + j + k * widths.length) * 70_000 + Math.floor(rng() * 1000), width })));
        const bits = Math.ceil((pulses.length + 2) * 70_000 / spb);
        const links = names.map((name, k) => ({ name, bits: mixedLine(spb * 10 + k, Math.ceil(bits / 150)) }));
        const w = renderWaveform({ links, samplesPerBit: spb, samplePeriodSeconds: 1e-6, encoding: 'nrz', clock: { name: 'clk', edge: 'rising' }, faults: { glitches: pulses } });
        // the data lines on random bits, bit 7 among them (its gathering differs)
        const positions = [0, 1, 2, 3, 4, 5, 6, 7];
        for (let k = 7; k > 0; k--) {
          const j = Math.floor(rng() * (k + 1));
          [positions[k], positions[j]] = [positions[j], positions[k]];
        }
        if (spb % 2 === 1) {
          const at7 = positions.indexOf(7);
          positions[at7] = positions[1];
          positions[1] = 7;
        }
        const bytes = moveChannels(collect(rawChunks(w)), positions.slice(0, w.channels.length));
        const channelNames = Array.from({ length: 8 }, (_, k) => `unused${k}`);
        for (const c of w.channels) channelNames[positions[c.index]] = c.name;
        const options: DecoderOptions = { format: 'raw', sampleRate: 1e6, channelNames, clock: 'clk', data: names, encoding: 'nrz', ...(linkCount === 2 ? { bitRate: 1e6 / spb } : {}) };
        const what = `${spb} samples/bit, ${linkCount} line(s) on bits ${names.map((n) => channelNames.indexOf(n)).join(', ')}`;
        const general = runWithTap({ ...options, rawFastPath: false }, bytes, [bytes.length]);
        expect(general.dec.fatal(), what).toBeNull();
        glitches += general.anomalies.filter((a) => a.kind === 'glitch').length;
        const before = quietTaken.n;
        for (const split of [[bytes.length], [1 + Math.floor(rng() * 100_000), 1 + Math.floor(rng() * 7)]]) {
          const fused = runWithTap({ ...options, rawFastPath: true }, bytes, split);
          expect(fused.anomalies, what).toEqual(general.anomalies);
          expect(fused.spreads, what).toEqual(general.spreads);
          expect(fused.frames, what).toEqual(general.frames);
        }
        // the fast feed took part: most stretches are quiet
        expect(quietTaken.n - before, what).toBeGreaterThan(pulses.length);
      }
    }
    expect(glitches).toBeGreaterThan(10);
  });
});

describe('clock period histogram, repeated intervals', () => {
  it('leaves the same spread as adding each interval one by one, whole and fractional lengths alike (seeded PRNG)', () => {
    const rng = seededRng(3);
    const one = new ClockPeriodHistogram(1.25);
    const many = new ClockPeriodHistogram(1.25);
    for (let k = 0; k < 200; k++) {
      const whole = rng() < 0.8;
      const samples = whole ? 9 + Math.floor(rng() * 3) : 9 + rng() * 2;
      const times = Math.floor(rng() * 50);
      for (let t = 0; t < times; t++) one.add(samples, 10);
      many.addRepeated(samples, times, 10);
    }
    expect(many.spread(1e-6)).toEqual(one.spread(1e-6));
  });
});
