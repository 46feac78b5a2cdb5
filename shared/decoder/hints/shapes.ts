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

/** The first offset below `limit` where an 8.3 name fits, or -1. */
export function firstNameAt(info: Uint8Array, limit: number): number {
  const end = Math.min(limit, info.length - 11);
  for (let at = 0; at <= end; at++) if (cpmNameAt(info, at)) return at;
  return -1;
}

/** The name at `at` masked to 7 bits, as a key for "the same file". */
export function nameKey(info: Uint8Array, at: number): string {
  let s = '';
  for (let i = 0; i < 11; i++) s += String.fromCharCode(info[at + i] & 0x7f);
  return s;
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
