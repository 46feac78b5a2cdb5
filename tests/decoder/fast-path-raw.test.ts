// The fused raw + clock path must give exactly what reader → transitions → bit recovery gives,
// with and without the anomaly tap, on seeded random captures (the deframer's own fast path is
// checked in fast-path-deframe.test.ts). The bit patterns are those of ISO/IEC 13239:2002 (flag
// 01111110, zero-bit insertion after five 1s, abort on seven 1s, idle on fifteen; from memory).
import { describe, expect, it } from 'vitest';
import { AnomalyTap, type AnomalySink, type LineAnomaly } from '../../shared/decoder/faults';
import type { ClockSpread } from '../../shared/decoder/timing';
import { randomFrame, seededRng, renderWaveform, collect, csvChunks, frameLogChunks, octetsFromLineBits, rawChunks, vcdChunks } from '../../shared/decoder/encode';
import { createDecoder, type DecoderOptions, type Transitions } from '../../shared/decoder';
import { mixedLine } from './fast-path-helpers';
import { runDecoder } from './pipeline-helpers';

/** missing clock edges: single ones, a pair, and a long run that makes a silence */
function lineClockFaults(rng: () => number): number[] {
  const out = [Math.floor(rng() * 300), 400 + Math.floor(rng() * 100), 520];
  out.push(521);
  const silenceAt = 700 + Math.floor(rng() * 200);
  for (let k = 0; k < 20; k++) out.push(silenceAt + k);
  return out;
}

/** glitches on every line: single spikes, bursts of adjacent pulses, and pulses on the clock (extra edges) */
function lineGlitches(rng: () => number, channels: string[], spb: number) {
  const out: { channel: string; sample: number; width: number }[] = [];
  for (const channel of channels) {
    for (let k = 0; k < 4; k++) {
      const sample = 20 + Math.floor(rng() * 9000 * spb / 5);
      out.push({ channel, sample, width: 1 });
      if (k === 0 && channel !== channels[0]) out.push({ channel, sample: sample + 2, width: 1 });
    }
  }
  return out;
}

/** an anomaly sink that keeps what it is given: the anomalies and the clock's period spread */
function recorder() {
  const anomalies: LineAnomaly[] = [];
  const spreads: ClockSpread[] = [];
  const sink: AnomalySink = { anomaly: (a) => anomalies.push(a), clockSpread: (s) => spreads.push(s) };
  return { anomalies, spreads, sink };
}

function runWithTap(options: DecoderOptions, input: Uint8Array, chunkSizes: number[]) {
  const { anomalies, spreads, sink } = recorder();
  const r = runDecoder({ ...options, anomalies: sink }, input, chunkSizes);
  return { ...r, anomalies, spreads };
}

