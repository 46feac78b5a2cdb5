// The episode encoder: frames where it says they are, races injected as asked, and what the call
// layer must pair; the line-bit and waveform faults it builds on.
import { describe, expect, it } from 'vitest';
import { BitRecovery } from '../../shared/decoder';
import { encodeEpisode, planEpisode, type EpisodeScript, encodeLineBits, frameLineLength, randomFrame, seededRng, type FrameFaults, renderWaveform } from '../../shared/decoder/encode';
import { decodeEpisode, RATE, THREE_STATIONS } from './timing-helpers';

describe('line bits for episodes', () => {
  it('gives the line length of any frame as encodeLineBits sends it (property check)', () => {
    const rng = seededRng(21);
    for (let trial = 0; trial < 300; trial++) {
      const bytes = randomFrame(rng, 80);
      const faults: FrameFaults = {};
      if (rng() < 0.3) faults.abortAfterBits = Math.floor(rng() * bytes.length * 8);
      if (rng() < 0.2) faults.wrongFcs = true;
      if (rng() < 0.2) faults.flipBits = [Math.floor(rng() * bytes.length * 8)];
      const fcs = rng() < 0.2 ? 32 : 16;
      const f = encodeLineBits([{ kind: 'frame', bytes, faults }], { fcs }).frames[0];
      expect(frameLineLength(bytes, faults, fcs)).toBe(f.endBit - f.startBit);
    }
  });

  it('refuses an abort of fewer than seven 1s', () => {
    expect(() => encodeLineBits([{ kind: 'frame', bytes: new Uint8Array([1, 2, 3]), faults: { abortAfterBits: 8, abortOnes: 6 } }])).toThrow(/seven or more/);
  });

  it('stretches one clock period by the given bit times and leaves every bit sampled as sent', () => {
    const rng = seededRng(4);
    const bits = Uint8Array.from({ length: 400 }, () => (rng() < 0.5 ? 1 : 0));
    const w = renderWaveform({ links: [{ name: 'a', bits }], samplesPerBit: 10, samplePeriodSeconds: 1e-7, encoding: 'nrz', clock: { edge: 'rising' }, faults: { stretchedClock: [{ bit: 100, by: 0.4 }, { bit: 250, by: 1 }] } });
    const edges: number[] = [];
    let clk = -1;
    const got: number[] = [];
    const rec = new BitRecovery({ samplePeriodSeconds: 1e-7, clock: 0, data: [{ channel: 1, link: 'a' }], edge: 'rising', encoding: 'nrz', invert: false }, { bits: (_, c) => got.push(...c.bits.subarray(0, c.n)), event: () => {} });
    for (const t of w.batches()) {
      for (let i = 0; i < t.n; i++) if (t.channel[i] === 0 && t.value[i] !== clk) {
        if (t.value[i] === 1 && clk === 0) edges.push(t.sample[i]);
        clk = t.value[i];
      }
      rec.transitions(t);
    }
    rec.finish();
    expect(got.slice(0, 400)).toEqual(Array.from(bits));
    const periods = edges.slice(1).map((e, i) => e - edges[i]);
    expect(periods[99]).toBe(14);
    expect(periods[249]).toBe(20);
    expect(periods.filter((p) => p !== 10)).toEqual([14, 20]);
  });
});

describe('episodes', () => {
  it('places every frame where the plan says (the line bits agree), per-port and multidrop', () => {
    for (const wiring of ['per-port', 'multidrop'] as const) {
      const e = encodeEpisode({ ...THREE_STATIONS(wiring), skips: [{ station: 0x31, rounds: 2 }] });
      expect(e.links.map((l) => l.name)).toEqual(wiring === 'multidrop' ? ['txd', 'rxd'] : ['p1_txd', 'p1_rxd', 'p2_txd', 'p2_rxd', 'p3_txd', 'p3_rxd']);
      for (const l of e.links) {
        const enc = encodeLineBits(l.frames.map((f) => ({ kind: 'frame' as const, bytes: f.bytes, faults: f.faults })));
        l.frames.forEach((f, i) => expect(f.endBit - f.startBit).toBe(enc.frames[i].endBit - enc.frames[i].startBit));
      }
      // the server is on one frame at a time: its visits never overlap
      e.visits.slice(1).forEach((v, i) => expect(v.startBit).toBeGreaterThanOrEqual(e.visits[i].endBit));
    }
  });

  it('refuses an under-run before the call code and tag, which pairing needs', () => {
    const s = THREE_STATIONS('per-port');
    s.stations[0].calls[0].underrun = { atOctet: 3, end: 'fcs' };
    expect(() => planEpisode(s)).toThrow(/octet 4 or later/);
  });

  it('pairs to the exchanges it reports, with under-runs, over-runs, skips and a late station', () => {
    const rng = seededRng(99);
    for (let trial = 0; trial < 4; trial++) {
      const s: EpisodeScript = { ...THREE_STATIONS(trial % 2 ? 'multidrop' : 'per-port'), skips: [{ station: 0x32, rounds: 2 }] };
      s.stations[2].answerDelay = 0.0001;
      s.stations[0].calls[0].underrun = { atOctet: 42 + Math.floor(rng() * 100), end: rng() < 0.5 ? 'fcs' : 'abort', fragment: rng() < 0.5 };
      s.stations[1].calls[1].responseUnderrun = { atOctet: 50 + Math.floor(rng() * 100), end: rng() < 0.5 ? 'fcs' : 'abort' };
      s.stations[2].calls[1].overrun = { lost: 1 };
      s.stations[0].calls[2].overrun = { errorStatus: 2 };
      const d = decodeEpisode(s, { roster: false });
      const count = (xs: { station: number; outcome: string }[]) => {
        const m: Record<string, number> = {};
        for (const x of xs) m[`${x.station.toString(16)} ${x.outcome}`] = (m[`${x.station.toString(16)} ${x.outcome}`] ?? 0) + 1;
        return m;
      };
      expect(count(d.exchanges), `trial ${trial}`).toEqual(count(d.episode.exchanges));
      expect(d.frames.filter((f) => f.status !== 'ok').length).toBe(d.episode.links.reduce((n, l) => n + l.frames.filter((f) => f.status === 'abort').length, 0));
      expect(d.frames.length).toBe(d.episode.links.reduce((n, l) => n + l.frames.length, 0));
    }
  });

  it('keeps the server polling when nobody asks, or moves on without a frame, as told', () => {
    const quiet: EpisodeScript = { ...THREE_STATIONS('per-port'), pollIdle: false };
    const polled = encodeEpisode(THREE_STATIONS('per-port'));
    const silent = encodeEpisode(quiet);
    expect(silent.visits.every((v) => v.served || v.round === 0)).toBe(true);
    expect(polled.visits.some((v) => !v.served && v.round > 0)).toBe(true);
    expect(silent.exchanges.map((x) => x.outcome)).toEqual(polled.exchanges.map((x) => x.outcome));
    expect(silent.totalBits / RATE).toBeGreaterThan(0.01);
  });
});
