// Shapes the hints look for in a single frame: a CP/M 8.3 file name, a printable tail.

/**
 * Characters of a CP/M file name once the high (attribute) bit is masked: upper-case letters,
 * digits and the punctuation the CCP accepts in names, '?' as a search wildcard (CP/M 2.2 user's
 * guide, file references — from memory); lower case is not made by the CCP.
 */
const NAME_CHAR = new Uint8Array(128);
for (const c of 'ABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789$#@!%&\'()-_{}~`^?') NAME_CHAR[c.charCodeAt(0)] = 1;

/**
 * True when info[at, at+11) is shaped like an 8.3 name: 1–8 name characters then spaces to 8,
 * 0–3 type characters then spaces to 11, high bits ignored (attributes).
 */
export function cpmNameAt(info: Uint8Array, at: number): boolean {
  if (at + 11 > info.length) return false;
  let i = 0;
  while (i < 8 && NAME_CHAR[info[at + i] & 0x7f]) i++;
  if (i === 0) return false;
  for (; i < 8; i++) if ((info[at + i] & 0x7f) !== 0x20) return false;
  let j = 8;
  while (j < 11 && NAME_CHAR[info[at + j] & 0x7f]) j++;
  for (; j < 11; j++) if ((info[at + j] & 0x7f) !== 0x20) return false;
  return true;
}

/** Attribute bits (high bits) set in a name at `at`. */
export function nameHasAttributes(info: Uint8Array, at: number): boolean {
  for (let i = 0; i < 11; i++) if (info[at + i] & 0x80) return true;
  return false;
}

const found: number[] = [];

/**
 * Offsets below 64 where an 8.3 name fits, first first. The array is reused by the next call:
 * read it before calling again.
 */
export function nameOffsets(info: Uint8Array, limit = 64): readonly number[] {
  const end = Math.min(limit - 1, info.length - 11);
  found.length = 0;
  for (let at = 0; at <= end; at++) {
    // most octets are no name character: one table look-up rules the offset out
    if (NAME_CHAR[info[at] & 0x7f] && cpmNameAt(info, at)) found.push(at);
  }
  return found;
}

/**
 * A number for "this station's file of this name" (name masked to 7 bits): FNV-1a over the
 * station and the 11 characters, never 0. A number keeps a million frames free of string garbage.
 */
export function fileKey(station: number, info: Uint8Array, at: number): number {
  let h = (0x811c9dc5 ^ (station & 0xff)) >>> 0;
  h = Math.imul(h, 0x01000193);
  h ^= (station >>> 8) & 0xff;
  h = Math.imul(h, 0x01000193);
  for (let i = 0; i < 11; i++) {
    h ^= info[at + i] & 0x7f;
    h = Math.imul(h, 0x01000193);
  }
  return (h >>> 0) || 1;
}

const PRINTABLE = new Uint8Array(256);
for (let b = 0x20; b < 0x7f; b++) PRINTABLE[b] = 1;
PRINTABLE[9] = PRINTABLE[10] = PRINTABLE[13] = 1;

/** Where the printable tail of the frame starts (info.length when the last octet is not printable). */
export function printableTail(info: Uint8Array): number {
  let s = info.length;
  while (s > 0 && PRINTABLE[info[s - 1]]) s--;
  return s;
}