describe('fused raw + clock path', () => {
  /** A random clocked capture as raw bytes, with its channels moved to random bit positions. */
  function randomCapture(seed: number, lineFaults = false) {
    const rng = seededRng(seed);
    const width: 1 | 2 = rng() < 0.5 ? 1 : 2;
    const linkCount = 1 + Math.floor(rng() * 3);
    const links = Array.from({ length: linkCount }, (_, k) => ({ name: `d${k}`, bits: mixedLine(seed * 10 + k, 60) }));
    const handshake = Array.from({ length: Math.floor(rng() * 3) }, (_, k) => ({
      name: `h${k}`,
      initial: (rng() < 0.5 ? 0 : 1) as 0 | 1,
      edges: Array.from({ length: 6 }, (_, j) => ({ bit: Math.floor(rng() * 2000), level: (j % 2 === 0 ? 1 : 0) as 0 | 1 })).sort((a, b) => a.bit - b.bit),
    }));
    const spb = 4 + Math.floor(rng() * 5);
    const edge = rng() < 0.5 ? 'rising' : 'falling';
    const encoding = rng() < 0.5 ? 'nrz' : 'nrzi';
    const invert = rng() < 0.5;
    const w = renderWaveform({
      links,
      samplesPerBit: spb,
      samplePeriodSeconds: 1e-6,
      encoding,
      invert,
      clock: { name: 'clk', edge },
      handshake,
      faults: {
        jitter: rng() * 0.15,
        seed,
        // slower than nominal: a tap given the nominal rate follows the clock's period as it grows
        rateError: lineFaults && seed % 4 === 0 ? -0.08 : 0,
        missingClockEdges: lineFaults ? lineClockFaults(rng) : [Math.floor(rng() * 500)],
        glitches: lineFaults
          ? lineGlitches(rng, ['clk', ...links.map((l) => l.name)], spb)
          : [
              { channel: 'clk', sample: Math.floor(rng() * 5000) + 10, width: 1 },
              { channel: 'd0', sample: Math.floor(rng() * 5000) + 10, width: 1 },
            ],
      },
    });
    const plain = collect(rawChunks(w, { width }));
    // move channel c to bit position perm[c]
    const positions = Array.from({ length: width * 8 }, (_, k) => k);
    for (let k = positions.length - 1; k > 0; k--) {
      const j = Math.floor(rng() * (k + 1));
      [positions[k], positions[j]] = [positions[j], positions[k]];
    }
    const bytes = new Uint8Array(plain.length);
    for (let at = 0; at < plain.length; at += width) {
      const v = width === 1 ? plain[at] : plain[at] | (plain[at + 1] << 8);
      let out = 0;
      for (let c = 0; c < w.channels.length; c++) if ((v >> c) & 1) out |= 1 << positions[c];
      bytes[at] = out & 0xff;
      if (width === 2) bytes[at + 1] = out >> 8;
    }
    const channelNames = Array.from({ length: width * 8 }, (_, k) => `unused${k}`);
    for (const c of w.channels) channelNames[positions[c.index]] = c.name;
    const options = {
      format: 'raw' as const,
      sampleRate: 1e6,
      rawWidth: width,
      channelNames,
      clock: 'clk',
      data: links.map((l) => l.name),
      handshake: handshake.map((h) => h.name),
      edge,
      encoding,
      invert,
    } satisfies DecoderOptions;
    const sizes = Array.from({ length: 5 }, () => 1 + Math.floor(rng() * (rng() < 0.3 ? 7 : 20000)));
    return { bytes, options, sizes, spb, describe: `seed ${seed}: width ${width}, ${linkCount} links, ${handshake.length} handshake, ${edge}, ${encoding}${invert ? ', inverted' : ''}` };
  }

  it('gives the same frames and line events as reader → transitions → bit recovery on random captures (seeded PRNG)', () => {
    for (let seed = 1; seed <= 16; seed++) {
      const { bytes, options, sizes, describe: what } = randomCapture(seed);
      const general = runDecoder({ ...options, rawFastPath: false }, bytes, [bytes.length]);
      expect(general.dec.fatal(), what).toBeNull();
      expect(general.frames.filter((f) => f.status === 'ok').length, what).toBeGreaterThan(5);
      for (const split of [[bytes.length], sizes]) {
        const fused = runDecoder({ ...options, rawFastPath: true }, bytes, split);
        expect(fused.frames, what).toEqual(general.frames);
        expect(fused.events, what).toEqual(general.events);
        expect(fused.dec.issues, what).toEqual(general.dec.issues);
        expect(fused.dec.bytesRead, what).toBe(bytes.length);
      }
    }
  });

  it("with the anomaly tap on, gives the same frames, line events, anomalies (in the same order) and clock period spread as the general path (seeded PRNG)", () => {
    const kinds = new Set<string>();
    for (let seed = 1; seed <= 16; seed++) {
      const { bytes, options, sizes, spb, describe: what } = randomCapture(seed, true);
      // half the captures give the nominal rate, half leave the tap to learn the period from the clock
      const rate = seed % 2 === 0 ? { bitRate: options.sampleRate / spb } : {};
      const general = runWithTap({ ...options, ...rate, rawFastPath: false }, bytes, [bytes.length]);
      expect(general.dec.fatal(), what).toBeNull();
      expect(general.anomalies.length, what).toBeGreaterThan(3);
      expect(general.spreads, what).toHaveLength(1);
      for (const a of general.anomalies) kinds.add(a.kind);
      for (const split of [[bytes.length], sizes, [1, 4097, 3, 8191]]) {
        const fused = runWithTap({ ...options, ...rate, rawFastPath: true }, bytes, split);
        expect(fused.anomalies, what).toEqual(general.anomalies);
        expect(fused.spreads, what).toEqual(general.spreads);
        expect(fused.frames, what).toEqual(general.frames);
        expect(fused.events, what).toEqual(general.events);
      }
    }
    expect([...kinds].sort()).toEqual(['clock-extra', 'clock-missing', 'clock-stretch', 'glitch', 'silence']);
  });

  it('reports half a 2-byte sample at the end and no samples at all just as the general path does', () => {
    for (const bytes of [new Uint8Array([1, 0, 3, 0, 7]), new Uint8Array(0), new Uint8Array([5])]) {
      const options: DecoderOptions = { format: 'raw', sampleRate: 1e6, rawWidth: 2, clock: '0', data: ['1'] };
      const general = runDecoder({ ...options, rawFastPath: false }, bytes, [2]);
      const fused = runDecoder({ ...options, rawFastPath: true }, bytes, [3]);
      expect(fused.dec.issues).toEqual(general.dec.issues);
      expect(fused.frames).toEqual(general.frames);
    }
  });
});

