// The CLI's hand-written NDJSON lines must be exactly what JSON.stringify gives for the same
// frame record, for every frame status, both FCS widths, link names that need escaping, and any
// buffer size (the buffer is flushed and grown as it fills).
import { describe, expect, it } from 'vitest';
import { NdjsonWriter, eventRecord, frameRecord } from '../../server/cli/ndjson-writer';
import { checkFrame, Deframer, type DecodedFrame, type LineEvent, type RawFrame } from '../../shared/decoder';
import { encodeLineBits, randomFrame, seededRng, type LineItem } from '../../shared/decoder/encode';

/** Random frames of every status on one line, deframed and checked as the decoder does. */
function framesOfEveryStatus(seed: number, fcs: 16 | 32, link: string): DecodedFrame[] {
  const rng = seededRng(seed);
  const items: LineItem[] = [{ kind: 'flags', count: 2 }];
  for (let k = 0; k < 300; k++) {
    const bytes = randomFrame(rng, 50);
    const r = rng();
    const faults =
      r < 0.15
        ? { flipBits: [Math.floor(rng() * bytes.length * 8)] }
        : r < 0.25
          ? { flipBits: [1, 9, 17] }
          : r < 0.35
            ? { residueBits: 1 + Math.floor(rng() * 7) }
            : r < 0.45
              ? { abortAfterBits: 4 + Math.floor(rng() * bytes.length * 8) }
              : r < 0.55
                ? { noFcs: true }
                : {};
    // one octet frames: no address and control to decode
    items.push({ kind: 'frame', bytes: r > 0.95 ? bytes.subarray(0, 1) : bytes, faults });
    items.push({ kind: 'flags', count: 1 + Math.floor(rng() * 2) });
  }
  const { bits } = encodeLineBits(items, { fcs });
  const raws: RawFrame[] = [];
  const d = new Deframer(link, { frame: (f) => raws.push(f), event: () => {} }, { minOctets: fcs === 32 ? 6 : 4 });
  const samples = new Float64Array(bits.length);
  let s = Math.floor(rng() * 1e9);
  for (let i = 0; i < samples.length; i++) samples[i] = s += 1 + Math.floor(rng() * 40);
  d.push({ bits, samples, n: bits.length });
  d.finish();
  return raws.map((raw) => checkFrame(raw, { fcs }));
}

function writeAll(lines: ((w: NdjsonWriter) => void)[], fcsDigits: number, capacity: number): string {
  const parts: Uint8Array[] = [];
  const w = new NdjsonWriter((b) => parts.push(b.slice()), fcsDigits, capacity);
  for (const line of lines) line(w);
  w.flush();
  return Buffer.concat(parts).toString('utf8');
}

describe('NDJSON writer', () => {
  it('writes every frame status exactly as JSON.stringify writes the frame record, for FCS-16 and FCS-32', () => {
    const links = ['a', 'tx "main" \\ line', 'Prüfkanal', 'tab\there', 'x'.repeat(300)];
    const periods = [1 / 8e6, 1e-9, 1 / 3, 0.1, 1.25e-8, 7];
    for (const fcs of [16, 32] as const) {
      const fcsDigits = fcs / 4;
      for (let seed = 1; seed <= links.length; seed++) {
        const frames = framesOfEveryStatus(seed, fcs, links[seed - 1]);
        const statuses = new Set(frames.map((f) => f.status));
        expect([...statuses].sort()).toEqual(['abort', 'bad-fcs', 'ok', 'residue', 'short']);
        expect(frames.some((f) => f.status === 'bad-fcs' && f.flippedBit !== null)).toBe(true);
        expect(frames.some((f) => f.status === 'bad-fcs' && f.flippedBit === null)).toBe(true);
        expect(frames.some((f) => f.decode === null)).toBe(true);
        expect(new Set(frames.map((f) => f.decode?.kind)).size).toBe(4);
        const period = periods[seed % periods.length];
        const expected = frames.map((f) => JSON.stringify(frameRecord(f, period, fcsDigits)) + '\n').join('');
        for (const capacity of [1 << 20, 600, 64]) {
          const got = writeAll(frames.map((f) => (w) => w.frame(f, period)), fcsDigits, capacity);
          expect(got).toBe(expected);
          expect(got.trim().split('\n').map((l) => JSON.parse(l))).toEqual(frames.map((f) => frameRecord(f, period, fcsDigits)));
        }
      }
    }
  });

  it('writes times as JSON.stringify writes them, including exponent forms and far-off samples (seeded PRNG)', () => {
    const rng = seededRng(7);
    const base = framesOfEveryStatus(3, 16, 'a')[0];
    const cases: [number, number][] = [
      [0, 1e-6],
      [1, 1e-7],
      [3, 1e-9],
      [1, 1e21],
      [1, 1.5e12],
      [123456789012, 1],
      [2 ** 52, 1 / 3],
      [5, 0],
    ];
    for (let k = 0; k < 20000; k++) {
      const sample = Math.floor(rng() * 2 ** (1 + Math.floor(rng() * 52)));
      const period = 1 / (1 + Math.floor(rng() * 1e10)) * (rng() < 0.2 ? 10 ** Math.floor(rng() * 20) : 1);
      cases.push([sample, period]);
    }
    // a hair either side of half a unit in the 12th digit, and of powers of ten
    for (let k = 0; k < 2000; k++) {
      const exponent = Math.floor(rng() * 22) - 7;
      const digits = 100000000000 + Math.floor(rng() * 900000000000);
      const around = [Number(`${digits}5e${exponent - 12}`), Number(`1e${exponent}`)];
      for (const x of around) for (const ulps of [-2, -1, 0, 1, 2]) cases.push([1, x * (1 + ulps * 2 ** -52)]);
    }
    const frames = cases.map(([sample, period], k) => ({ frame: { ...base, seq: k, firstSample: sample, lastSample: sample + k }, period }));
    const expected = frames.map(({ frame, period }) => JSON.stringify(frameRecord(frame, period, 4)) + '\n').join('');
    expect(writeAll(frames.map(({ frame, period }) => (w) => w.frame(frame, period)), 4, 4096)).toBe(expected);
  });

  it('writes line events as JSON.stringify writes the event record, between frames in order', () => {
    const frames = framesOfEveryStatus(9, 16, 'rx');
    const events: LineEvent[] = [
      { link: 'rx', channel: 'rx', kind: 'flags', sample: 10, endSample: 400, count: 12 },
      { link: 'rx', channel: 'rx', kind: 'idle', sample: 500, endSample: 9000 },
      { link: null, channel: 'RTS "a"', kind: 'rise', sample: 77 },
      { link: null, channel: 'clk', kind: 'unknown', sample: 0 },
    ];
    const period = 1 / 8e6;
    const mixed: ((w: NdjsonWriter) => void)[] = [];
    let expected = '';
    frames.forEach((f, k) => {
      mixed.push((w) => w.frame(f, period));
      expected += JSON.stringify(frameRecord(f, period, 4)) + '\n';
      const e = events[k % events.length];
      if (k % 3 === 0) {
        mixed.push((w) => w.event(e, period));
        expected += JSON.stringify(eventRecord(e, period)) + '\n';
      }
    });
    expect(writeAll(mixed, 4, 256)).toBe(expected);
  });
});
