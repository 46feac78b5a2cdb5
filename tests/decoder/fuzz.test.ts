import { describe, expect, it } from 'vitest';
import { describeFailure, fuzz } from './fuzz/harness';

/** cases of the seeded pass; FLAGLINE_FUZZ_CASES=5000 for a longer one (or `npm run fuzz`) */
const CASES = Number(process.env.FLAGLINE_FUZZ_CASES ?? 600);

// Issue: bad input must get the decoder's own clear errors, never a hang, a crash or a memory blow-up.
describe('fuzzing the decoder', () => {
  it(`decodes ${CASES} seeded mutations of every sample capture without a hang, a crash or running out of memory`, async () => {
    const r = await fuzz({ root: process.cwd(), cases: CASES, seed: 20261202, timeoutMs: 10_000, memoryMb: 256 });
    expect(r.failures.map((f) => describeFailure(f, false))).toEqual([]);
    // the mutations reach both outcomes: refusals with a message, and decodes that still find frames
    expect(r.refused).toBeGreaterThan(CASES / 20);
    expect(r.withFrames).toBeGreaterThan(CASES / 4);
  }, 300_000);

  it('reports a hang and a crash with the input shrunk to the line that causes it', async () => {
    const r = await fuzz({
      root: process.cwd(),
      cases: 200,
      seed: 3,
      formats: ['csv'],
      timeoutMs: 500,
      memoryMb: 64,
      shrinkAttempts: 16,
      workerEntry: new URL('./fuzz/misbehaving-worker.mjs', import.meta.url),
      // the first failure of each kind is enough
      stopWhen: (failures) => new Set(failures.map((f) => f.kind)).size === 2,
    });
    expect(new Set(r.failures.map((f) => f.kind))).toEqual(new Set(['hang', 'crash']));
    expect(r.cases).toBeLessThan(200);
    for (const f of r.failures) {
      const text = new TextDecoder('latin1').decode(f.bytes);
      expect(text).toContain(f.kind === 'hang' ? '1e999' : 'NaN');
      // shrunk to a few lines around the one that holds the marker
      expect(text.split('\n').filter((l) => l.trim() !== '').length).toBeLessThanOrEqual(3);
      expect(f.bytes.length * 20).toBeLessThan(f.originalLength);
      expect(describeFailure(f, false)).toMatch(new RegExp(`^${f.kind.toUpperCase()} in case \\d+ from wrenfield-choir-print\\.csv: `));
    }
  }, 120_000);
});
