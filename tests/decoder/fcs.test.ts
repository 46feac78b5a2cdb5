import { describe, expect, it } from 'vitest';
import { fcs16, fcs16Good, fcs16Package, fcs16Register, fcs32, locateSingleBitError16, locateSingleBitError32 } from '../../shared/decoder';
import { seededRng } from '../../shared/decoder/encode';

const ascii = (s: string) => new TextEncoder().encode(s);

/** Bit-at-a-time CRC written from the definition (ISO/IEC 13239:2002 FCS: x^16+x^12+x^5+1, LSB first, preset ones, complemented, from memory). */
function referenceFcs16(data: Uint8Array): number {
  let reg = 0xffff;
  for (const byte of data) {
    for (let k = 0; k < 8; k++) {
      const bit = (byte >> k) & 1;
      const fb = (reg ^ bit) & 1;
      reg >>>= 1;
      if (fb) reg ^= 0x8408;
    }
  }
  return reg ^ 0xffff;
}

/** The same register without the final complement: what a receiver runs over data + FCS. */
function referenceRegister(data: Uint8Array): number {
  return referenceFcs16(data) ^ 0xffff;
}

function withFcs(data: Uint8Array): Uint8Array {
  const f = fcs16(data);
  const out = new Uint8Array(data.length + 2);
  out.set(data);
  out[data.length] = f & 0xff;
  out[data.length + 1] = f >> 8;
  return out;
}

function randomBytes(rng: () => number, n: number): Uint8Array {
  const b = new Uint8Array(n);
  for (let i = 0; i < n; i++) b[i] = Math.floor(rng() * 256);
  return b;
}

