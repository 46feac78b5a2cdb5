import { describe, expect, it } from 'vitest';
import { BitRecovery, type BitRecoveryOptions, type LineEvent, type Transitions } from '../../shared/decoder';
import { BIT_CHUNK_SIZE } from '../../shared/decoder/link-bits';
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
    expect(() => new BitRecovery({ ...opts, bitRate: -9600 }, recoverySink())).toThrow(/nominal bit rate/);
    expect(() => new BitRecovery({ ...opts, bitRate: Number.NaN }, recoverySink())).toThrow(/nominal bit rate/);
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

/** a sink that keeps every chunk and event in the order they arrive */
function orderSink() {
  const r = recoverySink().r;
  const log: ({ kind: 'bits'; link: string; n: number; first: number; last: number } | { kind: 'event'; sample: number })[] = [];
  return {
    r,
    log,
    bits(link: string, chunk: { bits: Uint8Array; samples: Float64Array; n: number }) {
      log.push({ kind: 'bits', link, n: chunk.n, first: chunk.samples[0], last: chunk.samples[chunk.n - 1] });
      r.bits.set(link, r.bits.get(link) ?? []);
      r.samples.set(link, r.samples.get(link) ?? []);
      for (let i = 0; i < chunk.n; i++) {
        r.bits.get(link)!.push(chunk.bits[i]);
        r.samples.get(link)!.push(chunk.samples[i]);
      }
    },
    event(e: LineEvent) {
      log.push({ kind: 'event', sample: e.sample });
      r.events.push({ ...e });
    },
  };
}

describe('clocked bit recovery: batches longer than a chunk', () => {
  // The expected bits are the ones our own waveform encoder (shared/decoder/encode) was given.
  for (const links of [1, 2, 3, 4]) {
    it(`hands on full chunks mid-batch and loses no bit when one batch carries ${BIT_CHUNK_SIZE * 2 + 500} bits on each of ${links} link(s)`, () => {
      const count = BIT_CHUNK_SIZE * 2 + 500;
      const sent = Array.from({ length: links }, (_, k) => ({ name: `l${k}`, bits: randomBits(count - 37 * k, 20 + k) }));
      const w = renderWaveform({ links: sent, samplesPerBit: 4, samplePeriodSeconds: 1e-8, encoding: 'nrz', clock: { edge: 'rising' } });
      const sink = orderSink();
      const br = new BitRecovery(
        { samplePeriodSeconds: w.samplePeriodSeconds, clock: 0, data: sent.map((l, k) => ({ channel: k + 1, link: l.name })), edge: 'rising', encoding: 'nrz', invert: false },
        sink,
      );
      // the whole capture in one batch
      let batches = 0;
      for (const t of w.batches(10_000_000)) {
        br.transitions(t);
        batches++;
      }
      expect(batches).toBe(1);
      br.finish();
      sent.forEach((l) => {
        // a shorter link idles at 1 until the longest ends: its bits, then 1s
        const expected = [...Array.from(l.bits), ...new Array(count - l.bits.length).fill(1)];
        expect(sink.r.bits.get(l.name)).toEqual(expected);
      });
      const chunks = sink.log.filter((e) => e.kind === 'bits');
      for (const c of chunks) expect(c.n).toBeLessThanOrEqual(BIT_CHUNK_SIZE);
      // every link gets two full chunks and the rest
      for (const l of sent) expect(chunks.filter((c) => c.link === l.name).map((c) => c.n)).toEqual([BIT_CHUNK_SIZE, BIT_CHUNK_SIZE, 500]);
    });
  }
});

