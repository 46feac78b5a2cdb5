import { describe, expect, it } from 'vitest';
import { BitRecovery } from '../../shared/decoder';
import { renderWaveform, type WaveformOptions } from '../../shared/decoder/encode';
import { randomBits, recoverFromWaveform, recoverySink, stuffed } from './support/signals';

/** bits a receiver without a clock can know: from the first transition on */
function fromFirstChange(bits: Uint8Array): number[] {
  // the line idles at 1 (mark) before bit 0: in NRZ and in NRZI the first 0 is the first change
  return Array.from(bits.slice(bits.indexOf(0)));
}

function recover(opts: Omit<WaveformOptions, 'samplePeriodSeconds'>, invert = false) {
  const w = renderWaveform({ ...opts, samplePeriodSeconds: 1e-8 });
  const bitRate = 1 / (opts.samplesPerBit * 1e-8);
  return recoverFromWaveform(w, { data: [{ channel: 0, link: 'rx' }], edge: 'rising', encoding: opts.encoding, invert, bitRate }).bits.get('rx')!;
}

// Stuffed line bits as HDLC sends them (ISO/IEC 13239:2002 zero-bit insertion, from memory): at most six cells
// without a transition in NRZI, which is what makes clock recovery from the data possible.
describe('clock recovery from data transitions', () => {
  for (const encoding of ['nrz', 'nrzi'] as const) {
    for (const rateError of [-0.03, 0, 0.03]) {
      for (const samplesPerBit of [5.5, 8, 16.7]) {
        it(`recovers ${encoding} bits at ${rateError * 100} % rate error with ±10 % jitter, ${samplesPerBit} samples per bit`, () => {
          const bits = stuffed(randomBits(8000, 21));
          const got = recover({ links: [{ name: 'rx', bits }], samplesPerBit, encoding, faults: { rateError, jitter: 0.1, seed: 3 } });
          const want = fromFirstChange(bits);
          expect(got.slice(0, want.length)).toEqual(want);
          // after the last bit only idle cells of the tail follow
          expect(got.length - want.length).toBeLessThanOrEqual(2);
        });
      }
    }
  }

  it('recovers inverted NRZ lines', () => {
    const bits = stuffed(randomBits(3000, 5));
    const got = recover({ links: [{ name: 'rx', bits }], samplesPerBit: 8, encoding: 'nrz', invert: true, faults: { rateError: 0.02, jitter: 0.1, seed: 1 } }, true);
    expect(got.slice(0, bits.length - bits.indexOf(0))).toEqual(fromFirstChange(bits));
  });

  it('ignores glitches shorter than a third of a bit, also right beside a real edge', () => {
    const bits = stuffed(randomBits(8000, 6));
    const glitches = [];
    for (let k = 1; k < 60; k++) glitches.push({ channel: 'rx', sample: Math.round(k * 1013.7), width: 1 + (k % 3) });
    const got = recover({ links: [{ name: 'rx', bits }], samplesPerBit: 10, encoding: 'nrzi', faults: { rateError: 0.03, jitter: 0.1, seed: 8, glitches } });
    const want = fromFirstChange(bits);
    expect(got.slice(0, want.length)).toEqual(want);
  });

  it('places each bit in the middle of its cell', () => {
    const bits = stuffed(randomBits(2000, 2));
    const w = renderWaveform({ links: [{ name: 'rx', bits }], samplesPerBit: 10, samplePeriodSeconds: 1e-8, encoding: 'nrzi', leadBits: 3 });
    const r = recoverFromWaveform(w, { data: [{ channel: 0, link: 'rx' }], edge: 'rising', encoding: 'nrzi', invert: false, bitRate: 1e7 });
    const first = bits.indexOf(0);
    const samples = r.samples.get('rx')!;
    for (let i = 0; i < 100; i++) expect(samples[i]).toBe(30 + (first + i) * 10 + 5);
  });

  it('keeps long NRZI idle (no transitions) as 1s and locks again on the next frame', () => {
    const frame = stuffed(randomBits(500, 7));
    const bits = Uint8Array.from([...frame, ...new Array(300).fill(1), ...frame]);
    const got = recover({ links: [{ name: 'rx', bits }], samplesPerBit: 8, encoding: 'nrzi', faults: { rateError: 0.02, jitter: 0.05, seed: 4 } });
    const want = fromFirstChange(bits);
    // the second frame comes out intact; the idle between may be a bit longer or shorter
    const tail = want.slice(want.length - frame.length + 1).join('');
    expect(got.join('')).toContain(tail);
  });

  it('gives the same bits however the transitions are batched', () => {
    const bits = stuffed(randomBits(3000, 12));
    const glitches = [{ channel: 'rx', sample: 5000, width: 2 }, { channel: 'rx', sample: 9001, width: 1 }];
    const w = renderWaveform({ links: [{ name: 'rx', bits }], samplesPerBit: 9, samplePeriodSeconds: 1e-8, encoding: 'nrzi', faults: { jitter: 0.1, rateError: 0.02, seed: 2, glitches } });
    const runs = [1, 2, 13, 100_000].map((size) => {
      const sink = recoverySink();
      const br = new BitRecovery({ samplePeriodSeconds: 1e-8, data: [{ channel: 0, link: 'rx' }], edge: 'rising', encoding: 'nrzi', invert: false, bitRate: 1 / 9e-8 }, sink);
      for (const t of w.batches(size)) br.transitions(t);
      br.finish();
      return { bits: sink.r.bits.get('rx'), samples: sink.r.samples.get('rx') };
    });
    for (const r of runs.slice(1)) expect(r).toEqual(runs[0]);
    expect(runs[0].bits!.slice(0, bits.length - bits.indexOf(0))).toEqual(fromFirstChange(bits));
  });

  it('needs a nominal bit rate when there is no clock', () => {
    expect(() => new BitRecovery({ samplePeriodSeconds: 1e-8, data: [{ channel: 0, link: 'rx' }], edge: 'rising', encoding: 'nrzi', invert: false }, { bits() {}, event() {} })).toThrow(
      /bit rate/,
    );
  });
});
