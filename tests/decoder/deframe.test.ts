import { describe, expect, it } from 'vitest';
import { encodeLineBits, randomFrame, seededRng } from '../../shared/decoder/encode';
import { Deframer, type DeframerOptions, type LineEvent, type RawFrame } from '../../shared/decoder';
import { bitsOf, deframeBits, pushInChunks } from './deframe-helpers';

const FLAG = '01111110';

describe('Deframer', () => {
  it('deletes the zero after five ones (Tanenbaum, Computer Networks, 5th edition, section 3.1.2, Fig. 3-5, from memory)', () => {
    // Textbook example: data 011011111111111111110010 is sent as 011011111011111011111010010.
    const stuffed = '011011111011111011111010010';
    const data = '011011111111111111110010';
    const { frames } = deframeBits(bitsOf(FLAG + stuffed + FLAG));
    expect(frames).toHaveLength(1);
    const f = frames[0];
    expect(f.bitLength).toBe(24);
    const got = Array.from({ length: 24 }, (_, i) => (f.bytes[i >> 3] >> (i & 7)) & 1).join('');
    expect(got).toBe(data);
    // Inserted zeros sit after each run of five ones, counted in the line bits after the opening flag.
    expect(f.stuffed).toEqual([9, 15, 21]);
    expect(f.firstSample).toBe(8);
    expect(f.lastSample).toBe(8 + stuffed.length - 1);
    // Three octets are fewer than address + control + FCS.
    expect(f.status).toBe('short');
  });

  it('finds frames between flags and reports a stretch of fill flags as one line event (ISO/IEC 13239:2002 flag 01111110, from memory)', () => {
    const { bits, frames: sent } = encodeLineBits([
      { kind: 'flags', count: 5 },
      { kind: 'frame', bytes: new Uint8Array([0x03, 0x13, 0x44]) },
      { kind: 'flags', count: 3 },
    ]);
    const { frames, events } = deframeBits(bits);
    expect(frames).toHaveLength(1);
    expect(frames[0].firstSample).toBe(sent[0].startBit);
    expect(frames[0].lastSample).toBe(sent[0].endBit - 1);
    expect(Array.from(frames[0].bytes)).toEqual(Array.from(sent[0].wire));
    const flags = events.filter((e) => e.kind === 'flags');
    // 5 fill flags + the frame's opening flag; then the closing flag + 3 fill flags.
    expect(flags.map((e) => e.count)).toEqual([6, 4]);
    expect(flags[0].sample).toBe(0);
  });

  // ISO/IEC 13239:2002 (from memory): the transmitter inserts a 0 after five contiguous 1s anywhere
  // between the flags, the FCS included, so an FCS ending in five 1s is followed by a stuffed 0.
  it('ends a frame at its last FCS bit, not at a zero stuffed after it, for every chunk split', () => {
    const rng = seededRng(1311);
    const seen = { trailing: 0, plain: 0 };
    for (let round = 0; round < 5000 && (seen.trailing < 30 || seen.plain < 30); round++) {
      const bytes = randomFrame(rng, 12);
      const { bits, frames: sent } = encodeLineBits([{ kind: 'flags', count: 1 }, { kind: 'frame', bytes }, { kind: 'flags', count: 1 }]);
      const s = sent[0];
      const stuffedLast = s.stuffedPositions.at(-1) === s.endBit - s.startBit - 1;
      if ((stuffedLast ? seen.trailing : seen.plain) >= 30) continue;
      seen[stuffedLast ? 'trailing' : 'plain']++;
      for (const sizes of [[bits.length], [1], [3, 8, 5], [13]]) {
        for (const bitwise of [false, true]) {
          const frames: RawFrame[] = [];
          const d = new Deframer('L', { frame: (f) => frames.push(f), event: () => {} }, { bitwise });
          pushInChunks(d, bits, sizes);
          d.finish();
          expect(frames).toHaveLength(1);
          expect(frames[0].lastSample).toBe(stuffedLast ? s.endBit - 2 : s.endBit - 1);
          // the stuffed 0 is still one of the frame's line bits
          expect(frames[0].stuffed).toEqual(s.stuffedPositions);
        }
      }
    }
    expect(seen).toEqual({ trailing: 30, plain: 30 });
  });

  it('lets one flag close a frame and open the next (ISO/IEC 13239:2002 shared flag, from memory)', () => {
    const a = new Uint8Array([1, 2, 3]);
    const b = new Uint8Array([4, 5, 6]);
    const { bits, frames: sent } = encodeLineBits([
      { kind: 'frame', bytes: a },
      { kind: 'frame', bytes: b, sharedFlag: true },
    ]);
    expect(sent[1].startBit - sent[0].endBit).toBe(8);
    const { frames, events } = deframeBits(bits);
    expect(frames.map((f) => Array.from(f.bytes.subarray(0, 3)))).toEqual([[1, 2, 3], [4, 5, 6]]);
    expect(events.filter((e) => e.kind === 'flags')).toEqual([]);
  });

  it('counts flags that share their zero (011111101111110) as separate flags with no frame between', () => {
    const { bits } = encodeLineBits([
      { kind: 'flags', count: 4, sharedZero: true },
      { kind: 'frame', bytes: new Uint8Array([9, 9]) },
    ]);
    expect(Array.from(bits.subarray(0, 15)).join('')).toBe('011111101111110');
    const { frames, events } = deframeBits(bits);
    expect(frames).toHaveLength(1);
    expect(frames[0].status).toBe('ok');
    expect(events.find((e) => e.kind === 'flags')?.count).toBe(5);
  });

  it('reports seven ones inside a frame as an abort and keeps the bits up to the last zero (ISO/IEC 13239:2002 abort, from memory)', () => {
    const { bits } = encodeLineBits([
      { kind: 'frame', bytes: new Uint8Array([0x10, 0x20, 0x30, 0x40]), faults: { abortAfterBits: 20 } },
      { kind: 'flags', count: 2 },
      { kind: 'frame', bytes: new Uint8Array([0x11, 0x22]) },
    ]);
    const { frames } = deframeBits(bits);
    expect(frames.map((f) => f.status)).toEqual(['abort', 'ok']);
    // 0x10 0x20 0x30 LSB first: bit 19 is the last 0 before the abort's ones (bits 20.. are 1s of the abort).
    expect(frames[0].bitLength).toBe(20);
    expect(Array.from(frames[0].bytes)).toEqual([0x10, 0x20]);
  });

  it('reports fifteen or more ones as an idle line event with its start and end', () => {
    const bits = bitsOf(FLAG + '1'.repeat(40) + FLAG);
    const { frames, events } = deframeBits(bits);
    expect(frames).toEqual([]);
    expect(events).toContainEqual({ link: 'L', channel: 'L', kind: 'idle', sample: 8, endSample: 47 });
  });

  it('does not treat a run of seven to fourteen ones as idle', () => {
    const { events } = deframeBits(bitsOf(FLAG + '1'.repeat(14) + FLAG));
    expect(events.filter((e) => e.kind === 'idle')).toEqual([]);
  });

  it("marks a frame whose bit count is not a multiple of 8 as 'residue'", () => {
    const { bits } = encodeLineBits([{ kind: 'frame', bytes: new Uint8Array([1, 2, 3]), faults: { residueBits: 3 } }]);
    const { frames } = deframeBits(bits);
    expect(frames).toHaveLength(1);
    expect(frames[0].status).toBe('residue');
    expect(frames[0].bitLength).toBe(5 * 8 + 3);
    expect(frames[0].bytes.length).toBe(5);
  });

  it("marks a frame of fewer than four octets (address, control, FCS) as 'short'", () => {
    const { bits } = encodeLineBits([{ kind: 'frame', bytes: new Uint8Array([0xff, 0x03, 0x01]), faults: { noFcs: true } }]);
    const { frames } = deframeBits(bits);
    expect(frames.map((f) => [f.status, f.bitLength])).toEqual([['short', 24]]);
  });

  it('ignores bits before the first flag and drops a partial flag at the end of the input', () => {
    const bits = bitsOf('1101001110' + FLAG + '00000000' + '01011010' + FLAG + '0111');
    const { frames } = deframeBits(bits, undefined, 2);
    expect(frames).toHaveLength(1);
    // LSB first: 01011010 on the line is 0x5A.
    expect(Array.from(frames[0].bytes)).toEqual([0x00, 0x5a]);
    expect(frames[0].status).toBe('ok');
  });

  it("reports a frame cut off by the end of the input as 'abort'", () => {
    const { bits } = encodeLineBits([{ kind: 'frame', bytes: new Uint8Array([1, 2, 3, 4, 5]), faults: { noClosingFlag: true } }]);
    const { frames } = deframeBits(bits);
    expect(frames.map((f) => f.status)).toEqual(['abort']);
  });

  it("closes a frame that grows past the longest allowed as 'abort' and hunts for the next flag", () => {
    const frames: RawFrame[] = [];
    const d = new Deframer('L', { frame: (f) => frames.push(f), event: () => {} }, { maxFrameOctets: 16 });
    const { bits } = encodeLineBits([
      { kind: 'frame', bytes: new Uint8Array(40).fill(0x55) },
      { kind: 'frame', bytes: new Uint8Array([1, 2, 3]) },
    ]);
    const samples = Float64Array.from(bits, (_, i) => i);
    d.push({ bits, samples, n: bits.length });
    d.finish();
    expect(frames.map((f) => [f.status, f.bytes.length])).toEqual([
      ['abort', 16],
      ['ok', 5],
    ]);
  });

  it('gives identical frames and events for every split of the input into chunks (property, seeded PRNG)', () => {
    const rng = seededRng(2024);
    for (let round = 0; round < 30; round++) {
      const items = [];
      for (let k = 0; k < 20; k++) {
        const r = rng();
        if (r < 0.2) items.push({ kind: 'flags' as const, count: 1 + Math.floor(rng() * 4), sharedZero: rng() < 0.3 });
        else if (r < 0.25) items.push({ kind: 'idle' as const, count: Math.floor(rng() * 30) });
        else
          items.push({
            kind: 'frame' as const,
            bytes: randomFrame(rng),
            sharedFlag: rng() < 0.3,
            faults: rng() < 0.1 ? { abortAfterBits: Math.floor(rng() * 40) } : rng() < 0.1 ? { residueBits: 1 + Math.floor(rng() * 7) } : {},
          });
      }
      const { bits } = encodeLineBits(items);
      const whole = deframeBits(bits);
      const sizes = Array.from({ length: 7 }, () => 1 + Math.floor(rng() * 50));
      const split = deframeBits(bits, sizes);
      const ones = deframeBits(bits, [1]);
      expect(split).toEqual(whole);
      expect(ones).toEqual(whole);
    }
  });
});