describe('clocked bit recovery: links that fill their chunks at different edges', () => {
  // Built by hand: NRZ data changes at 4i + 1, the clock rises at 4i + 2 and falls at 4i + 4, so
  // edge i samples bit i. One link's data line only gets a level just before edge `late`: it has
  // no bits for the edges before (see "no bits for clock edges before its data line has a level").
  function lateStart(links: number, lateLink: number, late: number, count: number) {
    const sent = Array.from({ length: links }, (_, k) => randomBits(count, 40 + k));
    const rows: [number, number, number][] = [[0, 0, 0]];
    for (let k = 0; k < links; k++) if (k !== lateLink) rows.push([k + 1, 0, sent[k][0]]);
    for (let i = 0; i < count; i++) {
      for (let k = 0; k < links; k++) {
        if (k === lateLink ? i >= late : i > 0) rows.push([k + 1, 4 * i + 1, sent[k][i]]);
      }
      rows.push([0, 4 * i + 2, 1], [0, 4 * i + 4, 0]);
    }
    const sink = orderSink();
    const br = new BitRecovery(
      { samplePeriodSeconds: 1e-6, clock: 0, data: sent.map((_, k) => ({ channel: k + 1, link: `l${k}` })), edge: 'rising', encoding: 'nrz', invert: false },
      sink,
    );
    br.transitions(tr(rows));
    br.finish();
    return { sent, sink };
  }

  for (const [links, lateLink] of [
    [2, 0],
    [2, 1],
    [3, 0],
    [3, 2],
  ]) {
    it(`hands on each link's chunk when that link is full, ${links} links, link ${lateLink} starting 100 edges late`, () => {
      const count = BIT_CHUNK_SIZE * 2 + 500;
      const { sent, sink } = lateStart(links, lateLink, 100, count);
      sent.forEach((bits, k) => {
        const expected = Array.from(k === lateLink ? bits.slice(100) : bits);
        expect(sink.r.bits.get(`l${k}`)).toEqual(expected);
        const sizes = sink.log.filter((e) => e.kind === 'bits' && e.link === `l${k}`).map((e) => (e.kind === 'bits' ? e.n : 0));
        expect(sizes).toEqual(k === lateLink ? [BIT_CHUNK_SIZE, BIT_CHUNK_SIZE, 400] : [BIT_CHUNK_SIZE, BIT_CHUNK_SIZE, 500]);
      });
    });
  }

  it('reads only the first n entries of a batch (readers hand on reused, longer arrays)', () => {
    /** Transitions whose arrays hold `stale` entries after the n valid ones */
    const padded = (rows: [number, number, number][], stale: [number, number, number][]): Transitions => {
      const t = tr([...rows, ...stale]);
      t.n = rows.length;
      return t;
    };
    const stale: [number, number, number][] = [
      [1, 40, 0],
      [0, 41, 1],
      [1, 42, 1],
      [0, 43, 0],
    ];
    const clockedRows: [number, number, number][] = [
      [0, 0, 0],
      [1, 0, 1],
      [0, 2, 1],
      [0, 4, 0],
      [1, 5, 0],
      [0, 6, 1],
    ];
    const clocked = recoverySink();
    const a = new BitRecovery({ samplePeriodSeconds: 1e-6, clock: 0, data: [{ channel: 1, link: 'd' }], edge: 'rising', encoding: 'nrz', invert: false }, clocked);
    a.transitions(padded(clockedRows, stale));
    a.finish();
    expect(clocked.r.bits.get('d')).toEqual([1, 0]);
    expect(clocked.r.samples.get('d')).toEqual([2, 6]);
    // clock recovered at 10 samples a bit: lock at 100, back to 1 at 130, the capture ends at 150
    const recovered = recoverySink();
    const b = new BitRecovery({ samplePeriodSeconds: 1e-7, bitRate: 1e6, data: [{ channel: 1, link: 'd' }], edge: 'rising', encoding: 'nrz', invert: false }, recovered);
    b.transitions(
      padded(
        [
          [1, 0, 1],
          [1, 100, 0],
          [1, 130, 1],
          [1, 150, 1],
        ],
        stale,
      ),
    );
    b.finish();
    expect(recovered.r.bits.get('d')).toEqual([0, 0, 0, 1, 1]);
    expect(recovered.r.samples.get('d')).toEqual([105, 115, 125, 135, 145]);
  });

  it('keeps the recovered cells that are certain at a batch end when the capture then ends without a repeated level', () => {
    // 10 samples a bit: the line falls at 100 (lock) and rises at 130; at the batch's last
    // transition (a fall at 170) every cell before it is certain. The batch hands them on itself:
    // a source that does not repeat the last level at the end (as the readers do) loses none
    const sink = recoverySink();
    const b = new BitRecovery({ samplePeriodSeconds: 1e-7, bitRate: 1e6, data: [{ channel: 1, link: 'd' }], edge: 'rising', encoding: 'nrz', invert: false }, sink);
    b.transitions(
      tr([
        [1, 0, 1],
        [1, 100, 0],
        [1, 130, 1],
        [1, 170, 0],
      ]),
    );
    b.finish();
    expect(sink.r.bits.get('d')).toEqual([0, 0, 0, 1, 1, 1, 1]);
    expect(sink.r.samples.get('d')).toEqual([105, 115, 125, 135, 145, 155, 165]);
  });

  it("ends a recovered-clock batch at its own last sample, not at a stale later one past n (the line is not known beyond it yet)", () => {
    // the first batch's arrays hold stale entries (up to sample 200) after its n valid ones; the
    // line rises at 130 in the next batch, so cells from 135 on are ones
    const first = tr([
      [1, 0, 1],
      [1, 100, 0],
      [1, 190, 0],
      [1, 200, 0],
    ]);
    first.n = 2;
    const sink = recoverySink();
    const b = new BitRecovery({ samplePeriodSeconds: 1e-7, bitRate: 1e6, data: [{ channel: 1, link: 'd' }], edge: 'rising', encoding: 'nrz', invert: false }, sink);
    b.transitions(first);
    b.transitions(
      tr([
        [1, 130, 1],
        [1, 150, 1],
      ]),
    );
    b.finish();
    expect(sink.r.bits.get('d')).toEqual([0, 0, 0, 1, 1]);
    expect(sink.r.samples.get('d')).toEqual([105, 115, 125, 135, 145]);
  });
});