describe('FCS-16', () => {
  it('gives the CRC catalogue (RevEng) check value of CRC-16/IBM-SDLC for "123456789": 0x906E', () => {
    expect(fcs16Package(ascii('123456789'))).toBe(0x906e);
    expect(fcs16(ascii('123456789'))).toBe(0x906e);
  });

  it('leaves the CRC catalogue residue 0xF0B8 after data plus FCS (RFC 1662 appendix C: good FCS 0xF0B8)', () => {
    expect(fcs16Register(0xffff, withFcs(ascii('123456789')))).toBe(0xf0b8);
    // the register written from the definition ends at the same residue, and fcs16Good agrees
    // with it on good frames and on frames with one octet changed
    const rng = seededRng(1994);
    for (let t = 0; t < 200; t++) {
      const frame = withFcs(randomBytes(rng, 1 + Math.floor(rng() * 40)));
      expect(referenceRegister(frame)).toBe(0xf0b8);
      expect(fcs16Good(frame)).toBe(true);
      const bad = frame.slice();
      bad[Math.floor(rng() * bad.length)] ^= 1 + Math.floor(rng() * 255);
      expect(fcs16Good(bad)).toBe(referenceRegister(bad) === 0xf0b8);
      expect(fcs16Good(bad)).toBe(false);
    }
    // RFC 1662 §C.2 sends the complement low-order octet first: 123456789 then 0x6E 0x90.
    expect(fcs16Good(new Uint8Array([...ascii('123456789'), 0x6e, 0x90]))).toBe(true);
  });

  it('matches an independent bitwise implementation from the standard definition on random data', () => {
    const rng = seededRng(1662);
    for (let t = 0; t < 300; t++) {
      const data = randomBytes(rng, Math.floor(rng() * 200));
      expect(fcs16(data)).toBe(referenceFcs16(data));
    }
  });

  it('keeps its table-driven hot path equal to the crc package on random data', () => {
    const rng = seededRng(7);
    for (let t = 0; t < 300; t++) {
      const data = randomBytes(rng, 1 + Math.floor(rng() * 300));
      expect(fcs16(data)).toBe(fcs16Package(data));
    }
  });

  it('computes over a range of a larger buffer without copying', () => {
    const data = ascii('xx123456789yy');
    expect(fcs16(data, 2, 11)).toBe(0x906e);
  });

  it('locates every single flipped bit, FCS bits included, by the CRC syndrome', () => {
    const rng = seededRng(99);
    for (let t = 0; t < 40; t++) {
      const frame = withFcs(randomBytes(rng, 2 + Math.floor(rng() * 60)));
      for (let bit = 0; bit < frame.length * 8; bit++) {
        const bad = frame.slice();
        bad[bit >> 3] ^= 1 << (bit & 7);
        expect(fcs16Good(bad)).toBe(false);
        expect(locateSingleBitError16(bad)).toBe(bit);
      }
    }
  });

  it('locates a single flip in a frame close to the 32 767-bit limit', () => {
    const frame = withFcs(randomBytes(seededRng(3), 4000));
    for (const bit of [0, 1, 12345, frame.length * 8 - 1]) {
      const bad = frame.slice();
      bad[bit >> 3] ^= 1 << (bit & 7);
      expect(locateSingleBitError16(bad)).toBe(bit);
    }
  });

  it('returns null for a good frame and for damage no single flip explains', () => {
    const frame = withFcs(ascii('hello, station'));
    expect(locateSingleBitError16(frame)).toBeNull();
    // Two flips: the syndrome points at a bit only by accident; check the located flip really fixes it when reported.
    const rng = seededRng(5);
    let unexplained = 0;
    for (let t = 0; t < 200; t++) {
      const bad = frame.slice();
      const a = Math.floor(rng() * bad.length * 8);
      let b = Math.floor(rng() * bad.length * 8);
      if (b === a) b = (a + 1) % (bad.length * 8);
      bad[a >> 3] ^= 1 << (a & 7);
      bad[b >> 3] ^= 1 << (b & 7);
      const at = locateSingleBitError16(bad);
      if (at === null) unexplained++;
      else {
        bad[at >> 3] ^= 1 << (at & 7);
        expect(fcs16Good(bad)).toBe(true);
      }
    }
    // x^16+x^12+x^5+1 = (x+1)·p(x): a single flip leaves a syndrome of odd weight, two flips one
    // of even weight, so no two-flip damage ever points at a bit (textbook CRC property, from memory)
    expect(unexplained).toBe(200);
  });

  it('locates a flip inside a range of a larger buffer, counting from the range’s first bit', () => {
    const frame = withFcs(ascii('station 21 calls'));
    const buffer = new Uint8Array(frame.length + 7);
    buffer.set(frame, 5);
    buffer[5 + 3] ^= 0x10;
    expect(locateSingleBitError16(buffer, 5, 5 + frame.length)).toBe(3 * 8 + 4);
  });

  it('gives up on an empty range and at the 32 767-bit period of the syndrome', () => {
    expect(locateSingleBitError16(new Uint8Array(4), 2, 2)).toBeNull();
    // 4095 octets = 32 760 bits still locate; 4096 octets = 32 768 bits do not (syndromes repeat)
    for (const [octets, want] of [[4093, 8], [4094, null]] as const) {
      const bad = withFcs(randomBytes(seededRng(octets), octets));
      bad[1] ^= 1;
      expect(locateSingleBitError16(bad)).toBe(want);
    }
  });

  it('names no bit when the syndrome points one bit before the frame', () => {
    const frame = withFcs(randomBytes(seededRng(31), 20));
    const n = frame.length * 8;
    const flips = flipsWithSyndrome(n, stepSyndrome(0x8408, 16, n), (k) => stepSyndrome(0x8408, 16, k));
    const bad = frame.slice();
    for (const i of flips) bad[i >> 3] ^= 1 << (i & 7);
    expect(fcs16Register(0xffff, bad) ^ 0xf0b8).toBe(stepSyndrome(0x8408, 16, n));
    expect(locateSingleBitError16(bad)).toBeNull();
  });
});