describe('anomaly tap fed with edges', () => {
  /** [channel, sample, value] → one Transitions batch */
  const batch = (list: [number, number, number][]): Transitions => ({
    channel: Uint8Array.from(list.map((t) => t[0])),
    sample: Float64Array.from(list.map((t) => t[1])),
    value: Uint8Array.from(list.map((t) => t[2])),
    n: list.length,
  });

  it('reports what transitions() reports, with clock edges and data changes at the same sample taken in channel order (seeded PRNG)', () => {
    for (let seed = 1; seed <= 40; seed++) {
      const rng = seededRng(seed);
      // the clock between, below or above the data lines, so same-sample order by channel matters both ways
      const clock = [0, 2, 5][seed % 3];
      const data = [1, 4];
      const period = 10;
      const options = { samplePeriodSeconds: 1e-6, clock, data: data.map((channel, k) => ({ channel, link: `d${k}` })), ...(seed % 2 ? { bitRate: 1e5 } : {}) };
      // active clock edges mostly a period apart, some too soon, some late (missing edges), one long gap (silence)
      const edges: number[] = [];
      let t = 5;
      for (let k = 0; k < 400; k++) {
        const r = rng();
        t += r < 0.05 ? 2 + Math.floor(rng() * 3) : r < 0.1 ? 2 * period + Math.floor(rng() * 3 * period) : r < 0.105 ? 20 * period : period + Math.floor(rng() * 3) - 1;
        edges.push(t);
      }
      // data changes: on bit boundaries, often exactly on a clock edge, with short pulses (glitches)
      const changes: [number, number][] = [];
      for (const c of data) {
        let at = 1;
        while (at < t) {
          const r = rng();
          at += r < 0.3 ? 1 + Math.floor(rng() * 3) : period * (1 + Math.floor(rng() * 3));
          // often exactly on the next clock edge
          if (rng() < 0.3) at = edges.find((e) => e >= at) ?? at;
          changes.push([c, at]);
        }
      }
      const byTime = (a: [number, number], b: [number, number]) => a[1] - b[1] || a[0] - b[0];
      changes.sort(byTime);
      // unique per channel and sample
      const seen = new Set<string>();
      const dataChanges = changes.filter(([c, at]) => !seen.has(`${c}@${at}`) && seen.add(`${c}@${at}`));
      expect(dataChanges.some(([, at]) => edges.includes(at))).toBe(true);

      // the general way: every level change as transitions, the clock's idle edge halfway between active ones
      const level = new Map<number, number>([[clock, 0], ...data.map((c) => [c, 0] as [number, number])]);
      const list: [number, number, number][] = [...level].map(([c, v]) => [c, 0, v]);
      const events: [number, number, number][] = [];
      let last = 0;
      for (const e of edges) {
        events.push([clock, Math.floor((last + e) / 2), 0], [clock, e, 1]);
        last = e;
      }
      for (const [c, at] of dataChanges) {
        const v = 1 - level.get(c)!;
        level.set(c, v);
        events.push([c, at, v]);
      }
      events.sort((a, b) => a[1] - b[1] || a[0] - b[0]);
      const viaTransitions: LineAnomaly[] = [];
      const general = new AnomalyTap(options, { anomaly: (a) => viaTransitions.push(a) });
      general.transitions(batch([...list, ...events]));
      general.finish();

      // the fused way: first levels as transitions, then edges and changes in random slices of time
      const viaEdges: LineAnomaly[] = [];
      const fused = new AnomalyTap(options, { anomaly: (a) => viaEdges.push(a) });
      fused.transitions(batch(list));
      const edgeSamples = Float64Array.from(edges);
      let e = 0;
      let d = 0;
      for (let until = 0; e < edges.length || d < dataChanges.length; until += 1 + Math.floor(rng() * 300)) {
        let e1 = e;
        while (e1 < edges.length && edges[e1] <= until) e1++;
        let d1 = d;
        while (d1 < dataChanges.length && dataChanges[d1][1] <= until) d1++;
        const part = dataChanges.slice(d, d1);
        fused.edges(edgeSamples, e, e1, Uint8Array.from(part.map((x) => x[0])), Float64Array.from(part.map((x) => x[1])), part.length);
        e = e1;
        d = d1;
      }
      fused.finish();
      expect(viaTransitions.length).toBeGreaterThan(10);
      expect(viaEdges).toEqual(viaTransitions);
    }
  });
});