describe('Deframer.pendingFrom (the time-order watermark)', () => {
  const feed = () => {
    let at = 0;
    return (d: Deframer, line: string) => {
      const bits = bitsOf(line);
      const samples = Float64Array.from(bits, (_, i) => at + i);
      at += bits.length;
      d.push({ bits, samples, n: bits.length });
    };
  };

  it('holds back to the start of an open stretch of fill flags, whose line event is still to come, then moves on (ISO/IEC 13239:2002 flag 01111110, from memory)', () => {
    const events: unknown[] = [];
    const frames: RawFrame[] = [];
    const push = feed();
    const d = new Deframer('L', { frame: (f) => frames.push(f), event: (e) => events.push(e) });
    push(d, FLAG + FLAG + FLAG);
    expect(events).toEqual([]);
    // the 'flags' event will carry sample 0, so nothing later may be let out yet
    expect(d.pendingFrom()).toBe(0);
    // a frame inside the stretch's reach keeps it there
    push(d, '10101010' + '11001100' + '10101010' + '11001100');
    expect(d.pendingFrom()).toBe(0);
    // the closing flag ends the frame and the stretch: both go out, the mark moves to that flag
    push(d, FLAG);
    expect(events).toEqual([{ link: 'L', channel: 'L', kind: 'flags', sample: 0, endSample: 23, count: 3 }]);
    expect(frames.map((f) => [f.firstSample, f.lastSample])).toEqual([[24, 55]]);
    expect(d.pendingFrom()).toBe(56);
    d.finish();
  });

  it('holds back to the start of a run of ones that may still become an idle event, and past it once it is out', () => {
    const events: unknown[] = [];
    const push = feed();
    const d = new Deframer('L', { frame: () => {}, event: (e) => events.push(e) });
    push(d, '0' + '1'.repeat(20));
    expect(d.pendingFrom()).toBe(1);
    push(d, '0');
    expect(events).toEqual([{ link: 'L', channel: 'L', kind: 'idle', sample: 1, endSample: 20 }]);
    // half a sample past the last bit seen: everything up to it is out
    expect(d.pendingFrom()).toBe(21.5);
  });
});