/** The register after a single 1 followed by k zeros, run from zero (reflected poly): the syndrome of a flip k bits before the end. */
function stepSyndrome(poly: number, width: number, k: number): number {
  let s = poly;
  for (let j = 0; j < k; j++) s = s & 1 ? (s >>> 1) ^ poly : s >>> 1;
  return width === 32 ? s >>> 0 : s;
}

/** Bit positions of an n-bit frame whose flips together give `target` as syndrome (GF(2) elimination). */
function flipsWithSyndrome(n: number, target: number, syndromeAt: (k: number) => number): number[] {
  const basis = new Map<number, { v: number; bits: number[] }>(); // by highest set bit
  const reduce = (v: number, bits: number[]) => {
    for (let b = basis.get(highBit(v)); v !== 0 && b; b = basis.get(highBit(v))) {
      v = (v ^ b.v) >>> 0;
      bits = xorSets(bits, b.bits);
    }
    return { v, bits };
  };
  for (let k = 0; k < Math.min(n, 96); k++) {
    const r = reduce(syndromeAt(k) >>> 0, [n - 1 - k]);
    if (r.v !== 0) basis.set(highBit(r.v), r);
  }
  const r = reduce(target >>> 0, []);
  if (r.v !== 0) throw new Error('target not reachable from the last 96 bits');
  return r.bits;
}
const highBit = (v: number) => 31 - Math.clz32(v);
const xorSets = (a: number[], b: number[]) => [...a.filter((x) => !b.includes(x)), ...b.filter((x) => !a.includes(x))];

describe('FCS-32', () => {
  it('gives the CRC catalogue check value of CRC-32/ISO-HDLC for "123456789": 0xCBF43926', () => {
    expect(fcs32(ascii('123456789'))).toBe(0xcbf43926);
  });

  it('computes over a range of a larger buffer: from its start, to its end, or inside it', () => {
    expect(fcs32(ascii('123456789xy'), 0, 9)).toBe(0xcbf43926);
    expect(fcs32(ascii('ab123456789'), 2)).toBe(0xcbf43926);
    expect(fcs32(ascii('ab123456789xy'), 2, 11)).toBe(0xcbf43926);
  });

  it('locates a single flipped bit', () => {
    const data = ascii('a longer information field');
    const f = fcs32(data);
    const frame = new Uint8Array([...data, f & 0xff, (f >>> 8) & 0xff, (f >>> 16) & 0xff, f >>> 24]);
    for (const bit of [0, 7, 100, frame.length * 8 - 1]) {
      const bad = frame.slice();
      bad[bit >> 3] ^= 1 << (bit & 7);
      expect(locateSingleBitError32(bad)).toBe(bit);
    }
    expect(locateSingleBitError32(frame)).toBeNull();
  });

  it('locates a flip inside a range of a larger buffer, and names no bit when the syndrome points before the frame', () => {
    const data = ascii('a longer information field');
    const f = fcs32(data);
    const frame = new Uint8Array([...data, f & 0xff, (f >>> 8) & 0xff, (f >>> 16) & 0xff, f >>> 24]);
    const buffer = new Uint8Array(frame.length + 9);
    buffer.set(frame, 6);
    expect(fcs32(buffer, 6, 6 + data.length)).toBe(f);
    buffer[6 + 2] ^= 0x04;
    expect(locateSingleBitError32(buffer, 6, 6 + frame.length)).toBe(2 * 8 + 2);
    expect(locateSingleBitError32(buffer, 6, 6)).toBeNull();
    const n = frame.length * 8;
    const target = stepSyndrome(0xedb88320, 32, n);
    const bad = frame.slice();
    for (const i of flipsWithSyndrome(n, target, (k) => stepSyndrome(0xedb88320, 32, k))) bad[i >> 3] ^= 1 << (i & 7);
    expect(locateSingleBitError32(bad)).toBeNull();
  });
});
