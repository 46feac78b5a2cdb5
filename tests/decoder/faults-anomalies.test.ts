import { describe, expect, it } from 'vitest';
import { encodeLineBits, randomFrame, seededRng } from '../../shared/decoder/encode';
import { AnomalyTap, attachAnomalies, damageCause, destuffedToLineBit, suspectBit, type AnomalyTapOptions, type LineAnomaly } from '../../shared/decoder/faults';
import type { Transitions } from '../../shared/decoder';

/** [channel, sample, value] lists → one Transitions batch per call */
function run(options: AnomalyTapOptions, list: [number, number, number][], batch = 5): LineAnomaly[] {
  const out: LineAnomaly[] = [];
  const tap = new AnomalyTap(options, { anomaly: (a) => out.push(a) });
  for (let at = 0; at < list.length; at += batch) {
    const part = list.slice(at, at + batch);
    const t: Transitions = {
      channel: Uint8Array.from(part.map((p) => p[0])),
      sample: Float64Array.from(part.map((p) => p[1])),
      value: Uint8Array.from(part.map((p) => p[2])),
      n: part.length,
    };
    tap.transitions(t);
  }
  tap.finish();
  return out;
}

/** a clock on channel 0 with active (rising) edges every `period` samples from `from`, skipping `skip` */
function clock(period: number, from: number, edges: number, skip: number[] = []): [number, number, number][] {
  const out: [number, number, number][] = [[0, 0, 1]];
  for (let k = 0; k < edges; k++) {
    if (skip.includes(k)) continue;
    const s = from + k * period;
    out.push([0, s - period / 2, 0], [0, s, 1]);
  }
  return out;
}

const byTime = (l: [number, number, number][]) => [...l].sort((a, b) => a[1] - b[1] || a[0] - b[0]);

describe('zero-bit insertion positions', () => {
  it('maps every destuffed bit to the line bit the encoder sent it as (ISO/IEC 13239:2002 zero-bit insertion, from memory)', () => {
    const rng = seededRng(11);
    for (let k = 0; k < 200; k++) {
      const bytes = randomFrame(rng, 40);
      const enc = encodeLineBits([{ kind: 'flags', count: 1 }, { kind: 'frame', bytes }, { kind: 'flags', count: 1 }]);
      const f = enc.frames[0];
      const stuffed = new Set(f.stuffedPositions);
      for (let d = 0; d < f.bitLength; d++) {
        const line = destuffedToLineBit(d, f.stuffedPositions);
        expect(stuffed.has(line)).toBe(false);
        expect(enc.bits[f.startBit + line]).toBe((f.wire[d >> 3] >> (d & 7)) & 1);
      }
    }
  });

  it('takes the suspect bit sample from per-bit samples when given, else interpolates', () => {
    const frame = { flippedBit: 6, stuffed: [5], bitLength: 32, firstSample: 100, lastSample: 100 + 32 * 10 };
    const samples = Float64Array.from({ length: 33 }, (_, k) => 100 + k * 10 + (k === 7 ? 3 : 0));
    expect(suspectBit(frame, samples)).toEqual({ destuffedBit: 6, lineBit: 7, sample: 173, exact: true });
    expect(suspectBit(frame)).toEqual({ destuffedBit: 6, lineBit: 7, sample: 170, exact: false });
    expect(suspectBit({ ...frame, flippedBit: null })).toBeNull();
  });

  it('names the cause from the frame status and the single-bit diagnosis', () => {
    expect(damageCause({ status: 'ok', flippedBit: null })).toBeNull();
    expect(damageCause({ status: 'bad-fcs', flippedBit: 3 })).toBe('bad-fcs-explained');
    expect(damageCause({ status: 'bad-fcs', flippedBit: null })).toBe('bad-fcs-unexplained');
    expect(damageCause({ status: 'abort', flippedBit: null })).toBe('abort');
  });
});