// Edges of the deframer's rules (the comment at the top of shared/decoder/deframe.ts states them;
// flag, abort and zero insertion are ISO/IEC 13239:2002, from memory; where a cut-off frame ends and
// the idle threshold of fifteen 1s are common practice). Each runs bit-at-a-time and byte-at-a-time.
describe('Deframer rule edges', () => {
  const both = (bits: Uint8Array, options: { maxFrameOctets?: number } = {}) => {
    const out = [false, true].map((bitwise) => {
      const frames: RawFrame[] = [];
      const events: unknown[] = [];
      const d = new Deframer('L', { frame: (f) => frames.push(f), event: (e) => events.push(e) }, { ...options, bitwise });
      d.push({ bits, samples: Float64Array.from(bits, (_, i) => i), n: bits.length });
      d.finish();
      return { frames, events };
    });
    expect(out[0]).toEqual(out[1]);
    return out[0];
  };
  const idle = (sample: number, endSample: number) => ({ link: 'L', channel: 'L', kind: 'idle', sample, endSample });

  it('takes a run of exactly fifteen ones as idle and fourteen as not, inside the input and at its end', () => {
    expect(both(bitsOf(FLAG + '1'.repeat(15) + FLAG)).events).toEqual([idle(8, 22)]);
    expect(both(bitsOf(FLAG + '1'.repeat(14) + FLAG)).events).toEqual([]);
    expect(both(bitsOf(FLAG + '1'.repeat(15))).events).toEqual([idle(8, 22)]);
    expect(both(bitsOf(FLAG + '1'.repeat(14))).events).toEqual([]);
  });

  it('keeps the bits of a frame cut off by the end of the input up to its last zero, when they make an octet', () => {
    // ends in a 0: every bit is kept, the frame ends at its last bit
    expect(both(bitsOf(FLAG + '10101010' + '11001100')).frames).toEqual([
      { link: 'L', seq: 0, firstSample: 8, lastSample: 23, bytes: new Uint8Array([0x55, 0x33]), bitLength: 16, stuffed: [], status: 'abort' },
    ]);
    // six 1s after the last 0 (a flag's start, or an abort): the frame ends at that 0
    expect(both(bitsOf(FLAG + '10101010' + '111111')).frames).toEqual([
      { link: 'L', seq: 0, firstSample: 8, lastSample: 15, bytes: new Uint8Array([0x55]), bitLength: 8, stuffed: [], status: 'abort' },
    ]);
    expect(both(bitsOf(FLAG + '10101010' + '111')).frames.map((f) => [f.bitLength, f.lastSample])).toEqual([[8, 15]]);
    // seven bits are no octet: the start of a flag, dropped
    expect(both(bitsOf(FLAG + '0101010')).frames).toEqual([]);
  });

  it('ends an aborted frame at the zero before the seven ones and finds the next frame after them', () => {
    const { frames } = both(bitsOf(FLAG + '10101010' + '1111111' + '0' + FLAG + '10000000'.repeat(4) + FLAG));
    expect(frames.map((f) => [f.seq, f.status, f.firstSample, f.lastSample, f.bitLength, Array.from(f.bytes)])).toEqual([
      [0, 'abort', 8, 15, 8, [0x55]],
      [1, 'ok', 32, 63, 32, [1, 1, 1, 1]],
    ]);
  });

  it('closes a frame growing past the longest allowed at the bit that would start the octet too many', () => {
    const { frames } = both(bitsOf(FLAG + '10101010'.repeat(5) + FLAG + '10000000'.repeat(2) + FLAG), { maxFrameOctets: 2 });
    expect(frames.map((f) => [f.status, f.firstSample, f.lastSample, Array.from(f.bytes)])).toEqual([
      ['abort', 8, 30, [0x55, 0x55]],
      ['short', 56, 71, [1, 1]],
    ]);
  });

  it('records every stuffed zero of a frame with more than sixty-four of them', () => {
    const { bits, frames: sent } = encodeLineBits([{ kind: 'frame', bytes: new Uint8Array(60).fill(0xff), faults: { noFcs: true } }]);
    expect(sent[0].stuffedPositions).toHaveLength(96); // 480 ones, a 0 after every five
    const { frames } = both(bits);
    expect(frames).toHaveLength(1);
    expect(frames[0].stuffed).toEqual(sent[0].stuffedPositions);
    expect(Array.from(frames[0].bytes)).toEqual(new Array(60).fill(0xff));
  });

  it('takes nothing for a flag before the first zero of the input: a flag has a zero on each side', () => {
    // the input starts with six 1s and a 0 (no zero before them): no flag there, so no frame before the real one
    const { frames } = both(bitsOf('1111110' + '10000000'.repeat(4) + FLAG + '01000000'.repeat(4) + FLAG));
    expect(frames.map((f) => [f.status, f.firstSample, Array.from(f.bytes)])).toEqual([['ok', 47, [2, 2, 2, 2]]]);
  });

  it('reports a stretch of exactly two flags between frames', () => {
    const { events } = both(bitsOf(FLAG + '10000000'.repeat(4) + FLAG + FLAG + '10000000'.repeat(4) + FLAG));
    expect(events).toEqual([{ link: 'L', channel: 'L', kind: 'flags', sample: 40, endSample: 55, count: 2 }]);
  });

  it('ignores line bits after an abort until the next flag, however many', () => {
    // after the abort the line carries 0110 for 800 bits: no 6 ones, no flag, so nothing is a frame,
    // not even past the longest frame allowed (16 octets)
    const line = FLAG + '10101010' + '1111111' + '0110'.repeat(200) + FLAG + '10000000'.repeat(4) + FLAG;
    const { frames } = both(bitsOf(line), { maxFrameOctets: 16 });
    expect(frames.map((f) => [f.seq, f.status, Array.from(f.bytes)])).toEqual([
      [0, 'abort', [0x55]],
      [1, 'ok', [1, 1, 1, 1]],
    ]);
  });

  it('keeps a frame longer than its first buffer (256 octets) whole, in any chunking', () => {
    const rng = seededRng(256);
    const bytes = Uint8Array.from({ length: 700 }, () => Math.floor(rng() * 256));
    // the first octet past the buffer (octet 256) ends in a 1 in one frame and in a 0 in the other
    bytes[256] |= 0x80;
    bytes[356] &= 0x7f;
    const { bits, frames: sent } = encodeLineBits([{ kind: 'frame', bytes }, { kind: 'frame', bytes: bytes.subarray(100, 400), sharedFlag: true }]);
    for (const sizes of [[bits.length], [1], [7, 64, 3], [8]]) {
      for (const bitwise of [false, true]) {
        const frames: RawFrame[] = [];
        const d = new Deframer('L', { frame: (f) => frames.push(f), event: () => {} }, { bitwise });
        pushInChunks(d, bits, sizes);
        d.finish();
        expect(frames.map((f) => [f.status, f.bitLength, f.firstSample, f.lastSample])).toEqual(sent.map((s) => ['ok', s.wire.length * 8, s.startBit, s.lastBit]));
        expect(frames.map((f) => Array.from(f.bytes))).toEqual(sent.map((s) => Array.from(s.wire)));
        expect(frames.map((f) => f.stuffed)).toEqual(sent.map((s) => s.stuffedPositions));
      }
    }
  });
});