describe('anomaly tap, quiet stretches', () => {
  const options = { samplePeriodSeconds: 1e-6, clock: 0, data: [{ channel: 1, link: 'a' }], bitRate: 1e5 };
  const first = { channel: Uint8Array.of(0, 1), sample: Float64Array.of(0, 0), value: Uint8Array.of(0, 0), n: 2 };

  it('declines a stretch whose clock slows past the screen, so a pulse the screen let through is still judged at the new period', () => {
    // nominal 10 samples per bit, the clock runs at 12: the period follows it from 10 toward 12
    const edges = Float64Array.from({ length: 300 }, (_, k) => 5 + 12 * k);
    const screened: LineAnomaly[] = [];
    const tap = new AnomalyTap(options, { anomaly: (a) => screened.push(a) });
    tap.transitions(first);
    const screen = tap.quietScreen();
    expect(screen).toBeCloseTo(0.5 * 10 * 1.0625);
    // a data pulse 5.5 samples wide: past the screen, yet under half of the period the clock reaches
    const pulse = [3000, 3005.5];
    expect(pulse[1] - pulse[0]).toBeGreaterThan(screen);
    expect(tap.quiet(edges, 0, edges.length, screen, Int32Array.of(1), Float64Array.of(pulse[1]))).toBe(false);
    tap.edges(edges, 0, edges.length, Uint8Array.of(1, 1, 1), Float64Array.of(pulse[0], pulse[1], 3400), 3);
    tap.finish();

    const reference: LineAnomaly[] = [];
    const general = new AnomalyTap(options, { anomaly: (a) => reference.push(a) });
    const list: [number, number, number][] = [[0, 0, 0], [1, 0, 0]];
    for (const e of edges) list.push([0, e - 6, 0], [0, e, 1]);
    list.push([1, pulse[0], 1], [1, pulse[1], 0], [1, 3400, 1]);
    list.sort((a, b) => a[1] - b[1] || a[0] - b[0]);
    general.transitions({
      channel: Uint8Array.from(list.map((t) => t[0])),
      sample: Float64Array.from(list.map((t) => t[1])),
      value: Uint8Array.from(list.map((t) => t[2])),
      n: list.length,
    });
    general.finish();
    expect(reference.map((a) => a.kind)).toEqual(['glitch']);
    expect(screened).toEqual(reference);
  });

  it('takes an on-time stretch in one step and leaves the same state as taking it edge by edge', () => {
    const edges = Float64Array.from({ length: 500 }, (_, k) => 5 + 10 * k + (k % 3) - 1);
    const ra = recorder();
    const rb = recorder();
    const a = ra.anomalies;
    const b = rb.anomalies;
    const quiet = new AnomalyTap(options, ra.sink);
    const exact = new AnomalyTap(options, rb.sink);
    quiet.transitions(first);
    exact.transitions(first);
    expect(quiet.quiet(edges, 0, 400, quiet.quietScreen(), Int32Array.of(1), Float64Array.of(3001))).toBe(true);
    exact.edges(edges, 0, 400, Uint8Array.of(1, 1), Float64Array.of(2000, 3001), 2);
    expect(quiet.samplesPerBit).toBe(exact.samplesPerBit);
    // what follows is judged the same: a late edge (missing ones) and a short pulse
    const rest = Float64Array.from([...edges.subarray(400), edges[499] + 35]);
    for (const t of [quiet, exact]) {
      t.edges(rest, 0, rest.length, Uint8Array.of(1, 1), Float64Array.of(4500, 4502), 2);
      t.finish();
    }
    expect(a.map((x) => x.kind).sort()).toEqual(['clock-missing', 'glitch']);
    expect(a).toEqual(b);
    expect(ra.spreads).toHaveLength(1);
    expect(ra.spreads).toEqual(rb.spreads);
  });

  it('takes stretches of one interval length in one step, at the period a step of that length leaves as it is and while the period still moves toward it', () => {
    // intervals of 10 samples at a nominal 10 (the period stays), at a nominal 10.5 (every step
    // moves the period), of 11 at a nominal 10 (declined: the period grows past the screen);
    // the last stretch alternates two lengths
    for (const [rate, length] of [[1e5, 10], [1e6 / 10.5, 10], [1e5, 11]] as const) {
      const edges = Float64Array.from({ length: 1200 }, (_, k) => 5 + length * k + (k >= 800 ? k % 2 : 0));
      const ra = recorder();
      const rb = recorder();
      const o = { ...options, bitRate: rate };
      const quiet = new AnomalyTap(o, ra.sink);
      const exact = new AnomalyTap(o, rb.sink);
      quiet.transitions(first);
      exact.transitions(first);
      const cuts = [0, 200, 400, 800, 1200];
      for (let k = 0; k + 1 < cuts.length; k++) {
        const change = Float64Array.of(edges[cuts[k + 1] - 1] - 3);
        const taken = quiet.quiet(edges, cuts[k], cuts[k + 1], quiet.quietScreen(), Int32Array.of(1), change);
        // declined (the period would grow past what the screen allowed): edge by edge, as the fused path does
        if (!taken) quiet.edges(edges, cuts[k], cuts[k + 1], Uint8Array.of(1), change, 1);
        exact.edges(edges, cuts[k], cuts[k + 1], Uint8Array.of(1), change, 1);
        expect(quiet.samplesPerBit, `${rate} bit/s, ${length} samples, stretch ${k}`).toBe(exact.samplesPerBit);
        if (rate === 1e5 && length === 10) expect(taken).toBe(true);
      }
      const rest = Float64Array.of(edges[1199] + 35);
      for (const t of [quiet, exact]) {
        t.edges(rest, 0, 1, Uint8Array.of(1, 1), Float64Array.of(edges[1199] + 20, edges[1199] + 22), 2);
        t.finish();
      }
      expect(ra.anomalies.map((x) => x.kind).sort()).toEqual(['clock-missing', 'glitch']);
      expect(ra.anomalies).toEqual(rb.anomalies);
      expect(ra.spreads).toEqual(rb.spreads);
    }
  });
});

