import { formatTimescale, parseTimescale } from '../../readers/timescale';
import type { Waveform } from '../waveform';
import { collect, TextChunker } from './collect';

export interface VcdWriterOptions {
  /** e.g. "1 ns", "10 ps"; must divide the sample period (default: the sample period itself) */
  timescale?: string;
  /** scope path per channel name, outermost first (default: one scope "capture") */
  scopes?: Record<string, string[]>;
  /** reference written for a channel, when it differs from the channel name */
  references?: Record<string, string>;
  chunkSize?: number;
}

/** n-th identifier code from the printable characters ! … ~ (IEEE Std 1364-2001 §18.2.3.8, $var identifier_code; subclause from a secondary source) */
export function identifierCode(n: number): string {
  let s = '';
  do {
    s += String.fromCharCode(33 + (n % 94));
    n = Math.floor(n / 94);
  } while (n > 0);
  return s;
}

/** Writes a waveform as a value change dump: header with nested scopes, $dumpvars, #time and scalar changes. */
export function* vcdChunks(w: Waveform, opts: VcdWriterOptions = {}): Generator<Uint8Array> {
  const timescale = opts.timescale ?? formatTimescale(w.samplePeriodSeconds);
  if (!timescale) throw new Error('sample period is not a VCD timescale; give one that divides it');
  const unit = parseTimescale(timescale);
  if (unit === null) throw new Error(`bad timescale ${timescale}`);
  const ticks = Math.round(w.samplePeriodSeconds / unit);
  if (ticks < 1 || Math.abs(ticks * unit - w.samplePeriodSeconds) > unit * 1e-6) {
    throw new Error(`timescale ${timescale} does not divide the sample period`);
  }
  const out = new TextChunker(opts.chunkSize);
  const ids = w.channels.map((_, i) => identifierCode(i));
  let head = `$date\n  generated\n$end\n$version\n  Flagline encoder\n$end\n$timescale ${timescale} $end\n`;
  // declarations keep channel order (a reader numbers channels in declaration order);
  // scopes open and close around them as the paths change
  let open: string[] = [];
  const order = w.channels.map((c, i) => ({ c, i, path: opts.scopes?.[c.name] ?? ['capture'] }));
  for (const { c, i, path } of order) {
    let same = 0;
    while (same < open.length && same < path.length && open[same] === path[same]) same++;
    for (let k = open.length; k > same; k--) head += '$upscope $end\n';
    for (let k = same; k < path.length; k++) head += `$scope module ${path[k]} $end\n`;
    open = path;
    head += `$var wire 1 ${ids[i]} ${opts.references?.[c.name] ?? c.name} $end\n`;
  }
  for (let k = 0; k < open.length; k++) head += '$upscope $end\n';
  head += '$enddefinitions $end\n';
  out.add(head);
  let time = -1;
  let dumpvars = true;
  const last = new Uint8Array(w.channels.length).fill(255);
  const chars = ['0', '1', 'x'];
  for (const t of w.batches()) {
    for (let i = 0; i < t.n; i++) {
      const c = t.channel[i];
      const v = t.value[i];
      if (last[c] === v) continue;
      const s = t.sample[i] * ticks;
      if (s !== time) {
        if (dumpvars && time >= 0) {
          out.add('$end\n');
          dumpvars = false;
        }
        out.add(`#${s}\n`);
        if (time < 0) out.add('$dumpvars\n');
        time = s;
      }
      last[c] = v;
      if (out.add(chars[v] + ids[c] + '\n')) yield out.take();
    }
  }
  if (dumpvars) out.add('$end\n');
  // the capture reaches the last sample even when nothing changes there
  const end = (w.totalSamples - 1) * ticks;
  if (end > time) out.add(`#${end}\n`);
  if (out.pending) yield out.take();
}

/** the whole dump at once (small files, tests) */
export function vcdBytes(w: Waveform, opts: VcdWriterOptions = {}): Uint8Array {
  return collect(vcdChunks(w, opts));
}
