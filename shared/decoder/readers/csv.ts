import type { CaptureReader, ChannelInfo, DecodeIssue, ReaderOptions, TransitionSink } from '../types';
import { type Decimal, parseDecimal, POW10 } from './decimal';
import { IssueLog } from './issue-log';
import { LineSplitter } from './line-splitter';
import { TransitionBatch } from './transition-batch';

/** header names of a time column in seconds, and of a sample-number column (common practice) */
export const TIME_COLUMN = /^(time|t|seconds|secs?|time ?[([]s[)\]]|time_s|timestamp|time ?\(seconds\))$/i;
export const SAMPLE_COLUMN = /^(sample|samples|sample ?(index|number|no\.?|#)|sample_(index|number)|index|idx|n|#)$/i;

/** rows looked at to choose the time resolution before any transition is emitted */
const HEAD_ROWS = 1000;
const MAX_SCALE = 15;
const MAX_LINE = 1 << 20;

const enum TimeKind {
  Seconds,
  SampleNumber,
  RowNumber,
}

/**
 * CSV sample table (common practice for logic-analyzer exports): a header row of names, then
 * one row per sample or one row per change. Delimiter: comma, semicolon or tab, whichever the
 * header uses. Channel cells are 0 or 1; x or z is an unknown level (value 2, a warning with
 * its row, as in a VCD); anything else is unknown too, reported as a malformed cell.
 *
 * Time comes from a column named like "time"/"seconds" (in seconds), converted to an integer
 * sample index: with opts.sampleRate it is round(seconds × rate); without, the resolution is
 * the finest decimal step among the first 1000 rows' times (e.g. 0.000000125 → 1 ns; a finer
 * time later is rounded and reported). A "sample"/"index" column needs opts.sampleRate.
 * Without either column, each row is one sample at opts.sampleRate. In every case sample 0
 * is the first row (exports often count from a trigger, with negative times before it).
 */
export class CsvReader implements CaptureReader {
  bytesRead = 0;
  channels: ChannelInfo[] = [];
  private readonly log = new IssueLog();
  private readonly lines = new LineSplitter(
    MAX_LINE,
    (buf, start, end, offset) => this.lineBytes(buf, start, end, offset),
    (offset) => this.fail(offset, 'a line shorter than 1 MiB', 'A line is longer than 1 MiB; this is not a CSV sample table.'),
    () => this.log.fatalIssue !== null,
  );
  private line = 0;
  private delimiter = 44;
  private columns = 0;
  private timeColumn = -1;
  private timeKind = TimeKind.RowNumber;
  /** channel index per column, -1 for the time column */
  private columnChannel: Int32Array = new Int32Array(0);
  private headerDone = false;
  private head: { bytes: Uint8Array; line: number; offset: number }[] | null = [];
  private scale = 0;
  private rate = 0;
  private origin = NaN;
  private lastSample = -Infinity;
  private rows = 0;
  private batch: TransitionBatch | null = null;
  private readonly dec: Decimal = { mantissa: 0, scale: 0 };
  private readonly badColumn = new Set<number>();
  private readonly reportedUnknown = new Set<number>();
  private fineReported = false;

  constructor(
    private readonly opts: ReaderOptions,
    private readonly sink: TransitionSink,
  ) {
    if (opts.sampleRate !== undefined && !(opts.sampleRate > 0)) {
      this.log.fatal({ offset: 0, expected: 'a positive sample rate', message: 'The sample rate must be a positive number of samples per second.', setting: 'sampleRate' });
    }
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
    if (!this.headerDone) {
      this.fail(this.bytesRead, 'a header row', 'The file has no header row naming its columns.');
      return;
    }
    if (this.head) this.start();
    if (this.log.fatalIssue) return;
    if (this.rows === 0) {
      this.fail(this.bytesRead, 'rows of samples', 'The table has a header but no rows of samples.');
      return;
    }
    this.batch!.end(this.lastSample);
  }

  private lineBytes(buf: Uint8Array, start: number, end: number, offset: number): void {
    this.line++;
    if (end > start && buf[end - 1] === 13) end--;
    // blank lines carry nothing
    let k = start;
    while (k < end && (buf[k] === 32 || buf[k] === 9)) k++;
    if (k === end) return;
    if (!this.headerDone) {
      this.headerRow(buf, start, end, offset);
      return;
    }
    if (this.head) {
      this.head.push({ bytes: buf.slice(start, end), line: this.line, offset });
      if (this.head.length >= HEAD_ROWS) this.start();
      return;
    }
    this.row(buf, start, end, offset, this.line);
  }

  private headerRow(buf: Uint8Array, start: number, end: number, offset: number): void {
    const text = new TextDecoder().decode(buf.subarray(start, end));
    const counts = [',', ';', '\t'].map((d) => text.split(d).length - 1);
    const best = counts.indexOf(Math.max(...counts));
    this.delimiter = [44, 59, 9][best];
    const names = text.split([',', ';', '\t'][best]).map((s) => s.trim().replace(/^"(.*)"$/, '$1').trim());
    this.columns = names.length;
    this.columnChannel = new Int32Array(names.length).fill(-1);
    const timeAt = names.findIndex((n) => TIME_COLUMN.test(n));
    const sampleAt = names.findIndex((n) => SAMPLE_COLUMN.test(n));
    if (timeAt >= 0) {
      this.timeColumn = timeAt;
      this.timeKind = TimeKind.Seconds;
    } else if (sampleAt >= 0) {
      this.timeColumn = sampleAt;
      this.timeKind = TimeKind.SampleNumber;
      if (!this.opts.sampleRate) {
        this.log.fatal({ offset, line: this.line, expected: 'a sample rate', message: `Column "${names[sampleAt]}" numbers the samples but gives no time: give the sample rate (samples per second).`, setting: 'sampleRate' });
        return;
      }
    } else {
      this.timeKind = TimeKind.RowNumber;
      if (!this.opts.sampleRate) {
        this.log.fatal({
          offset,
          line: this.line,
          expected: 'a time column such as "time" (seconds)',
          message: 'The table has no time column (named time, t or seconds) and no sample rate was given, so its samples cannot be placed in time: give the sample rate.',
          setting: 'sampleRate',
        });
        return;
      }
    }
    const used = new Set<string>();
    names.forEach((name, col) => {
      if (col === this.timeColumn) return;
      if (this.channels.length >= 256) return;
      let unique = name || `column ${col + 1}`;
      for (let k = 2; used.has(unique); k++) unique = `${name} (${k})`;
      used.add(unique);
      this.columnChannel[col] = this.channels.length;
      this.channels.push({ index: this.channels.length, name: unique });
    });
    if (this.channels.length === 0) {
      this.fail(offset, 'at least one channel column', 'The table has no channel columns besides its time column.');
      return;
    }
    this.headerDone = true;
  }

  /** chooses the time base from the first rows, announces the channels and replays those rows */
  private start(): void {
    const head = this.head!;
    this.head = null;
    if (this.timeKind === TimeKind.Seconds && !this.opts.sampleRate) {
      let scale = 0;
      for (const r of head) {
        const cell = this.cell(r.bytes, 0, r.bytes.length, this.timeColumn);
        if (cell && parseDecimal(r.bytes, cell[0], cell[1], this.dec)) scale = Math.max(scale, this.dec.scale);
      }
      this.scale = Math.min(scale, MAX_SCALE);
      this.sink.header(this.channels, 1 / POW10[this.scale]);
    } else {
      this.rate = this.opts.sampleRate!;
      this.sink.header(this.channels, 1 / this.rate);
    }
    this.batch = new TransitionBatch(this.sink, this.channels.length);
    for (const r of head) {
      this.row(r.bytes, 0, r.bytes.length, r.offset, r.line);
      if (this.log.fatalIssue) return;
    }
  }

  /** [start, end) of column `col` in the row, unquoted and trimmed */
  private cell(buf: Uint8Array, start: number, end: number, col: number): [number, number] | null {
    let c = 0;
    let s = start;
    for (let i = start; i <= end; i++) {
      if (i === end || buf[i] === this.delimiter) {
        if (c === col) return trim(buf, s, i);
        c++;
        s = i + 1;
      }
    }
    return null;
  }

  private row(buf: Uint8Array, start: number, end: number, offset: number, line: number): void {
    const batch = this.batch!;
    const delim = this.delimiter;
    // time first: the row's changes need their sample
    let sample: number;
    if (this.timeKind === TimeKind.RowNumber) sample = this.rows;
    else {
      const cell = this.cell(buf, start, end, this.timeColumn);
      if (!cell || !parseDecimal(buf, cell[0], cell[1], this.dec)) {
        this.log.add({ offset, line, expected: 'a number in the time column', message: `Row ${line} has no readable time; it was skipped.`, skipped: true });
        return;
      }
      const d = this.dec;
      if (this.timeKind === TimeKind.SampleNumber) sample = d.scale === 0 ? d.mantissa : Math.round(d.mantissa / POW10[d.scale]);
      else if (this.rate) sample = Math.round((d.mantissa * this.rate) / POW10[d.scale]);
      else if (d.scale <= this.scale) sample = d.mantissa * POW10[this.scale - d.scale];
      else {
        sample = Math.round(d.mantissa / POW10[d.scale - this.scale]);
        if (!this.fineReported) {
          this.fineReported = true;
          this.log.add({
            offset,
            line,
            expected: `times in steps of 1e-${this.scale} s`,
            message: `Row ${line} has a finer time than the first rows (1e-${this.scale} s steps); such times were rounded. Give the sample rate to avoid this.`,
          });
        }
      }
      if (!Number.isSafeInteger(sample) || (!Number.isNaN(this.origin) && !Number.isSafeInteger(sample - this.origin))) {
        // 1e999, 9007199254740993 s and the like: no sample index can hold them exactly
        const text = new TextDecoder().decode(buf.subarray(cell[0], Math.min(cell[1], cell[0] + 40)));
        this.log.fatal({
          offset,
          line,
          expected: 'a finite time within range',
          message: `Row ${line} has the time "${text}", which cannot be placed: times must be finite and count fewer than 2^53 steps of the time resolution from the first row.`,
          code: 'time-range',
        });
        return;
      }
      if (this.timeKind !== TimeKind.SampleNumber || this.rows === 0) {
        if (Number.isNaN(this.origin)) this.origin = sample;
      }
      sample -= this.origin;
      if (sample < this.lastSample) {
        this.log.add({ offset, line, expected: 'times in increasing order', message: `Row ${line} goes back in time; it was skipped.`, skipped: true, code: 'time-back' });
        return;
      }
    }
    this.rows++;
    this.lastSample = sample;
    let col = 0;
    let s = start;
    const map = this.columnChannel;
    for (let i = start; i <= end; i++) {
      if (i !== end && buf[i] !== delim) continue;
      const ch = col < map.length ? map[col] : -1;
      if (ch >= 0) {
        // fast path: a bare 0 or 1
        let v: number;
        if (i - s === 1 && (buf[s] === 48 || buf[s] === 49)) v = buf[s] - 48;
        else {
          const [a, b] = trim(buf, s, i);
          v = b - a === 1 && (buf[a] === 48 || buf[a] === 49) ? buf[a] - 48 : 2;
          if (v === 2) {
            const k = buf[a] | 32;
            if (b - a === 1 && (k === 120 || k === 122)) this.unknownCell(ch, offset, line, sample);
            else this.badCell(col, ch, offset, line);
          }
        }
        batch.set(ch, sample, v);
      }
      col++;
      s = i + 1;
    }
    if (col < this.columns) {
      for (let c = col; c < this.columns; c++) {
        const ch = map[c];
        if (ch >= 0) this.badCell(c, ch, offset, line);
      }
    }
  }

  /** x or z, as a VCD has them: the level is unknown there, which is data, not a malformed cell */
  private unknownCell(ch: number, offset: number, line: number, sample: number): void {
    if (this.reportedUnknown.has(ch)) return;
    this.reportedUnknown.add(ch);
    this.log.add({
      offset,
      line,
      expected: '0 or 1',
      message: `Signal "${this.channels[ch].name}" is unknown (x or z) from row ${line} (sample ${sample}); bits there are not trusted. Later unknown stretches of this signal are not reported again.`,
    });
  }

  private badCell(col: number, ch: number, offset: number, line: number): void {
    if (this.badColumn.has(col)) return;
    this.badColumn.add(col);
    this.log.add({
      offset,
      line,
      expected: '0 or 1',
      skipped: true,
      message: `Column "${this.channels[ch].name}" holds something other than 0 or 1 in row ${line}; such cells count as unknown. Later ones in this column are not reported again.`,
    });
  }

  private fail(offset: number, expected: string, message: string): void {
    this.log.fatal({ offset, line: this.line, expected, message });
  }
}

function trim(buf: Uint8Array, s: number, e: number): [number, number] {
  while (s < e && (buf[s] === 32 || buf[s] === 9 || buf[s] === 34)) s++;
  while (e > s && (buf[e - 1] === 32 || buf[e - 1] === 9 || buf[e - 1] === 34 || buf[e - 1] === 13)) e--;
  return [s, e];
}