// Where one chunk of line bits ends and the next begins must not change what is found; these
// chunk ends fall right after a line byte the deframer takes whole (ISO/IEC 13239:2002 zero
// insertion and flag, from memory).
describe('Deframer chunk ends after a whole line byte', () => {
  const run = (line: string, sizes: number[], bitwise: boolean) => {
    const frames: RawFrame[] = [];
    const events: unknown[] = [];
    const d = new Deframer('L', { frame: (f) => frames.push(f), event: (e) => events.push(e) }, { bitwise });
    const bits = bitsOf(line);
    pushInChunks(d, bits, sizes);
    d.finish();
    return { frames, events, bitsSeen: d.bitsSeen };
  };
  const all = (line: string, cut: number) => {
    const ref = run(line, [line.length], true);
    for (const bitwise of [false, true]) for (const sizes of [[line.length], [cut, line.length]]) expect(run(line, sizes, bitwise)).toEqual(ref);
    expect(ref.bitsSeen).toBe(line.length);
    return ref;
  };

  it('starts an idle run at its first one when the run begins inside the byte before the chunk end', () => {
    // a frame byte ending in three 1s, the chunk ends, then 17 more 1s: an abort, then idle from bit 13
    const { frames, events } = all(FLAG + '00000111' + '1'.repeat(17) + '0' + FLAG, 16);
    expect(events).toContainEqual({ link: 'L', channel: 'L', kind: 'idle', sample: 13, endSample: 32 });
    // the aborted frame keeps its five bits up to the last 0
    expect(frames.map((f) => [f.status, f.lastSample, f.bitLength])).toEqual([['abort', 12, 5]]);
  });

  it('drops a stuffed zero that also opens the closing flag when the chunk ends right after it', () => {
    // 11 | 0 (after five 1s: stuffed) 11111 | 1 0: six 1s after that zero make it the closing flag's first 0
    const line = FLAG + '00000111' + '11011111' + '10' + '10000000'.repeat(4) + FLAG;
    const { frames } = all(line, 24);
    expect(frames.map((f) => [f.status, f.firstSample, f.lastSample, f.bitLength, f.stuffed])).toEqual([
      ['short', 8, 17, 10, []],
      ['ok', 26, 57, 32, []],
    ]);
  });

  it('ends a frame at its last data bit when two zeros are stuffed in the line byte before the closing flag', () => {
    // data 000 11111 11111 is sent 000 11111 0 11111 0, then the flag: the line byte from bit 16 is
    // 0 11111 0 0 (both zeros it stuffs and the flag's first 0)
    const line = FLAG + '00011111' + '0111110' + FLAG + '10000000'.repeat(4) + FLAG;
    const { frames } = all(line, 16);
    expect(frames.map((f) => [f.status, f.lastSample, f.bitLength, f.stuffed])).toEqual([
      ['short', 21, 13, [8, 14]],
      ['ok', 62, 32, []],
    ]);
  });
});

