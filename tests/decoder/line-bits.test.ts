import { describe, expect, it } from 'vitest';
import { checkFrame, fcs16 } from '../../shared/decoder';
import { encodeLineBits, packLineBits, randomFrame, seededRng, type LineItem } from '../../shared/decoder/encode';
import { deframeBits } from './deframe-helpers';

describe('encodeLineBits', () => {
  it('stuffs the textbook example (Tanenbaum, Computer Networks, 5th edition, section 3.1.2, Fig. 3-5, from memory)', () => {
    // Data 011011111111111111110010 → 011011111011111011111010010; build the octets LSB first from those bits.
    const data = '011011111111111111110010';
    const bytes = new Uint8Array(3);
    for (let i = 0; i < 24; i++) if (data[i] === '1') bytes[i >> 3] |= 1 << (i & 7);
    const { bits, frames } = encodeLineBits([{ kind: 'frame', bytes, faults: { noFcs: true } }]);
    const body = Array.from(bits.subarray(frames[0].startBit, frames[0].endBit)).join('');
    expect(body).toBe('011011111011111011111010010');
    expect(frames[0].stuffedPositions).toEqual([9, 15, 21]);
    expect(Array.from(bits.subarray(0, 8)).join('')).toBe('01111110');
  });

  it('appends the FCS low-order octet first (RFC 1662 appendix C)', () => {
    const bytes = new TextEncoder().encode('123456789');
    const { frames } = encodeLineBits([{ kind: 'frame', bytes }]);
    expect(Array.from(frames[0].wire.subarray(9))).toEqual([0x6e, 0x90]);
    expect(fcs16(bytes)).toBe(0x906e);
  });

  it('never puts six ones in a row between the flags (ISO/IEC 13239:2002 zero-bit insertion, from memory)', () => {
    const rng = seededRng(11);
    for (let t = 0; t < 200; t++) {
      const { bits, frames } = encodeLineBits([{ kind: 'frame', bytes: randomFrame(rng) }]);
      const body = Array.from(bits.subarray(frames[0].startBit, frames[0].endBit)).join('');
      expect(body).not.toContain('111111');
    }
  });

  it('packs line bits into octets LSB first', () => {
    expect(Array.from(packLineBits(Uint8Array.from([0, 1, 1, 1, 1, 1, 1, 0, 1])))).toEqual([0x7e, 0x01]);
  });
});

describe('encoder → deframer → FCS check (property tests, seeded PRNG)', () => {
  it('gives back every random frame with status ok, in order, for any chunk split', () => {
    const rng = seededRng(4242);
    for (let round = 0; round < 20; round++) {
      const sent: Uint8Array[] = [];
      const items: LineItem[] = [];
      for (let k = 0; k < 25; k++) {
        const bytes = randomFrame(rng, 100);
        sent.push(bytes);
        items.push({ kind: 'frame', bytes, sharedFlag: rng() < 0.5 });
        if (rng() < 0.3) items.push({ kind: 'flags', count: 1 + Math.floor(rng() * 3), sharedZero: rng() < 0.5 });
        if (rng() < 0.1) items.push({ kind: 'idle', count: 15 + Math.floor(rng() * 20) });
      }
      const { bits, frames: enc } = encodeLineBits(items);
      const sizes = Array.from({ length: 5 }, () => 1 + Math.floor(rng() * 333));
      const { frames } = deframeBits(bits, sizes);
      const checked = frames.map((f) => checkFrame(f));
      expect(checked.map((f) => f.status)).toEqual(sent.map(() => 'ok'));
      checked.forEach((f, i) => {
        expect(Array.from(f.bytes.subarray(0, f.bytes.length - 2))).toEqual(Array.from(sent[i]));
        expect(f.firstSample).toBe(enc[i].startBit);
        expect(f.lastSample).toBe(enc[i].lastBit);
        expect(f.stuffed).toEqual(enc[i].stuffedPositions);
        expect(f.fcsReceived).toBe(f.fcsComputed);
      });
    }
  });

  it('reports an injected single-bit error as bad-fcs and locates the flipped bit', () => {
    const rng = seededRng(777);
    let checkedCount = 0;
    for (let t = 0; t < 300; t++) {
      const bytes = randomFrame(rng, 80);
      const bit = Math.floor(rng() * (bytes.length + 2) * 8);
      const { bits } = encodeLineBits([{ kind: 'frame', bytes, faults: { flipBits: [bit] } }]);
      const { frames } = deframeBits(bits);
      // A flip can create or destroy a flag or abort pattern on the line; those frames are not FCS cases.
      if (frames.length !== 1 || frames[0].status !== 'ok') continue;
      const f = checkFrame(frames[0]);
      expect(f.status).toBe('bad-fcs');
      expect(f.flippedBit).toBe(bit);
      expect(f.fcsReceived).not.toBe(f.fcsComputed);
      checkedCount++;
    }
    expect(checkedCount).toBeGreaterThan(250);
  });

  it('classifies each kind of damage: abort, short, residue, bad FCS', () => {
    const body = new Uint8Array([0x21, 0x10, 0xde, 0xad, 0xbe, 0xef]);
    const { bits } = encodeLineBits([
      { kind: 'frame', bytes: body },
      { kind: 'frame', bytes: body, faults: { abortAfterBits: 30 } },
      { kind: 'frame', bytes: new Uint8Array([0x21]) },
      { kind: 'frame', bytes: body, faults: { residueBits: 5 } },
      { kind: 'frame', bytes: body, faults: { wrongFcs: true } },
      { kind: 'frame', bytes: body, faults: { flipBits: [3, 40] } },
    ]);
    const { frames } = deframeBits(bits);
    const checked = frames.map((f) => checkFrame(f));
    expect(checked.map((f) => f.status)).toEqual(['ok', 'abort', 'short', 'residue', 'bad-fcs', 'bad-fcs']);
    expect(checked[4].fcsReceived).toBe(checked[4].fcsComputed! ^ 0xffff);
    expect(checked[0].decode).toMatchObject({ address: 0x21, kind: 'I', infoLength: 4 });
  });
});
