// The settings finder against captures our encoder made under known settings: its first choice
// must be the setting that was used.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { encodeLineBits, randomFrame, seededRng, renderWaveform, rawBytes } from '../../shared/decoder/encode';
import { bytesSource, estimateBitTime, findSettings, type FinderCandidate } from '../../shared/decoder/finder';
import { fcs16, fcs32 } from '../../shared/decoder';
import { choppySource, rawCapture, type LineSetting } from './finder-helpers';

/** Bit rates of the period's controllers; 4 MHz ÷ 5 = 800 kbit/s is common practice. */
const RATES = [9_600, 800_000, 2_000_000];

function expectChoice(best: FinderCandidate | null, s: LineSetting): void {
  expect(best, 'a setting with good frames').not.toBeNull();
  const b = best!;
  expect(b.encoding).toBe(s.encoding);
  expect(b.fcs).toBe(s.fcs);
  expect(b.clock).toBe(s.clocked ? '0' : null);
  if (s.clocked) expect(b.edge).toBe(s.edge);
  // ISO/IEC 13239: NRZI carries a 0 as a change of level, so polarity carries no data and the
  // finder reports it as not inverted; NRZ polarity is found.
  expect(b.invert).toBe(s.encoding === 'nrz' ? s.invert : false);
  expect(b.links.map((l) => l.channel).sort()).toEqual(s.clocked ? ['1', '2'] : ['0', '1']);
  expect(b.goodShare).toBeGreaterThan(0.95);
  if (!s.clocked) expect(Math.abs(b.bitRate! / s.bitRate - 1.006)).toBeLessThan(0.01);
}

