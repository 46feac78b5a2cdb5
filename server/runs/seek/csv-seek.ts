// Seek index for CSV sample tables. Every CSV row carries all levels, so a reader can resume at
// any row start — but the CSV reader takes its time base from the file's first rows (sample 0
// is the first row's time; without a sample rate the resolution is the finest step among the
// first rows). A resumed reader is therefore fed the file's own head (header plus those first
// rows, byte for byte) and then the rows from the seek offset: it chooses the same base and
// resolution as the full decode did. Each point's sample is worked out by that same reader.
import { CsvReader, SAMPLE_COLUMN, TIME_COLUMN } from '../../../shared/decoder/readers';
import type { ReaderOptions, Transitions } from '../../../shared/decoder';
import { SEEK_SPACING, type SeekPoint } from './vcd-seek';

/** data rows the CSV reader looks at to choose its time base (its HEAD_ROWS) */
export const CSV_HEAD_ROWS = 1000;

function blank(bytes: Uint8Array, start: number, end: number): boolean {
  if (end > start && bytes[end - 1] === 13) end--;
  for (let k = start; k < end; k++) if (bytes[k] !== 32 && bytes[k] !== 9) return false;
  return true;
}

/** true when the header names a time or sample-number column (rows are then placed by their own time) */
export function headerHasTime(line: string): boolean {
  const counts = [',', ';', '\t'].map((d) => line.split(d).length - 1);
  const names = line.split([',', ';', '\t'][counts.indexOf(Math.max(...counts))]).map((s) => s.trim().replace(/^"(.*)"$/, '$1').trim());
  return names.some((n) => TIME_COLUMN.test(n) || SAMPLE_COLUMN.test(n));
}

/**
 * Byte offset just past the line that ends the reader's head (header plus CSV_HEAD_ROWS non-blank
 * rows), or -1 when the bytes end first or the table has no time column (row-numbered tables
 * count rows from the start and cannot resume).
 */
export function csvHeadEnd(bytes: Uint8Array): number {
  let nonBlank = 0;
  let from = 0;
  while (from < bytes.length) {
    const nl = bytes.indexOf(10, from);
    if (nl < 0) return -1;
    if (!blank(bytes, from, nl)) {
      if (nonBlank === 0 && !headerHasTime(Buffer.from(bytes.buffer, bytes.byteOffset + from, nl - from).toString('latin1'))) return -1;
      nonBlank++;
      if (nonBlank === CSV_HEAD_ROWS + 1) return nl + 1;
    }
    from = nl + 1;
  }
  return -1;
}

/** the sample and levels a reader gives the row `line`, after the file's head */
function probe(head: Uint8Array, line: Uint8Array, opts: ReaderOptions): { sample: number; levels: number[] } | null {
  let last: { sample: number; levels: number[] } | null = null;
  let channels = 0;
  const reader = new CsvReader(opts, {
    header: (c) => {
      channels = c.length;
    },
    transitions: (t: Transitions) => {
      for (let i = 0; i < t.n; i++) {
        if (!last || t.sample[i] !== last.sample) last = { sample: t.sample[i], levels: new Array<number>(channels).fill(2) };
        last.levels[t.channel[i]] = t.value[i];
      }
    },
  });
  reader.push(head);
  reader.push(line);
  reader.push(Uint8Array.of(10));
  reader.finish();
  // a row the reader skips (unreadable or backward time) cannot be a resume point
  if (reader.fatal() || reader.issues.some((i) => i.offset >= head.length)) return null;
  // finish() repeats every channel's level at the last row's sample: that marker is this row
  return last;
}

export class CsvSeekTracker {
  private head: Uint8Array[] = [];
  private headBytes: Uint8Array | null = null;
  private lastPoint = 0;
  private off = false;
  /** a row start at or past which the next point is taken, and the row's bytes so far */
  private pending: { offset: number; parts: Uint8Array[] } | null = null;
  private atLineStart = false;

  constructor(
    private readonly opts: ReaderOptions,
    private readonly record: (p: SeekPoint) => void,
  ) {}

  push(chunk: Uint8Array, base: number): void {
    if (this.off) return;
    if (!this.headBytes) {
      this.head.push(chunk.slice());
      const all = Buffer.concat(this.head);
      const end = csvHeadEnd(all);
      if (end < 0) {
        // no time column, or head not complete yet (give up on absurd heads)
        if (all.length > 64 << 20 || (all.indexOf(10) >= 0 && !headerHasTime(firstLine(all)))) this.off = true;
        return;
      }
      this.headBytes = new Uint8Array(all.subarray(0, end));
      this.head = [];
      this.lastPoint = end;
      this.atLineStart = true;
      this.scan(all.subarray(end), end);
      return;
    }
    this.scan(chunk, base);
  }

  private scan(bytes: Uint8Array, base: number): void {
    let from = 0;
    while (from < bytes.length) {
      if (this.pending) {
        const nl = bytes.indexOf(10, from);
        if (nl < 0) {
          this.pending.parts.push(bytes.slice(from));
          return;
        }
        this.pending.parts.push(bytes.subarray(from, nl));
        const line = Buffer.concat(this.pending.parts);
        const at = this.pending.offset;
        this.pending = null;
        if (!blank(line, 0, line.length)) {
          const p = probe(this.headBytes!, line, this.opts);
          if (p) this.record({ byteOffset: at, sample: p.sample, levels: p.levels });
          this.lastPoint = at;
        }
        from = nl + 1;
        this.atLineStart = true;
        continue;
      }
      if (this.atLineStart && base + from - this.lastPoint >= SEEK_SPACING) {
        this.pending = { offset: base + from, parts: [] };
        continue;
      }
      // jump to the first line start at or past the spacing
      const want = Math.max(from, this.lastPoint + SEEK_SPACING - base - 1);
      if (want >= bytes.length) {
        this.atLineStart = bytes[bytes.length - 1] === 10;
        return;
      }
      const nl = bytes.indexOf(10, want);
      if (nl < 0) {
        this.atLineStart = false;
        return;
      }
      from = nl + 1;
      this.atLineStart = true;
    }
  }
}

function firstLine(b: Uint8Array): string {
  let from = 0;
  for (;;) {
    const nl = b.indexOf(10, from);
    if (nl < 0) return '';
    if (!blank(b, from, nl)) return Buffer.from(b.buffer, b.byteOffset + from, nl - from).toString('latin1');
    from = nl + 1;
  }
}
