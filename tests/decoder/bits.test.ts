import { describe, expect, it } from 'vitest';
import { BitRecovery, type BitRecoveryOptions, type Transitions } from '../../shared/decoder';
import { renderWaveform } from '../../shared/decoder/encode';
import { randomBits, recoverFromWaveform, recoverySink, stuffed } from './support/signals';

/** builds Transitions from [channel, sample, value] rows */
function tr(rows: [number, number, number][]): Transitions {
  return {
    channel: Uint8Array.from(rows.map((r) => r[0])),
    sample: Float64Array.from(rows.map((r) => r[1])),
    value: Uint8Array.from(rows.map((r) => r[2])),
    n: rows.length,
  };
}

function run(opts: Partial<BitRecoveryOptions>, batches: [number, number, number][][]) {
  const sink = recoverySink();
  const br = new BitRecovery(
    { samplePeriodSeconds: 1e-6, clock: 0, data: [{ channel: 1, link: 'd' }], edge: 'rising', encoding: 'nrz', invert: false, ...opts },
    sink,
  );
  for (const b of batches) br.transitions(tr(b));
  br.finish();
  return sink.r;
}

describe('clocked bit recovery', () => {
  it('samples data on each rising clock edge (NRZ: level = bit)', () => {
    const r = run({}, [
      [
        [0, 0, 0],
        [1, 0, 1],
        [0, 2, 1],
        [1, 3, 0],
        [0, 4, 0],
        [0, 6, 1],
        [0, 8, 0],
        [1, 9, 1],
        [0, 10, 1],
      ],
    ]);
    expect(r.bits.get('d')).toEqual([1, 0, 1]);
    expect(r.samples.get('d')).toEqual([2, 6, 10]);
  });

  it('takes the level from before a data change at the very sample of the edge (setup time, common practice)', () => {
    const rows: [number, number, number][] = [
      [0, 0, 0],
      [1, 0, 0],
      [1, 2, 1],
      [0, 2, 1],
      [0, 4, 0],
      [0, 6, 1],
      [1, 6, 0],
    ];
    // either order of the two changes at one sample gives the same bits
    expect(run({}, [rows]).bits.get('d')).toEqual([0, 1]);
    const swapped = [...rows];
    [swapped[2], swapped[3]] = [swapped[3], swapped[2]];
    expect(run({}, [swapped]).bits.get('d')).toEqual([0, 1]);
  });

  it('samples on falling edges when asked', () => {
    const r = run({ edge: 'falling' }, [
      [
        [0, 0, 1],
        [1, 0, 1],
        [0, 2, 0],
        [1, 3, 0],
        [0, 4, 1],
        [0, 6, 0],
      ],
    ]);
    expect(r.bits.get('d')).toEqual([1, 0]);
  });

  it('decodes NRZI: no change is 1, a change is 0, starting from the line level at capture start (ISO/IEC 13239:2002 NRZI, from memory)', () => {
    // data level per clock edge: 1 1 0 0 1 → bits vs previous level (start 1): 1 1 0 1 0
    const levels = [1, 1, 0, 0, 1];
    const rows: [number, number, number][] = [
      [0, 0, 0],
      [1, 0, 1],
    ];
    let level = 1;
    levels.forEach((l, i) => {
      if (l !== level) rows.push([1, i * 4 + 1, l]);
      level = l;
      rows.push([0, i * 4 + 2, 1], [0, i * 4 + 4, 0]);
    });
    expect(run({ encoding: 'nrzi' }, [rows]).bits.get('d')).toEqual([1, 1, 0, 1, 0]);
    // inverting the line does not change NRZI data
    expect(run({ encoding: 'nrzi', invert: true }, [rows]).bits.get('d')).toEqual([1, 1, 0, 1, 0]);
    expect(run({ encoding: 'nrz', invert: true }, [rows]).bits.get('d')).toEqual(levels.map((l) => 1 - l));
  });

  it('reports handshake changes as rise and fall line events and unknown levels as unknown', () => {
    const r = run({ handshake: [{ channel: 2, name: 'rts', link: 'd' }] }, [
      [
        [0, 0, 0],
        [1, 0, 1],
        [2, 0, 0],
        [2, 5, 1],
        [0, 6, 1],
        [1, 8, 2],
        [0, 10, 0],
        [2, 11, 0],
        [0, 12, 1],
      ],
    ]);
    expect(r.events).toEqual([
      { link: 'd', channel: 'rts', kind: 'rise', sample: 5 },
      { link: 'd', channel: 'd', kind: 'unknown', sample: 8 },
      { link: 'd', channel: 'rts', kind: 'fall', sample: 11 },
    ]);
    // an unknown data line keeps its last known level
    expect(r.bits.get('d')).toEqual([1, 1]);
  });

  it('gives a clock that passes through unknown no edge', () => {
    const r = run({}, [
      [
        [0, 0, 0],
        [1, 0, 1],
        [0, 2, 2],
        [0, 3, 1],
        [0, 4, 0],
        [0, 5, 1],
      ],
    ]);
    expect(r.bits.get('d')).toEqual([1]);
    expect(r.events.map((e) => e.kind)).toEqual(['unknown']);
  });

  it('gives the same bits however the transitions are batched', () => {
    const bits = stuffed(randomBits(3000, 8));
    const w = renderWaveform({
      links: [
        { name: 'a', bits },
        { name: 'b', bits: randomBits(2000, 9) },
      ],
      samplesPerBit: 5,
      samplePeriodSeconds: 1e-8,
      encoding: 'nrzi',
      clock: { edge: 'rising' },
      faults: { jitter: 0.1, seed: 1 },
    });
    const opts = { clock: 0, data: [{ channel: 1, link: 'a' }, { channel: 2, link: 'b' }], edge: 'rising' as const, encoding: 'nrzi' as const, invert: false };
    const all: [number, number, number][] = [];
    for (const t of w.batches(10_000)) for (let i = 0; i < t.n; i++) all.push([t.channel[i], t.sample[i], t.value[i]]);
    const whole = run(opts, [all]);
    const pieces: [number, number, number][][] = [];
    for (let at = 0; at < all.length; at += 1 + (at % 37)) pieces.push(all.slice(at, at + 1 + (at % 37)));
    const split = run(opts, pieces);
    expect(split.bits).toEqual(whole.bits);
    expect(split.samples).toEqual(whole.samples);
    expect(whole.bits.get('a')).toEqual(Array.from(bits));
  });

  for (const encoding of ['nrz', 'nrzi'] as const) {
    for (const invert of [false, true]) {
      for (const edge of ['rising', 'falling'] as const) {
        it(`recovers random line bits from a jittered clocked waveform (${encoding}, ${edge} edge${invert ? ', inverted' : ''})`, () => {
          const bits = randomBits(5000, 11);
          const w = renderWaveform({
            links: [{ name: 'tx', bits }],
            samplesPerBit: 7.3,
            samplePeriodSeconds: 1e-8,
            encoding,
            invert,
            clock: { edge },
            faults: { jitter: 0.15, rateError: 0.03, seed: 5 },
          });
          const r = recoverFromWaveform(w, { clock: 0, data: [{ channel: 1, link: 'tx' }], edge, encoding, invert });
          expect(r.bits.get('tx')).toEqual(Array.from(bits));
        });
      }
    }
  }

  it('loses the bit of a missing clock pulse and gains one for a glitch on the clock', () => {
    const bits = randomBits(200, 3);
    const base = { links: [{ name: 'tx', bits }], samplesPerBit: 8, samplePeriodSeconds: 1e-8, encoding: 'nrz' as const, clock: { edge: 'rising' as const } };
    const opts = { clock: 0, data: [{ channel: 1, link: 'tx' }], edge: 'rising' as const, encoding: 'nrz' as const, invert: false };
    const missing = recoverFromWaveform(renderWaveform({ ...base, faults: { missingClockEdges: [50] } }), opts).bits.get('tx')!;
    expect(missing).toEqual([...bits.slice(0, 50), ...bits.slice(51)]);
    // bit 100's cell starts at sample 16 + 800; a 1-sample clock pulse just after its boundary
    const w = renderWaveform({ ...base, faults: { glitches: [{ channel: 'clock', sample: 16 + 800 + 1, width: 1 }] } });
    const glitched = recoverFromWaveform(w, opts).bits.get('tx')!;
    expect(glitched).toHaveLength(bits.length + 1);
    expect(glitched.slice(0, 100)).toEqual(Array.from(bits.slice(0, 100)));
    expect(glitched.slice(101)).toEqual(Array.from(bits.slice(100)));
  });
});