describe('clocked bit recovery: edge cases of the sampled level', () => {
  it('takes the NRZI reference from the line level at capture start, also when the line changes before the first edge (ISO/IEC 13239:2002 NRZI, from memory)', () => {
    // line starts at 1, drops to 0 before the first edge: a change, so bit 0; then no change: 1
    const rows: [number, number, number][] = [
      [0, 0, 0],
      [1, 0, 1],
      [1, 1, 0],
      [0, 2, 1],
      [0, 4, 0],
      [0, 6, 1],
    ];
    expect(run({ encoding: 'nrzi' }, [rows]).bits.get('d')).toEqual([0, 1]);
    // line starts at 0 and stays: no change, bit 1 each time
    expect(run({ encoding: 'nrzi' }, [[[0, 0, 0], [1, 0, 0], [0, 2, 1], [0, 4, 0], [0, 6, 1]]]).bits.get('d')).toEqual([1, 1]);
  });

  it('takes the level from before the sample of the edge when the data changes twice at that sample (setup time, common practice)', () => {
    // data 0, then at sample 4: up, down again, the clock edge; up at 5: the edge at 4 sees 0 (the level before sample 4)
    const rows: [number, number, number][] = [
      [0, 0, 0],
      [1, 0, 0],
      [1, 4, 1],
      [1, 4, 0],
      [0, 4, 1],
      [1, 5, 1],
      [0, 6, 0],
      [0, 8, 1],
    ];
    expect(run({}, [rows]).bits.get('d')).toEqual([0, 1]);
    // three changes at 4 (up, down, up) before the edge: still the level before sample 4
    const three: [number, number, number][] = [
      [0, 0, 0],
      [1, 0, 0],
      [1, 4, 1],
      [1, 4, 0],
      [1, 4, 1],
      [0, 4, 1],
      [0, 6, 0],
      [0, 8, 1],
    ];
    expect(run({}, [three]).bits.get('d')).toEqual([0, 1]);
    // the same with the level before sample 4 at 1 and three changes after the edge
    const high: [number, number, number][] = [
      [0, 0, 0],
      [1, 0, 1],
      [0, 4, 1],
      [1, 4, 0],
      [1, 4, 1],
      [1, 4, 0],
      [0, 6, 0],
      [0, 8, 1],
    ];
    expect(run({}, [high]).bits.get('d')).toEqual([1, 0]);
  });

  it('gives no edge for the clock\'s first value, even when it starts at its active level', () => {
    expect(run({}, [[[0, 0, 1], [1, 0, 1], [0, 2, 0], [0, 4, 1]]]).bits.get('d')).toEqual([1]);
    expect(run({ edge: 'falling' }, [[[0, 0, 0], [1, 0, 1], [0, 2, 1], [0, 4, 0]]]).bits.get('d')).toEqual([1]);
  });

  it('hands on the bits sampled before a line event ahead of the event, for one, two and three links', () => {
    for (const links of [1, 2, 3]) {
      const sink = orderSink();
      const br = new BitRecovery(
        {
          samplePeriodSeconds: 1e-6,
          clock: 0,
          data: Array.from({ length: links }, (_, k) => ({ channel: k + 1, link: `l${k}` })),
          handshake: [{ channel: 9, name: 'rts' }],
          edge: 'rising',
          encoding: 'nrz',
          invert: false,
        },
        sink,
      );
      const rows: [number, number, number][] = [[0, 0, 0], [9, 0, 0]];
      for (let k = 0; k < links; k++) rows.push([k + 1, 0, 1]);
      // edges at 2, 6, 10; rts rises at 7 and falls at 11
      rows.push([0, 2, 1], [0, 4, 0], [0, 6, 1], [0, 8, 0], [9, 7, 1], [0, 10, 1], [9, 11, 0], [0, 12, 0]);
      rows.sort((a, b) => a[1] - b[1]);
      br.transitions(tr(rows));
      br.finish();
      expect(sink.log.filter((e) => e.kind === 'event').map((e) => e.sample)).toEqual([7, 11]);
      // before each event, every link has handed on exactly the bits sampled before it
      for (const [at, upTo] of [
        [7, 6],
        [11, 10],
      ]) {
        const idx = sink.log.findIndex((e) => e.kind === 'event' && e.sample === at);
        for (let k = 0; k < links; k++) {
          const last = sink.log.slice(0, idx).filter((e) => e.kind === 'bits' && e.link === `l${k}`).at(-1);
          expect(last && last.kind === 'bits' ? last.last : null).toBe(upTo);
        }
      }
      for (let k = 0; k < links; k++) expect(sink.r.samples.get(`l${k}`)).toEqual([2, 6, 10]);
    }
  });
});