describe('line anomaly tap', () => {
  const base = { samplePeriodSeconds: 1e-6, clock: 0, data: [{ channel: 1, link: 'a' }] };

  it('learns the bit period from the clock and reports missing and extra edges', () => {
    const list = byTime([...clock(10, 20, 60, [30, 45, 46]), [0, 503, 0], [0, 504, 1], [1, 0, 1]]);
    const found = run(base, list);
    expect(found.map((a) => [a.kind, a.sample, a.endSample, a.count])).toEqual([
      ['clock-missing', 320, 330, 1],
      ['clock-missing', 470, 490, 2],
      ['clock-extra', 504, 504, 1],
    ]);
  });

  it('reports unknown levels with where they end, and a clock coming out of unknown makes no edge', () => {
    const list = byTime([...clock(10, 20, 40), [1, 0, 0], [1, 100, 2], [1, 130, 1], [1, 400, 2]]);
    const found = run({ ...base, bitRate: 1e5 }, list);
    expect(found.map((a) => [a.kind, a.channel, a.sample, a.endSample])).toEqual([
      ['unknown', 'a', 100, 130],
      ['unknown', 'a', 400, 410],
    ]);
  });

  it('merges a burst of short pulses into one glitch and leaves whole-bit pulses alone', () => {
    const data: [number, number, number][] = [[1, 0, 1], [1, 100, 0], [1, 102, 1], [1, 104, 0], [1, 105, 1], [1, 200, 0], [1, 210, 1]];
    const found = run({ ...base, bitRate: 1e5 }, byTime([...clock(10, 20, 30), ...data]));
    expect(found).toEqual([{ kind: 'glitch', link: 'a', channel: 'a', sample: 100, endSample: 105, count: 3, bits: 0.5 }]);
  });

  it('reports data-line silence without a clock only for NRZI, where a frame cannot hold a level', () => {
    const data: [number, number, number][] = [[1, 0, 1], [1, 50, 0], [1, 60, 1], [1, 400, 0], [1, 410, 1]];
    const nrzi = run({ samplePeriodSeconds: 1e-6, data: [{ channel: 1, link: 'a' }], bitRate: 1e5, encoding: 'nrzi' }, data);
    expect(nrzi.map((a) => [a.kind, a.sample, a.endSample])).toEqual([['silence', 60, 400]]);
    const nrz = run({ samplePeriodSeconds: 1e-6, data: [{ channel: 1, link: 'a' }], bitRate: 1e5, encoding: 'nrz' }, data);
    expect(nrz).toEqual([]);
  });
});

describe('attaching anomalies to frames', () => {
  const anomaly = (kind: LineAnomaly['kind'], link: string | null, sample: number, endSample: number): LineAnomaly => ({
    kind,
    link,
    channel: link ?? 'clk',
    sample,
    endSample,
    count: 1,
    bits: 0,
  });
  const frames = [
    { link: 'a', seq: 0, firstSample: 100, lastSample: 200 },
    { link: 'a', seq: 1, firstSample: 300, lastSample: 400 },
    { link: 'b', seq: 0, firstSample: 150, lastSample: 350 },
  ];

  it('puts a data anomaly in its link frame, a clock anomaly in every link frame at that time', () => {
    const out = attachAnomalies([anomaly('glitch', 'a', 180, 182), anomaly('clock-extra', null, 320, 320), anomaly('glitch', 'a', 250, 251)], frames);
    expect(out.map((x) => x.frames)).toEqual([[{ link: 'a', seq: 0 }], [{ link: 'a', seq: 1 }, { link: 'b', seq: 0 }], []]);
  });

  it('keeps a silence only when it lies wholly inside a frame', () => {
    const out = attachAnomalies([anomaly('silence', 'a', 320, 380), anomaly('silence', 'a', 190, 310)], frames);
    expect(out.map((x) => x.frames)).toEqual([[{ link: 'a', seq: 1 }], []]);
  });
});
