// Seeded mutations of captures and of their settings: what a damaged file, a wrong export option
// or a hostile upload looks like. Every mutation is reproducible from (seed, case).
import type { DecoderOptions } from '../../../shared/decoder/pipeline';
import type { CaptureFormat } from '../../../shared/decoder/types';

export type Rng = () => number;

/** small deterministic PRNG (mulberry32) */
export function rng(seed: number): Rng {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

const pick = <T>(r: Rng, xs: readonly T[]): T => xs[Math.floor(r() * xs.length)];
const int = (r: Rng, n: number) => Math.floor(r() * n);

/** times no capture can hold, or that break the order: huge, negative, non-finite, repeated, going back */
export const BAD_TIMES = [
  '9007199254740993',
  '99999999999999999999',
  '1e999',
  '-1e999',
  '1e308',
  '1e-300',
  'NaN',
  'Infinity',
  '-5',
  '-0.000001',
  '0',
  '123456789012.5',
  '4e15',
];

/** sample and bit rates off by orders of magnitude, or not numbers at all */
const ABSURD_RATES = [1, 3, 0.5, 1e-9, 1e15, 1e12, Number.MAX_VALUE, Infinity, NaN, -800000, 0];

export interface Case {
  format: CaptureFormat | 'auto';
  options: DecoderOptions;
  bytes: Uint8Array;
  /** what was done, for the report */
  steps: string[];
}

const enc = new TextEncoder();
const dec = new TextDecoder('latin1');

function splitLines(bytes: Uint8Array): string[] {
  return dec.decode(bytes).split('\n');
}

function joinLines(lines: string[]): Uint8Array {
  const s = lines.join('\n');
  const out = new Uint8Array(s.length);
  for (let i = 0; i < s.length; i++) out[i] = s.charCodeAt(i) & 0xff;
  return out;
}

/** a mutation of text captures, line by line */
function mutateText(r: Rng, bytes: Uint8Array, format: CaptureFormat): { bytes: Uint8Array; step: string } {
  const lines = splitLines(bytes);
  const n = lines.length;
  const kind = pick(r, ['insert', 'swap', 'delete', 'time', 'time', 'time', 'header', 'crlf', 'cell'] as const);
  switch (kind) {
    case 'insert': {
      const from = int(r, n);
      const at = int(r, n + 1);
      const copies = r() < 0.2 ? 1 + int(r, 2000) : 1;
      lines.splice(at, 0, ...new Array(copies).fill(lines[from]));
      return { bytes: joinLines(lines), step: `insert ${copies}× line ${from + 1} at ${at + 1}` };
    }
    case 'swap': {
      const a = int(r, n);
      const b = int(r, n);
      [lines[a], lines[b]] = [lines[b], lines[a]];
      return { bytes: joinLines(lines), step: `swap lines ${a + 1} and ${b + 1}` };
    }
    case 'delete': {
      const a = int(r, n);
      const count = 1 + int(r, Math.min(50, n));
      lines.splice(a, count);
      return { bytes: joinLines(lines), step: `delete ${count} lines from ${a + 1}` };
    }
    case 'time': {
      const t = pick(r, BAD_TIMES);
      const at = timeLine(r, lines, format);
      if (at < 0) return { bytes, step: 'no time to change' };
      lines[at] = replaceTime(lines[at], format, t);
      return { bytes: joinLines(lines), step: `time on line ${at + 1} := ${t}` };
    }
    case 'header': {
      // a header of many declarations or columns
      const count = 1 + int(r, 20000);
      if (format === 'vcd') {
        const at = Math.max(0, lines.findIndex((l) => l.includes('$enddefinitions')));
        const decl = Array.from({ length: count }, (_, i) => `$var wire 1 z${i} s${i} $end`);
        lines.splice(at, 0, ...decl);
      } else if (format === 'csv') {
        lines[0] = lines[0] + ',c'.repeat(Math.min(count, 3000));
      } else lines.unshift(...new Array(Math.min(count, 3000)).fill('# comment'));
      return { bytes: joinLines(lines), step: `header grows by ${count}` };
    }
    case 'crlf':
      return { bytes: joinLines(lines.map((l) => l + '\r')), step: 'CRLF line ends' };
    case 'cell': {
      const at = 1 + int(r, Math.max(1, n - 1));
      const junk = pick(r, ['x', 'z', '2', '', '"', ',,,,', '\u00ff\u00fe', '-', 'b1010 !', '$dumpvars', '#', 'r1.5 !']);
      lines[at] = (lines[at] ?? '') + (format === 'csv' ? ',' : ' ') + junk;
      return { bytes: joinLines(lines), step: `append "${junk}" to line ${at + 1}` };
    }
  }
}

function timeLine(r: Rng, lines: string[], format: CaptureFormat): number {
  const candidates: number[] = [];
  for (let i = 0; i < lines.length && candidates.length < 4000; i++) {
    const l = lines[i];
    if (format === 'vcd' ? /^#\d/.test(l) : format === 'csv' ? i > 0 && /^\s*[-+\d.]/.test(l) : /^\s*\d/.test(l)) candidates.push(i);
  }
  return candidates.length ? pick(r, candidates) : -1;
}

function replaceTime(line: string, format: CaptureFormat, t: string): string {
  if (format === 'vcd') return line.replace(/^#\d+/, `#${t}`);
  if (format === 'csv') return line.replace(/^[^,;\t]*/, t);
  return line.replace(/^\s*\S+/, t);
}

/** a mutation of binary captures, byte by byte */
function mutateBinary(r: Rng, bytes: Uint8Array): { bytes: Uint8Array; step: string } {
  const n = bytes.length;
  const kind = pick(r, ['flip', 'flip', 'truncate', 'fill', 'insert', 'duplicate', 'odd'] as const);
  const out = () => bytes.slice();
  switch (kind) {
    case 'flip': {
      const b = out();
      const count = 1 + int(r, 64);
      for (let i = 0; i < count && n > 0; i++) b[int(r, n)] ^= 1 << int(r, 8);
      return { bytes: b, step: `flip ${count} bits` };
    }
    case 'truncate': {
      const at = int(r, n + 1);
      return { bytes: bytes.slice(0, at), step: `truncate to ${at} bytes` };
    }
    case 'fill': {
      const b = out();
      const at = int(r, n + 1);
      const len = int(r, n - at + 1);
      const v = pick(r, [0, 0xff, 0x7e, int(r, 256)]);
      b.fill(v, at, at + len);
      return { bytes: b, step: `fill ${len} bytes at ${at} with 0x${v.toString(16)}` };
    }
    case 'insert': {
      const at = int(r, n + 1);
      const len = 1 + int(r, 4096);
      const junk = Uint8Array.from({ length: len }, () => int(r, 256));
      const b = new Uint8Array(n + len);
      b.set(bytes.subarray(0, at));
      b.set(junk, at);
      b.set(bytes.subarray(at), at + len);
      return { bytes: b, step: `insert ${len} random bytes at ${at}` };
    }
    case 'duplicate': {
      const at = int(r, n + 1);
      const len = int(r, Math.min(8192, n - at) + 1);
      const b = new Uint8Array(n + len);
      b.set(bytes.subarray(0, at + len));
      b.set(bytes.subarray(at, at + len), at + len);
      b.set(bytes.subarray(at + len), at + 2 * len);
      return { bytes: b, step: `duplicate ${len} bytes at ${at}` };
    }
    case 'odd':
      return { bytes: bytes.slice(0, Math.max(0, n - 1 - int(r, 3))), step: 'cut the last sample short' };
  }
}

function mutateOptions(r: Rng, o: DecoderOptions): { options: DecoderOptions; step: string } {
  const kind = pick(r, ['sampleRate', 'bitRate', 'noClock', 'width', 'auto', 'channels'] as const);
  switch (kind) {
    case 'sampleRate': {
      const v = pick(r, ABSURD_RATES);
      return { options: { ...o, sampleRate: v }, step: `sample rate := ${v}` };
    }
    case 'bitRate': {
      const v = pick(r, ABSURD_RATES);
      return { options: { ...o, bitRate: v }, step: `bit rate := ${v}` };
    }
    case 'noClock':
      return { options: { ...o, clock: undefined, bitRate: o.bitRate ?? 800000 }, step: 'clock recovered from the data' };
    case 'width': {
      const w = o.rawWidth === 2 ? 1 : 2;
      return { options: { ...o, rawWidth: w }, step: `raw width := ${w}` };
    }
    case 'auto':
      return { options: { ...o, format: 'auto' }, step: 'format := auto' };
    case 'channels':
      return { options: { ...o, data: [...(o.data ?? []), 'no-such-channel'].slice(-2) }, step: 'a data channel the capture lacks' };
  }
}

/** 1 to 4 mutations of the bytes, sometimes one of the settings too */
export function mutate(r: Rng, seed: { format: CaptureFormat; options: DecoderOptions; bytes: Uint8Array }): Case {
  let bytes = seed.bytes;
  let options = seed.options;
  const steps: string[] = [];
  const text = seed.format === 'vcd' || seed.format === 'csv' || seed.format === 'framelog';
  const rounds = 1 + int(r, 4);
  for (let k = 0; k < rounds; k++) {
    const m = text && r() < 0.8 ? mutateText(r, bytes, seed.format) : mutateBinary(r, bytes);
    bytes = m.bytes;
    steps.push(m.step);
  }
  if (r() < 0.3) {
    const m = mutateOptions(r, options);
    options = m.options;
    steps.push(m.step);
  }
  return { format: options.format, options, bytes, steps };
}

export { enc };