describe('settings finder: its first choice is the setting the capture was made with', () => {
  let run = 0;
  for (const encoding of ['nrz', 'nrzi'] as const) {
    for (const clocked of [true, false]) {
      for (const invert of [false, true]) {
        for (const edge of clocked ? (['rising', 'falling'] as const) : (['rising'] as const)) {
          const name = `${encoding.toUpperCase()}, ${clocked ? `clocked on the ${edge} edge` : 'no clock'}, ${invert ? 'inverted' : 'not inverted'}`;
          it(`${name}, at 9 600 bit/s, 800 kbit/s and 2 Mbit/s, read in random chunks, 1 % of frames damaged`, async () => {
            for (const bitRate of RATES) {
              const s: LineSetting = { encoding, edge, invert, clocked, bitRate, fcs: run % 3 === 0 ? 32 : 16, samplesPerBit: clocked ? 6 : 10 };
              const cap = rawCapture(s, 100 + run++, 100);
              const { result } = await findSettings(choppySource(cap.bytes, run), { sampleRate: cap.sampleRate });
              expectChoice(result.best, s);
            }
          });
        }
      }
    }
  }

  it('holds for random settings, rates from 9 600 bit/s to 2 Mbit/s and sample densities (property)', async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.record({
          encoding: fc.constantFrom('nrz' as const, 'nrzi' as const),
          edge: fc.constantFrom('rising' as const, 'falling' as const),
          invert: fc.boolean(),
          clocked: fc.boolean(),
          bitRate: fc.integer({ min: 9_600, max: 2_000_000 }),
          fcs: fc.constantFrom(16 as const, 32 as const),
          density: fc.double({ min: 0, max: 1, noNaN: true }),
          seed: fc.integer({ min: 1, max: 1 << 30 }),
        }),
        async (r) => {
          // at least 4 samples per bit with a clock, 8 without (common practice)
          const samplesPerBit = r.clocked ? 4 + Math.round(r.density * 8) : 8 + r.density * 8;
          const s: LineSetting = { ...r, samplesPerBit };
          const cap = rawCapture(s, r.seed, 80);
          const { result } = await findSettings(choppySource(cap.bytes, r.seed), { sampleRate: cap.sampleRate });
          expectChoice(result.best, s);
        },
      ),
      { numRuns: 12, seed: 1983 },
    );
  });

  it('gives the same ranking whatever the chunk sizes of the reads', async () => {
    const s: LineSetting = { encoding: 'nrzi', edge: 'falling', invert: false, clocked: true, bitRate: 800_000, fcs: 16, samplesPerBit: 5 };
    const cap = rawCapture(s, 7, 150);
    const whole = (await findSettings(bytesSource(cap.bytes), { sampleRate: cap.sampleRate })).result;
    for (const seed of [1, 2, 3]) {
      const split = (await findSettings(choppySource(cap.bytes, seed), { sampleRate: cap.sampleRate })).result;
      expect(split.ranking.map((c) => c.evidence)).toEqual(whole.ranking.map((c) => c.evidence));
    }
  });

  it('reports the recovered bit rate with its spread, and tells the data-stable clock edge from the other', async () => {
    const clocked: LineSetting = { encoding: 'nrz', edge: 'rising', invert: false, clocked: true, bitRate: 800_000, fcs: 16, samplesPerBit: 5 };
    const a = rawCapture(clocked, 11);
    const r = (await findSettings(bytesSource(a.bytes), { sampleRate: a.sampleRate })).result;
    expect(r.best!.rateText).toMatch(/^800 000 bit\/s ± /);
    expect(r.best!.notes.join(' ')).toMatch(/stable at the rising edge/);
    const falling = r.ranking.find((c) => c.edge === 'falling' && c.encoding === 'nrz' && !c.invert && c.fcs === 16)!;
    expect(falling.good).toBe(r.best!.good);
    expect(falling.notes.join(' ')).toMatch(/changes at falling edges/);
    expect(r.summary).toMatch(/^NRZ, rising edge of 0, not inverted, FCS-16: [\d ]+ frames, [\d ]+ good .* · NRZI: 0 good of [\d ]+ · falling edge: /);

    const free: LineSetting = { ...clocked, clocked: false, samplesPerBit: 10 };
    const b = rawCapture(free, 12);
    const best = (await findSettings(bytesSource(b.bytes), { sampleRate: b.sampleRate })).result.best!;
    // the line runs 0.6 % fast (rateError 0.006): 804 800 bit/s
    expect(best.rateText).toMatch(/^80[45] \d00 bit\/s ± [\d.]+ % \(from data edges\)$/);
  });

  it('estimates the bit time from edge intervals that are whole numbers of cells', () => {
    // intervals of 1–6 cells of 12.5 samples with ±1 sample of noise
    const rng = seededRng(4);
    const iv = Array.from({ length: 2000 }, () => (1 + Math.floor(rng() * 6)) * 12.5 + (rng() * 2 - 1));
    const est = estimateBitTime(iv)!;
    expect(est.samplesPerBit).toBeCloseTo(12.5, 1);
    expect(est.spread).toBeLessThan(0.05);
  });

  it('decodes a raw file with a fast clock bit that detection takes for line octets, trying both', async () => {
    // a clock bit toggling on nearly every sample: few repeats, as line bits would have
    const links = [0, 1].map((k) => ({ name: `d${k}`, bits: encodeLineBits(Array.from({ length: 60 }, (_, i) => ({ kind: 'frame' as const, bytes: randomFrame(seededRng(i + k * 100), 30) }))).bits }));
    const w = renderWaveform({ links, samplesPerBit: 4, samplePeriodSeconds: 1 / 4e6, encoding: 'nrz', clock: { name: 'clk', edge: 'rising' } });
    const bytes = rawBytes(w);
    const { result } = await findSettings(bytesSource(bytes), { sampleRate: 4e6 });
    expect(result.detection.tried).toContain('raw');
    expect(result.best!.format).toBe('raw');
    expect(result.best!.clock).toBe('0');
  });

  it('finds frames after an idle head in windows spread over the file, reading within its budget', async () => {
    const rng = seededRng(9);
    const busy = encodeLineBits(Array.from({ length: 400 }, () => ({ kind: 'frame' as const, bytes: randomFrame(rng, 40) }))).bits;
    const idle = new Uint8Array(600_000).fill(1);
    const bits = new Uint8Array(idle.length + busy.length);
    bits.set(idle);
    bits.set(busy, idle.length);
    const w = renderWaveform({ links: [{ name: 'a', bits }], samplesPerBit: 4, samplePeriodSeconds: 1 / 3.2e6, encoding: 'nrzi', clock: { name: 'clk', edge: 'falling' } });
    const bytes = rawBytes(w);
    const budget = { headBytes: 256 * 1024, windowBytes: 128 * 1024, maxBytes: 1024 * 1024 };
    const { result } = await findSettings(bytesSource(bytes), { sampleRate: 3.2e6, budget });
    expect(result.windows.length).toBeGreaterThan(1);
    expect(result.windows[0].offset).toBe(0);
    expect(result.bytesRead).toBeLessThanOrEqual(budget.maxBytes);
    expect(result.best!.encoding).toBe('nrzi');
    expect(result.best!.edge).toBe('falling');
  });

  it('says what was tried and what to check when no setting gives a good frame', async () => {
    // the data line carries frames whose FCS is wrong throughout: flags, but nothing good
    const rng = seededRng(5);
    const bits = encodeLineBits(Array.from({ length: 80 }, () => ({ kind: 'frame' as const, bytes: randomFrame(rng, 40), faults: { wrongFcs: true } }))).bits;
    const w = renderWaveform({ links: [{ name: 'a', bits }], samplesPerBit: 10, samplePeriodSeconds: 1 / 8e6, encoding: 'nrz' });
    const { result } = await findSettings(bytesSource(rawBytes(w)), { sampleRate: 8e6 });
    expect(result.found).toBe(false);
    expect(result.best).toBeNull();
    expect(result.tried.join('\n')).toMatch(/line coding: NRZ, NRZ inverted, NRZI/);
    expect(result.tried.join('\n')).toMatch(/FCS-16 \(CRC-16\/IBM-SDLC\), FCS-32 \(CRC-32\/ISO-HDLC\)/);
    expect(result.tried.join('\n')).toMatch(/no clock, bit clock recovered at 800 000 bit\/s/);
    const advice = result.advice.join('\n');
    expect(advice).toMatch(/Flags were found/);
    expect(advice).toMatch(/no clock was captured/);
    expect(advice).toMatch(/samples per bit/);
    expect(advice).toMatch(/probe points/);
    expect(result.cautions.join(' ')).toMatch(/±12 V/);
  });

  it('names the sample rate as the thing to check when the capture is too coarse for the line', async () => {
    const rng = seededRng(6);
    const bits = encodeLineBits(Array.from({ length: 60 }, () => ({ kind: 'frame' as const, bytes: randomFrame(rng, 40) }))).bits;
    // 1.6 samples per bit with jitter: the edges are there, the bits barely
    const w = renderWaveform({ links: [{ name: 'a', bits }], samplesPerBit: 1.6, samplePeriodSeconds: 1 / 1.28e6, encoding: 'nrzi', faults: { jitter: 0.2, seed: 3 } });
    const { result } = await findSettings(bytesSource(rawBytes(w)), { sampleRate: 1.28e6 });
    const said = result.found ? result.best!.notes.join('\n') : result.advice.join('\n');
    expect(said).toMatch(/Only [12]\.\d samples per bit.*at least 4 .* with a clock and 8 without/);
  });

  it('tries the catalogue FCS algorithms: CRC-16/IBM-SDLC and CRC-32/ISO-HDLC', () => {
    const check = new TextEncoder().encode('123456789');
    // CRC catalogue (RevEng), "CRC-16/IBM-SDLC": check=0x906e
    expect(fcs16(check)).toBe(0x906e);
    // CRC catalogue (RevEng), "CRC-32/ISO-HDLC": check=0xcbf43926
    expect(fcs32(check)).toBe(0xcbf43926);
  });

  it('reads NRZI as ISO/IEC 13239 defines it: a 0 is a change of level, a 1 keeps it', async () => {
    // levels built here from the definition (ISO/IEC 13239, NRZI encoding), not by our encoder
    const rng = seededRng(21);
    const line = encodeLineBits([{ kind: 'flags', count: 2 }, ...Array.from({ length: 60 }, () => ({ kind: 'frame' as const, bytes: randomFrame(rng, 40) }))]).bits;
    const spb = 8;
    const levels = new Uint8Array((line.length + 4) * spb);
    let level = 1;
    levels.fill(1, 0, 2 * spb);
    for (let i = 0; i < line.length; i++) {
      if (line[i] === 0) level ^= 1;
      levels.fill(level, (i + 2) * spb, (i + 3) * spb);
    }
    levels.fill(level, (line.length + 2) * spb);
    const { result } = await findSettings(bytesSource(levels), { sampleRate: 8e6, format: 'raw', rawWidth: 1 });
    expect(result.best!.encoding).toBe('nrzi');
    expect(result.best!.clock).toBeNull();
    expect(result.best!.good).toBe(60);
  });

  it('tells FCS-16 (CRC-16/IBM-SDLC) from FCS-32 (CRC-32/ISO-HDLC) in a frame log', async () => {
    for (const fcs of [16, 32] as const) {
      const enc = encodeLineBits(Array.from({ length: 30 }, (_, i) => ({ kind: 'frame' as const, bytes: randomFrame(seededRng(i), 30) })), { fcs });
      const text = enc.frames.map((f, i) => `${(i * 0.001).toFixed(6)} ${Array.from(f.wire, (b) => b.toString(16).padStart(2, '0')).join(' ')}`).join('\n') + '\n';
      const { result } = await findSettings(bytesSource(new TextEncoder().encode(text)));
      expect(result.best!.format).toBe('framelog');
      expect(result.best!.fcs).toBe(fcs);
      expect(result.best!.good).toBe(30);
    }
  });
});
