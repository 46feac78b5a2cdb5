// Where the finder reads: the head of the capture, and when the head is idle, windows spread over
// the rest of the file. A window in the middle of a text capture starts at a line the reader can
// take up (a VCD time line, a CSV row, a frame-log line) after the file's own header.
import type { CaptureFormat } from '../types';

export interface FinderBudget {
  /** bytes read in all, head included (default 16 MB) */
  maxBytes: number;
  /** bytes of the head window (default 4 MB) */
  headBytes: number;
  /** seconds of line time that end a window early (default 4) */
  windowSeconds: number;
  /** bytes of each later window (default 1 MB) */
  windowBytes: number;
  /** bytes looked at before the trial decodes start (format, channels, bit times) */
  probeBytes: number;
  /** the step at which the finder checks whether one setting is clearly ahead */
  sliceBytes: number;
}

export const DEFAULT_BUDGET: FinderBudget = {
  maxBytes: 16 * 1024 * 1024,
  headBytes: 4 * 1024 * 1024,
  windowSeconds: 4,
  windowBytes: 1024 * 1024,
  probeBytes: 512 * 1024,
  sliceBytes: 64 * 1024,
};

export interface PlannedWindow {
  offset: number;
  length: number;
}

/**
 * Windows after the head: evenly spread over the rest of the file, as many as the byte budget
 * allows, each starting on a multiple of `align` bytes.
 */
export function spreadWindows(size: number, headLength: number, budget: FinderBudget, align: number): PlannedWindow[] {
  const rest = size - headLength;
  const left = budget.maxBytes - headLength;
  if (rest <= 0 || left <= 0) return [];
  const length = Math.min(budget.windowBytes, left, rest);
  const count = Math.min(Math.floor(left / length), Math.ceil(rest / length), 12);
  const out: PlannedWindow[] = [];
  for (let k = 0; k < count; k++) {
    // centres at (k + 1) / (count + 1) of the rest, so the last window is not the file's tail
    let offset = headLength + Math.floor(((k + 1) * rest) / (count + 1) - length / 2);
    offset = Math.max(headLength, Math.min(size - length, offset));
    offset -= offset % align;
    if (out.length && offset < out[out.length - 1].offset + out[out.length - 1].length) offset = out[out.length - 1].offset + out[out.length - 1].length;
    if (offset >= size) break;
    out.push({ offset, length: Math.min(length, size - offset) });
  }
  return out;
}

/** The bytes a text capture's reader needs before a window from the middle: VCD header, CSV header row. */
export function textHeader(format: CaptureFormat, head: Uint8Array): Uint8Array | null {
  if (format === 'vcd') {
    const text = latin1(head.subarray(0, Math.min(head.length, 4 * 1024 * 1024)));
    const m = /\$enddefinitions\s+\$end/.exec(text);
    if (!m) return null;
    const end = m.index + m[0].length;
    const nl = text.indexOf('\n', end);
    return head.subarray(0, nl < 0 ? end : nl + 1);
  }
  if (format === 'csv') {
    // comment lines and the header row: up to the end of the first line that is not a comment
    let at = 0;
    while (at < head.length) {
      const nl = head.indexOf(10, at);
      if (nl < 0) return null;
      const line = latin1(head.subarray(at, nl)).trim();
      at = nl + 1;
      if (line !== '' && !line.startsWith('#')) return head.subarray(0, at);
    }
    return null;
  }
  return new Uint8Array(0);
}

/** Where a window's bytes can be taken up: after the first line break, at a VCD time line. */
export function resyncPoint(format: CaptureFormat, bytes: Uint8Array): number {
  if (format === 'raw' || format === 'octets') return 0;
  let at = bytes.indexOf(10);
  if (at < 0) return bytes.length;
  at++;
  if (format !== 'vcd') return at;
  // a VCD value change section resumes at a "#<time>" line
  while (at < bytes.length) {
    if (bytes[at] === 0x23) return at;
    const nl = bytes.indexOf(10, at);
    if (nl < 0) return bytes.length;
    at = nl + 1;
  }
  return bytes.length;
}

function latin1(bytes: Uint8Array): string {
  let s = '';
  for (let i = 0; i < bytes.length; i += 8192) s += String.fromCharCode(...bytes.subarray(i, i + 8192));
  return s;
}
