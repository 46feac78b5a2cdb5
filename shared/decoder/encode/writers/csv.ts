import type { Waveform } from '../waveform';
import { collect, TextChunker } from './collect';

export interface CsvWriterOptions {
  /** time column: seconds (default), a sample number, or none (each row is one sample) */
  time?: 'seconds' | 'sample' | 'none';
  /** one row per sample, or only rows where something changes (default) */
  rows?: 'every' | 'changes';
  delimiter?: ',' | ';' | '\t';
  /** header name of the time column (default "time" or "sample") */
  timeName?: string;
  /** decimals of the seconds column (default: enough for one sample period) */
  decimals?: number;
  chunkSize?: number;
}

/** Writes a waveform as a CSV sample table with a header row. */
export function* csvChunks(w: Waveform, opts: CsvWriterOptions = {}): Generator<Uint8Array> {
  const time = opts.time ?? 'seconds';
  const every = (opts.rows ?? 'changes') === 'every';
  if (time === 'none' && !every) throw new Error('a table without a time column must have every sample');
  const d = opts.delimiter ?? ',';
  const decimals = opts.decimals ?? Math.max(0, Math.ceil(-Math.log10(w.samplePeriodSeconds) - 1e-9));
  const period = w.samplePeriodSeconds;
  const out = new TextChunker(opts.chunkSize);
  const names = w.channels.map((c) => c.name);
  if (time !== 'none') names.unshift(opts.timeName ?? (time === 'seconds' ? 'time' : 'sample'));
  out.add(names.join(d) + '\n');
  const level = new Uint8Array(w.channels.length);
  const chars = ['0', '1', 'x'];
  const rowText = (s: number) => {
    let r = time === 'seconds' ? (s * period).toFixed(decimals) + d : time === 'sample' ? s + d : '';
    for (let c = 0; c < level.length; c++) r += (c ? d : '') + chars[level[c]];
    return r + '\n';
  };
  let current = -1; // sample whose row is pending
  let written = 0; // every-sample mode: rows written so far
  for (const t of w.batches()) {
    for (let i = 0; i < t.n; i++) {
      const s = t.sample[i];
      if (s !== current) {
        if (current >= 0) {
          if (every) {
            while (written < s) {
              if (out.add(rowText(written++))) yield out.take();
            }
          } else if (out.add(rowText(current))) yield out.take();
        }
        current = s;
      }
      level[t.channel[i]] = t.value[i];
    }
  }
  if (every) {
    while (written < w.totalSamples) if (out.add(rowText(written++))) yield out.take();
  } else if (current >= 0) out.add(rowText(current));
  if (out.pending) yield out.take();
}

/** the whole table at once (small files, tests) */
export function csvBytes(w: Waveform, opts: CsvWriterOptions = {}): Uint8Array {
  return collect(csvChunks(w, opts));
}