describe('reused input buffers', () => {
  it('decodes every format the same when the caller overwrites each chunk right after push (seeded PRNG)', () => {
    const rng = seededRng(5);
    const a = mixedLine(51, 80);
    const b = mixedLine(52, 80);
    const w = renderWaveform({
      links: [
        { name: 'a', bits: a },
        { name: 'b', bits: b },
      ],
      samplesPerBit: 6,
      samplePeriodSeconds: 1e-7,
      encoding: 'nrz',
      clock: { name: 'clk', edge: 'rising' },
    });
    const frames = [...Array(30)].map((_, k) => ({ seconds: k * 0.01, bytes: randomFrame(rng, 40), link: k % 2 ? 'a' : 'b' }));
    const cases: [string, DecoderOptions, Uint8Array][] = [
      ['raw', { format: 'raw', sampleRate: 1e7, channelNames: ['clk', 'a', 'b'], clock: 'clk', data: ['a', 'b'] }, collect(rawChunks(w))],
      ['raw, 2 bytes', { format: 'raw', sampleRate: 1e7, rawWidth: 2, channelNames: ['clk', 'a', 'b'], clock: 'clk', data: ['a', 'b'] }, collect(rawChunks(w, { width: 2 }))],
      ['raw, general path', { format: 'raw', sampleRate: 1e7, channelNames: ['clk', 'a', 'b'], clock: 'clk', data: ['a', 'b'], rawFastPath: false }, collect(rawChunks(w))],
      ['vcd', { format: 'auto', clock: 'clk', data: ['a', 'b'] }, collect(vcdChunks(w, { timescale: '1 ns' }))],
      ['csv', { format: 'csv', clock: 'clk', data: ['a', 'b'] }, collect(csvChunks(w))],
      ['octets', { format: 'octets' }, octetsFromLineBits(a)],
      ['framelog', { format: 'framelog' }, collect(frameLogChunks(frames))],
    ];
    for (const [what, options, bytes] of cases) {
      const fresh = runDecoder(options, bytes, [777, 4096, 13]);
      expect(fresh.frames.length, what).toBeGreaterThan(10);
      const got = { frames: [] as unknown[], events: [] as unknown[] };
      const dec = createDecoder(options, { frame: (f) => got.frames.push(f), event: (e) => got.events.push(e) });
      const reused = new Uint8Array(4096);
      const sizes = [777, 4096, 13];
      for (let at = 0, k = 0; at < bytes.length; k++) {
        const end = Math.min(bytes.length, at + sizes[k % sizes.length]);
        reused.set(bytes.subarray(at, end));
        dec.push(reused.subarray(0, end - at));
        reused.fill(0xa5);
        at = end;
      }
      dec.finish();
      expect(dec.fatal(), what).toBeNull();
      expect(got.frames, what).toEqual(fresh.frames);
      expect(got.events, what).toEqual(fresh.events);
    }
  });
});