describe('clocked bit recovery: more than two links, names of line events', () => {
  it('samples every data line of three links on the same clock edge, each with the setup-time rule (common practice)', () => {
    const sink = recoverySink();
    const br = new BitRecovery(
      {
        samplePeriodSeconds: 1e-6,
        clock: 0,
        data: [
          { channel: 1, link: 'a' },
          { channel: 2, link: 'b' },
          { channel: 3, link: 'c' },
        ],
        edge: 'rising',
        encoding: 'nrz',
        invert: false,
      },
      sink,
    );
    br.transitions(
      tr([
        [0, 0, 0],
        [1, 0, 1],
        [2, 0, 0],
        [3, 0, 1],
        [0, 2, 1], // edge 1: a=1 b=0 c=1
        [0, 3, 0],
        [1, 3, 0],
        [3, 4, 0], // c changes at the very sample of edge 2: the edge still takes 1
        [0, 4, 1], // edge 2: a=0 b=0 c=1
        [0, 5, 0],
        [2, 5, 1],
        [0, 6, 1], // edge 3: a=0 b=1 c=0
      ]),
    );
    br.finish();
    expect(sink.r.bits.get('a')).toEqual([1, 0, 0]);
    expect(sink.r.bits.get('b')).toEqual([0, 0, 1]);
    expect(sink.r.bits.get('c')).toEqual([1, 1, 0]);
    expect(sink.r.samples.get('c')).toEqual([2, 4, 6]);
  });

  it('names an unknown clock "clock" with no link, and a handshake line without a link by its own name', () => {
    const r = run({ handshake: [{ channel: 5, name: 'dcd' }] }, [
      [
        [0, 0, 0],
        [1, 0, 1],
        [5, 0, 1],
        [0, 2, 2],
        [5, 3, 2],
        [5, 4, 0],
        [5, 6, 1],
      ],
    ]);
    expect(r.events).toEqual([
      { link: null, channel: 'clock', kind: 'unknown', sample: 2 },
      { link: null, channel: 'dcd', kind: 'unknown', sample: 3 },
      { link: null, channel: 'dcd', kind: 'fall', sample: 4 },
      { link: null, channel: 'dcd', kind: 'rise', sample: 6 },
    ]);
  });

  it('refuses to start with neither a clock channel nor a nominal bit rate', () => {
    const opts = { samplePeriodSeconds: 1e-6, data: [{ channel: 1, link: 'd' }], edge: 'rising' as const, encoding: 'nrz' as const, invert: false };
    expect(() => new BitRecovery(opts, recoverySink())).toThrow(/clock channel or a nominal bit rate/);
    expect(() => new BitRecovery({ ...opts, bitRate: 0 }, recoverySink())).toThrow(/nominal bit rate/);
    expect(() => new BitRecovery({ ...opts, bitRate: 9600 }, recoverySink())).not.toThrow();
  });
});

describe('bit recovery without a clock: line events', () => {
  it('reports handshake changes and unknown data levels as line events when the clock is recovered', () => {
    const sink = recoverySink();
    const br = new BitRecovery(
      { samplePeriodSeconds: 1e-7, bitRate: 1e6, data: [{ channel: 1, link: 'd' }], handshake: [{ channel: 4, name: 'rts', link: 'd' }], edge: 'rising', encoding: 'nrz', invert: false },
      sink,
    );
    br.transitions(
      tr([
        [1, 0, 1],
        [4, 0, 0],
        [1, 30, 0],
        [4, 35, 1],
        [1, 50, 2],
        [1, 70, 1],
        [4, 80, 0],
        [1, 100, 1],
      ]),
    );
    br.finish();
    expect(sink.r.events).toEqual([
      { link: 'd', channel: 'rts', kind: 'rise', sample: 35 },
      { link: 'd', channel: 'd', kind: 'unknown', sample: 50 },
      { link: 'd', channel: 'rts', kind: 'fall', sample: 80 },
    ]);
  });
});
