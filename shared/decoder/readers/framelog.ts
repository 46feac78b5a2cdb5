import type { CaptureReader, ChannelInfo, DecodeIssue, FrameLogSink, ReaderOptions } from '../types';
import { type Decimal, parseDecimal, POW10 } from './decimal';
import { IssueLog } from './issue-log';
import { LineSplitter } from './line-splitter';

/** time resolution of frame-log samples: 1 ns */
export const FRAMELOG_SCALE = 9;
const HEAD_LINES = 1000;
const MAX_LINE = 1 << 20;

interface Pending {
  link: string;
  first: number;
  bytes: Uint8Array;
}

/**
 * Hex frame log, one frame per line, frames already cut, FCS included:
 *
 *     <seconds> [<link>:] <hex bytes>
 *
 * Hex bytes may be separated by spaces or written together ("FF 03 3F" or "FF033F").
 * The optional link column is a word ending in ':' (e.g. "tx:"); without it the link is
 * opts.channelNames[0], else "log". Lines starting with '#' and blank lines are skipped.
 * Sample index = time in ns. A frame's last sample is its first plus the duration of its
 * bits at opts.bitRate (stuffing not counted), or equal to the first without a bit rate.
 * The header lists the links named in the first 1000 lines; a link that first appears later
 * still gets its frames.
 */
export class FrameLogReader implements CaptureReader {
  bytesRead = 0;
  private readonly log = new IssueLog();
  private readonly lines = new LineSplitter(
    MAX_LINE,
    (buf, start, end, offset) => this.lineBytes(buf, start, end, offset),
    (offset) =>
      this.log.fatal({ offset, line: this.line + 1, expected: 'a line shorter than 1 MiB', message: 'A line is longer than 1 MiB; this is not a frame log.' }),
    () => this.log.fatalIssue !== null,
  );
  private line = 0;
  private head: Pending[] | null = [];
  private headLines = 0;
  private readonly links: string[] = [];
  private readonly defaultLink: string;
  private readonly dec: Decimal = { mantissa: 0, scale: 0 };
  private readonly scratch = new Uint8Array(1 << 16);
  private lastTime = -Infinity;
  private frames = 0;

  constructor(
    private readonly opts: ReaderOptions,
    private readonly sink: FrameLogSink,
  ) {
    this.defaultLink = opts.channelNames?.[0] ?? 'log';
  }

  get issues(): DecodeIssue[] {
    return this.log.issues;
  }

  fatal(): DecodeIssue | null {
    return this.log.fatalIssue;
  }

  push(chunk: Uint8Array): void {
    if (this.log.fatalIssue) return;
    const base = this.bytesRead;
    this.bytesRead += chunk.length;
    this.lines.push(chunk, base);
  }

  finish(): void {
    if (this.log.fatalIssue) return;
    this.lines.finish();
    if (this.log.fatalIssue) return;
    if (this.head) this.release();
    if (this.frames === 0) {
      this.log.fatal({ offset: this.bytesRead, line: this.line, expected: '<seconds> <hex bytes> lines', message: 'The frame log holds no frames.' });
    }
  }

  private release(): void {
    const head = this.head!;
    this.head = null;
    if (this.links.length === 0) this.links.push(this.defaultLink);
    const infos: ChannelInfo[] = this.links.map((name, index) => ({ index, name }));
    this.sink.header(infos, 1 / POW10[FRAMELOG_SCALE]);
    for (const f of head) this.emit(f.link, f.first, f.bytes);
  }

  private emit(link: string, first: number, bytes: Uint8Array): void {
    const rate = this.opts.bitRate;
    const last = rate && rate > 0 ? first + Math.round(((bytes.length * 8 - 1) / rate) * POW10[FRAMELOG_SCALE]) : first;
    this.frames++;
    this.sink.frame(link, first, last, bytes);
  }

  private lineBytes(buf: Uint8Array, start: number, end: number, offset: number): void {
    this.line++;
    const line = this.line;
    let i = start;
    while (i < end && isSpace(buf[i])) i++;
    if (i === end || buf[i] === 35) return;
    // time
    let e = i;
    while (e < end && !isSpace(buf[e])) e++;
    if (!parseDecimal(buf, i, e, this.dec) || this.dec.mantissa < 0) {
      this.bad(offset, line, 'a time in seconds at the start of the line', `Line ${line} does not start with a time in seconds; it was skipped.`);
      return;
    }
    const d = this.dec;
    const first = d.scale <= FRAMELOG_SCALE ? d.mantissa * POW10[FRAMELOG_SCALE - d.scale] : Math.round(d.mantissa / POW10[d.scale - FRAMELOG_SCALE]);
    if (!Number.isSafeInteger(first)) {
      // 1e999 s and the like: no nanosecond count holds it
      this.bad(offset, line, 'a finite time in seconds', `Line ${line} has a time that cannot be placed (it must be finite and below 2^53 ns); it was skipped.`);
      return;
    }
    i = e;
    while (i < end && isSpace(buf[i])) i++;
    // optional link column
    let link = this.defaultLink;
    e = i;
    while (e < end && !isSpace(buf[e])) e++;
    if (e > i && buf[e - 1] === 58) {
      link = new TextDecoder().decode(buf.subarray(i, e - 1));
      if (!this.links.includes(link) && this.head) this.links.push(link);
      i = e;
    } else if (this.head && !this.links.includes(link)) this.links.push(link);
    // hex bytes
    let n = 0;
    let half = -1;
    for (; i < end; i++) {
      const c = buf[i];
      if (isSpace(c)) {
        if (half >= 0) break;
        continue;
      }
      const h = hexValue(c);
      if (h < 0) {
        this.bad(offset, line, 'hex digits', `Line ${line} has "${String.fromCharCode(c)}" where a hex digit belongs; the line was skipped.`);
        return;
      }
      if (half < 0) half = h;
      else {
        if (n === this.scratch.length) {
          this.bad(offset, line, 'a frame of at most 65536 bytes', `Line ${line} holds a frame longer than 65536 bytes; it was skipped.`);
          return;
        }
        this.scratch[n++] = (half << 4) | h;
        half = -1;
      }
    }
    if (half >= 0) {
      this.bad(offset, line, 'pairs of hex digits', `Line ${line} has an odd number of hex digits in a byte; the line was skipped.`);
      return;
    }
    if (n === 0) {
      this.bad(offset, line, 'hex bytes after the time', `Line ${line} has a time but no frame bytes; it was skipped.`);
      return;
    }
    if (first < this.lastTime) {
      this.log.add({ offset, line, expected: 'times in increasing order', message: `Line ${line} is earlier than the line before it; it was kept in file order.` });
    }
    this.lastTime = first;
    const bytes = this.scratch.slice(0, n);
    if (this.head) {
      this.head.push({ link, first, bytes });
      if (++this.headLines >= HEAD_LINES) this.release();
    } else this.emit(link, first, bytes);
  }

  private bad(offset: number, line: number, expected: string, message: string): void {
    this.log.add({ offset, line, expected, message, skipped: true });
  }
}

function isSpace(c: number): boolean {
  return c === 32 || c === 9 || c === 13;
}

function hexValue(c: number): number {
  if (c >= 48 && c <= 57) return c - 48;
  if (c >= 65 && c <= 70) return c - 55;
  if (c >= 97 && c <= 102) return c - 87;
  return -1;
}