describe('bit recovery without a clock: batches and the end of the capture', () => {
  // 1 Mbit/s sampled at 10 MHz: 10 samples a bit. Per clock-recovery.ts the loop locks on the
  // first transition and samples each cell in its middle (5 samples after a boundary), and a
  // pulse shorter than 35 % of a bit (3.5 samples) is a glitch. The expected cells below are
  // worked out by hand from those rules on transitions that fall exactly on cell boundaries.
  const opts = { samplePeriodSeconds: 1e-7, bitRate: 1e6, data: [{ channel: 1, link: 'd' }], edge: 'rising' as const, encoding: 'nrz' as const, invert: false };

  it('puts every cell sampled before a line event in the next batch ahead of it (bits reach the sink in time order with events)', () => {
    const sink = orderSink();
    const br = new BitRecovery({ ...opts, handshake: [{ channel: 4, name: 'rts', link: 'd' }] }, sink);
    // lock at 100 (line to 0), a change at 160 (to 1) still pending at the batch's end
    br.transitions(
      tr([
        [1, 0, 1],
        [4, 0, 0],
        [1, 100, 0],
        [1, 160, 1],
      ]),
    );
    // rts rises at 170; the line goes back to 0 at 190; the capture ends at 220 (the reader repeats the level there)
    br.transitions(
      tr([
        [4, 170, 1],
        [1, 190, 0],
        [1, 220, 0],
      ]),
    );
    br.finish();
    // the change at 160 is 10 samples old at 170 (no glitch), so the cell at 165 is known by then
    expect(sink.log.map((e) => (e.kind === 'event' ? ['event', e.sample] : ['bits', e.first, e.last]))).toEqual([
      ['bits', 105, 165],
      ['event', 170],
      ['bits', 175, 215],
    ]);
    expect(sink.r.bits.get('d')).toEqual([0, 0, 0, 0, 0, 0, 1, 1, 1, 0, 0, 0]);
    expect(sink.r.samples.get('d')).toEqual([105, 115, 125, 135, 145, 155, 165, 175, 185, 195, 205, 215]);
  });

  it('puts the cells up to a line event\'s sample ahead of it also when no change is pending at the end of the batch before', () => {
    const sink = orderSink();
    const br = new BitRecovery({ ...opts, handshake: [{ channel: 4, name: 'rts', link: 'd' }] }, sink);
    // lock at 100, back to 1 at 130; the batch ends with rts rising at 160, long after the last change
    br.transitions(
      tr([
        [1, 0, 1],
        [4, 0, 0],
        [1, 100, 0],
        [1, 130, 1],
        [4, 160, 1],
      ]),
    );
    br.transitions(
      tr([
        [4, 170, 0],
        [1, 200, 1],
      ]),
    );
    br.finish();
    const at170 = sink.log.findIndex((e) => e.kind === 'event' && e.sample === 170);
    const before = sink.log.slice(0, at170).flatMap((e) => (e.kind === 'bits' ? [e.last] : []));
    expect(Math.max(...before)).toBe(165);
    expect(sink.r.bits.get('d')).toEqual([0, 0, 0, 1, 1, 1, 1, 1, 1, 1]);
    expect(sink.r.samples.get('d')).toEqual([105, 115, 125, 135, 145, 155, 165, 175, 185, 195]);
  });

  it('hands on the cells sampled before a line event ahead of it when the event comes mid-batch', () => {
    const sink = orderSink();
    const br = new BitRecovery({ ...opts, handshake: [{ channel: 4, name: 'rts', link: 'd' }] }, sink);
    // lock at 100 (to 0), back to 1 at 130; rts rises at 160 in the same batch, then the line
    // goes to 0 at 200 and the capture ends at 220
    br.transitions(
      tr([
        [1, 0, 1],
        [4, 0, 0],
        [1, 100, 0],
        [1, 130, 1],
        [4, 160, 1],
        [1, 200, 0],
        [1, 220, 0],
      ]),
    );
    br.finish();
    expect(sink.log.map((e) => (e.kind === 'event' ? ['event', e.sample] : ['bits', e.first, e.last]))).toEqual([
      ['bits', 105, 155],
      ['event', 160],
      ['bits', 165, 215],
    ]);
    expect(sink.r.bits.get('d')).toEqual([0, 0, 0, 1, 1, 1, 1, 1, 1, 1, 0, 0]);
  });

  it('lets a cell sampled after a data change that may still be a glitch (under 35 % of a bit before a line event) follow the event', () => {
    const sink = orderSink();
    // 40 samples a bit: cells in the middle of each, a glitch is shorter than 14 samples
    const br = new BitRecovery({ ...opts, bitRate: 2.5e5, handshake: [{ channel: 4, name: 'rts', link: 'd' }] }, sink);
    // lock at 100 (to 0): cells at 120, 160, …; a change to 1 at 159 is 12 samples old when rts
    // rises at 171, so it may still be a glitch and what follows it waits. It is none (the line
    // stays 1): the clock moves half its error (19 samples) later, so the next cell is sampled at
    // 169.5, rounded to 170, before the event but handed on after it.
    br.transitions(
      tr([
        [1, 0, 1],
        [4, 0, 0],
        [1, 100, 0],
        [1, 159, 1],
        [4, 171, 1],
        [1, 260, 1],
      ]),
    );
    br.finish();
    expect(sink.log.map((e) => (e.kind === 'event' ? ['event', e.sample] : ['bits', e.first, e.last]))).toEqual([
      ['bits', 120, 120],
      ['event', 171],
      ['bits', 170, 250],
    ]);
  });

  it('drops a short pulse right at the end of the capture as a glitch: the cell it covers keeps the line level', () => {
    const r = run({ ...opts, clock: undefined }, [
      [
        [1, 0, 1],
        [1, 100, 0], // lock: cells at 105, 115, 125, 135 …
        [1, 134, 1], // a 1-sample pulse over the middle of the cell at 135
        [1, 135, 0],
        [1, 137, 0], // the capture ends here (the reader repeats the level)
      ],
    ]);
    expect(r.bits.get('d')).toEqual([0, 0, 0, 0]);
    expect(r.samples.get('d')).toEqual([105, 115, 125, 135]);
  });

  it('drops a short pulse split across two batches as a glitch, as it would within one batch', () => {
    const rows: [number, number, number][] = [
      [1, 0, 1],
      [1, 100, 0], // lock: cells at 105, 115, …
      [1, 134, 1], // a 1-sample pulse over the middle of the cell at 135, its second edge in the next batch
      [1, 135, 0],
      [1, 160, 0], // the capture ends here (the reader repeats the level)
    ];
    const whole = run({ ...opts, clock: undefined }, [rows]);
    const split = run({ ...opts, clock: undefined }, [rows.slice(0, 3), rows.slice(3)]);
    expect(whole.bits.get('d')).toEqual([0, 0, 0, 0, 0, 0]);
    expect(split.bits.get('d')).toEqual([0, 0, 0, 0, 0, 0]);
    expect(split.samples.get('d')).toEqual([105, 115, 125, 135, 145, 155]);
  });

  it('keeps each link on its own recovered clock, locked to its own first transition', () => {
    const sink = recoverySink();
    const br = new BitRecovery({ ...opts, data: [{ channel: 3, link: 'a' }, { channel: 1, link: 'b' }] }, sink);
    br.transitions(
      tr([
        [3, 0, 1],
        [1, 0, 0],
        [3, 100, 0], // a locks at 100: cells 105, 115, …
        [1, 103, 1], // b locks at 103: cells 108, 118, …
        [3, 130, 1],
        [1, 123, 0],
        [3, 150, 1],
        [1, 150, 0],
      ].sort((x, y) => x[1] - y[1]) as [number, number, number][]),
    );
    br.finish();
    expect(sink.r.bits.get('a')).toEqual([0, 0, 0, 1, 1]);
    expect(sink.r.samples.get('a')).toEqual([105, 115, 125, 135, 145]);
    expect(sink.r.bits.get('b')).toEqual([1, 1, 0, 0, 0]);
    expect(sink.r.samples.get('b')).toEqual([108, 118, 128, 138, 148]);
  });
});

