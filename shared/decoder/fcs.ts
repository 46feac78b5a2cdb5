// Frame check sequences as HDLC/SDLC send them (ISO/IEC 13239; RFC 1662 appendix C).
//
// FCS-16 is the catalogue's CRC-16/IBM-SDLC (alias X-25): reflected polynomial 0x1021,
// register preset to all ones, result complemented. The FCS goes on the wire low-order
// octet first, so running the same register over data + FCS leaves the fixed residue 0xF0B8.
//
// The calculator entry points of the `crc` package are used (not its main entry) because the
// main entry wraps input in Node's Buffer, which the browser build does not have.
import crc16kermitCalc from 'crc/calculators/crc16kermit';
import crc32Calc from 'crc/calculators/crc32';

/** Register value after data + its own FCS for a good FCS-16 frame (RFC 1662 appendix C). */
export const FCS16_GOOD_RESIDUE = 0xf0b8;
/** Register value after data + its own FCS for a good FCS-32 frame (RFC 1662 appendix C). */
export const FCS32_GOOD_RESIDUE = 0xdebb20e3;

/** The reflected form of x^16 + x^12 + x^5 + 1. */
const POLY16_REFLECTED = 0x8408;

/**
 * CRC-16/IBM-SDLC through the `crc` package. Its KERMIT calculator is the same reflected
 * 0x1021 register with preset 0 and no final XOR, and it returns the register unswapped
 * (its KERMIT check is 0x2189), so preset 0xFFFF plus a final complement gives IBM-SDLC.
 */
export function fcs16Package(data: Uint8Array): number {
  return (crc16kermitCalc(data, 0xffff) ^ 0xffff) & 0xffff;
}

/** CRC-32/ISO-HDLC (the 32-bit HDLC FCS) through the `crc` package. */
export function fcs32Package(data: Uint8Array): number {
  return crc32Calc(data) >>> 0;
}

// The hot path runs over a range of a reused buffer; the package's call needs a whole array per
// frame (a subarray allocation each time), so we keep an identical table here, tested equal to it.
const TABLE16 = new Uint16Array(256);
for (let i = 0; i < 256; i++) {
  let r = i;
  for (let k = 0; k < 8; k++) r = r & 1 ? (r >>> 1) ^ POLY16_REFLECTED : r >>> 1;
  TABLE16[i] = r;
}

/** Runs the FCS-16 register (no preset, no complement) over bytes[start, end). */
export function fcs16Register(reg: number, bytes: Uint8Array, start = 0, end = bytes.length): number {
  let r = reg & 0xffff;
  for (let i = start; i < end; i++) r = (r >>> 8) ^ TABLE16[(r ^ bytes[i]) & 0xff];
  return r;
}

/** FCS-16 of bytes[start, end): the value a transmitter appends (low-order octet first). */
export function fcs16(bytes: Uint8Array, start = 0, end = bytes.length): number {
  return fcs16Register(0xffff, bytes, start, end) ^ 0xffff;
}

/** True when bytes[start, end) is data followed by its correct FCS-16. */
export function fcs16Good(bytes: Uint8Array, start = 0, end = bytes.length): boolean {
  return fcs16Register(0xffff, bytes, start, end) === FCS16_GOOD_RESIDUE;
}

/** FCS-32 of bytes[start, end). */
export function fcs32(bytes: Uint8Array, start = 0, end = bytes.length): number {
  return fcs32Package(start === 0 && end === bytes.length ? bytes : bytes.subarray(start, end));
}

// ---- Single-bit error location by CRC syndrome -------------------------------------------------
//
// The register is affine in the message bits, so for received = sent XOR e the register after
// data + FCS is GOOD_RESIDUE XOR L(e), where L is the register run from zero over e. For one
// flipped bit at index i of an n-bit frame, L(e) = step^(n-1-i)(POLY): a 1 entering the register
// and n-1-i zero bits after it. x^16+x^12+x^5+1 = (x+1)·(primitive degree-15 polynomial), so the
// sequence step^k(POLY) has period 32 767 and every k below that gives a distinct syndrome.

const PERIOD16 = 32767;
let syndromeToDistance: Int16Array | null = null;

/** Built once on first use: syndrome → k (distance from the last bit), -1 when not reachable. */
function distanceTable(): Int16Array {
  if (syndromeToDistance) return syndromeToDistance;
  const t = new Int16Array(65536).fill(-1);
  let s = POLY16_REFLECTED;
  for (let k = 0; k < PERIOD16; k++) {
    t[s] = k;
    s = s & 1 ? (s >>> 1) ^ POLY16_REFLECTED : s >>> 1;
  }
  syndromeToDistance = t;
  return t;
}

/**
 * For a frame (data + FCS-16, as received) whose FCS is bad: the index of the one bit, in
 * transmission order from the first address bit (FCS bits included, LSB of each octet first),
 * whose flip makes the FCS good; null when no single bit explains it.
 */
export function locateSingleBitError16(bytes: Uint8Array, start = 0, end = bytes.length): number | null {
  const n = (end - start) * 8;
  if (n <= 0 || n >= PERIOD16) return null;
  const syndrome = fcs16Register(0xffff, bytes, start, end) ^ FCS16_GOOD_RESIDUE;
  if (syndrome === 0) return null;
  const k = distanceTable()[syndrome];
  if (k < 0 || k >= n) return null;
  return n - 1 - k;
}

/** Same for FCS-32 (reflected 0x04C11DB7); walks the syndrome sequence once, O(n). */
export function locateSingleBitError32(bytes: Uint8Array, start = 0, end = bytes.length): number | null {
  const n = (end - start) * 8;
  if (n <= 0) return null;
  const poly = 0xedb88320;
  // Register without preset/complement: recover it from the package value of the whole range.
  const reg = (~fcs32(bytes, start, end)) >>> 0;
  const syndrome = (reg ^ FCS32_GOOD_RESIDUE) >>> 0;
  if (syndrome === 0) return null;
  let s = poly;
  for (let k = 0; k < n; k++) {
    if (s === syndrome) return n - 1 - k;
    s = s & 1 ? ((s >>> 1) ^ poly) >>> 0 : s >>> 1;
  }
  return null;
}