describe('Deframer.pendingFrom before any bit and after the end', () => {
  it('holds back everything before the first bit and nothing after finish', () => {
    const d = new Deframer('L', { frame: () => {}, event: () => {} });
    expect(d.pendingFrom()).toBe(-0.5);
    const bits = bitsOf(FLAG + '10101010' + '111');
    d.push({ bits, samples: Float64Array.from(bits, (_, i) => 100 + i), n: bits.length });
    expect(d.pendingFrom()).toBe(100);
    d.finish();
    expect(d.pendingFrom()).toBe(100 + bits.length - 1 + 0.5);
  });
});

// The deframer's own options (shared/decoder/deframe.ts, DeframerOptions); the line patterns are
// ISO/IEC 13239:2002 flag 01111110 and idle of fifteen or more 1s (from memory; the idle threshold
// is common practice). Each runs bit-at-a-time and byte-at-a-time.
describe('Deframer options', () => {
  const run = (bits: Uint8Array, options: DeframerOptions) =>
    [false, true].map((bitwise) => {
      const frames: RawFrame[] = [];
      const events: LineEvent[] = [];
      const d = new Deframer('L', { frame: (f) => frames.push(f), event: (e) => events.push(e) }, { ...options, bitwise });
      d.push({ bits, samples: Float64Array.from(bits, (_, i) => i), n: bits.length });
      d.finish();
      return { frames, events };
    });

  it('closes a frame at the longest allowed also when that limit is no doubling of the first buffer (300 octets)', () => {
    // 400 octets of 0x55 (line 10101010, nothing stuffed), then a frame of four octets
    const line = FLAG + '10101010'.repeat(400) + FLAG + '10000000'.repeat(4) + FLAG;
    for (const { frames } of run(bitsOf(line), { maxFrameOctets: 300 })) {
      // closed at the bit before the one completing octet 301, as with a limit inside the first buffer
      expect(frames.map((f) => [f.status, f.firstSample, f.lastSample, f.bytes.length])).toEqual([
        ['abort', 8, 8 + 300 * 8 + 6, 300],
        ['ok', 8 + 400 * 8 + 8, 8 + 400 * 8 + 8 + 31, 4],
      ]);
      expect(Array.from(frames[0].bytes)).toEqual(new Array(300).fill(0x55));
    }
  });

  it('makes no line event at all with events: false, idle and fill flags included, and the same frames', () => {
    const line = FLAG + FLAG + FLAG + '10000000'.repeat(4) + FLAG + '1'.repeat(20) + '0' + FLAG + '10000000'.repeat(4) + FLAG + '1'.repeat(16);
    const on = run(bitsOf(line), {});
    const off = run(bitsOf(line), { events: false });
    for (const r of on) expect(r.events.map((e) => e.kind)).toEqual(['flags', 'idle', 'idle']);
    for (let k = 0; k < 2; k++) {
      expect(off[k].events).toEqual([]);
      expect(off[k].frames).toEqual(on[k].frames);
      expect(off[k].frames).toHaveLength(2);
    }
  });

  it('gives each frame its own buffer unless asked to share blocks', () => {
    const line = FLAG + '10000000'.repeat(4) + FLAG + '01000000'.repeat(5) + FLAG;
    for (const { frames } of run(bitsOf(line), {})) {
      expect(frames.map((f) => Array.from(f.bytes))).toEqual([
        [1, 1, 1, 1],
        [2, 2, 2, 2, 2],
      ]);
      for (const f of frames) expect([f.bytes.byteOffset, f.bytes.buffer.byteLength]).toEqual([0, f.bytes.length]);
    }
    for (const { frames } of run(bitsOf(line), { sharedBytes: true })) expect(frames[1].bytes.buffer).toBe(frames[0].bytes.buffer);
  });
});