describe('bit recovery: lines without a level, repeated levels, channels not in use', () => {
  it('gives a link no bits for clock edges before its data line has a level, for one, two and three links', () => {
    for (const links of [1, 2, 3]) {
      const sink = recoverySink();
      const br = new BitRecovery(
        { samplePeriodSeconds: 1e-6, clock: 0, data: Array.from({ length: links }, (_, k) => ({ channel: k + 1, link: `l${k}` })), edge: 'rising', encoding: 'nrz', invert: false },
        sink,
      );
      // the last link's line only gets a level at sample 5, between the edges at 2 and 6
      const rows: [number, number, number][] = [[0, 0, 0]];
      for (let k = 0; k < links - 1; k++) rows.push([k + 1, 0, 0]);
      rows.push([0, 2, 1], [0, 4, 0], [links, 5, 1], [0, 6, 1]);
      br.transitions(tr(rows));
      br.finish();
      for (let k = 0; k < links - 1; k++) expect(sink.r.samples.get(`l${k}`)).toEqual([2, 6]);
      expect(sink.r.bits.get(`l${links - 1}`)).toEqual([1]);
      expect(sink.r.samples.get(`l${links - 1}`)).toEqual([6]);
    }
  });

  it('gives no second line event when the capture ends with a line at the same level (readers repeat each level there)', () => {
    // clocked: the clock and the data line end unknown, the handshake line high; each level is repeated at 20
    const clocked = run({ handshake: [{ channel: 2, name: 'rts', link: 'd' }] }, [
      [
        [0, 0, 0],
        [1, 0, 1],
        [2, 0, 0],
        [0, 2, 1],
        [2, 3, 1],
        [1, 4, 2],
        [0, 5, 2],
      ],
      [
        [0, 20, 2],
        [1, 20, 2],
        [2, 20, 1],
      ],
    ]);
    expect(clocked.events).toEqual([
      { link: 'd', channel: 'rts', kind: 'rise', sample: 3 },
      { link: 'd', channel: 'd', kind: 'unknown', sample: 4 },
      { link: null, channel: 'clock', kind: 'unknown', sample: 5 },
    ]);
    expect(clocked.bits.get('d')).toEqual([1]);
    // clock recovered: the data line ends unknown and the handshake line low
    const sink = recoverySink();
    const br = new BitRecovery(
      { samplePeriodSeconds: 1e-7, bitRate: 1e6, data: [{ channel: 1, link: 'd' }], handshake: [{ channel: 2, name: 'rts', link: 'd' }], edge: 'rising', encoding: 'nrz', invert: false },
      sink,
    );
    br.transitions(
      tr([
        [1, 0, 1],
        [2, 0, 1],
        [1, 100, 0],
        [2, 110, 0],
        [1, 130, 2],
        [1, 200, 2],
        [2, 200, 0],
      ]),
    );
    br.finish();
    expect(sink.r.events).toEqual([
      { link: 'd', channel: 'rts', kind: 'fall', sample: 110 },
      { link: 'd', channel: 'd', kind: 'unknown', sample: 130 },
    ]);
  });

  it('ignores channels that are neither clock, data nor handshake', () => {
    const rows: [number, number, number][] = [
      [0, 0, 0],
      [1, 0, 1],
      [7, 0, 0],
      [0, 2, 1],
      [7, 3, 1],
      [0, 4, 0],
      [7, 5, 2],
      [0, 6, 1],
      [7, 7, 0],
    ];
    const clocked = run({}, [rows]);
    expect(clocked.bits.get('d')).toEqual([1, 1]);
    expect(clocked.events).toEqual([]);
    const recovered = run({ clock: undefined, bitRate: 1e5 }, [
      [
        [1, 0, 1],
        [7, 0, 0],
        [1, 10, 0],
        [7, 12, 1],
        [1, 30, 1],
        [7, 35, 2],
        [1, 40, 1],
      ],
    ]);
    // 10 samples a bit: lock at 10, cells at 15, 25 (0), 35 (1)
    expect(recovered.bits.get('d')).toEqual([0, 0, 1]);
    expect(recovered.events).toEqual([]);
  });
});
