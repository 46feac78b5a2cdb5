import { collect, TextChunker } from './collect';

export interface LoggedFrame {
  /** seconds from the start of the capture */
  seconds: number;
  /** frame octets, FCS included, without flags */
  bytes: Uint8Array;
  /** written as a "<link>:" column when given */
  link?: string;
}

export interface FrameLogWriterOptions {
  /** decimals of the time column (default 9: ns) */
  decimals?: number;
  /** separate bytes with spaces (default) or write them together */
  spaced?: boolean;
  /** a '#' comment line at the top */
  comment?: string;
  chunkSize?: number;
}

const HEX = Array.from({ length: 256 }, (_, i) => i.toString(16).toUpperCase().padStart(2, '0'));

/** Writes a hex frame log: one "<seconds> [<link>:] <hex bytes>" line per frame. */
export function* frameLogChunks(frames: Iterable<LoggedFrame>, opts: FrameLogWriterOptions = {}): Generator<Uint8Array> {
  const out = new TextChunker(opts.chunkSize);
  const sep = opts.spaced === false ? '' : ' ';
  if (opts.comment) out.add(`# ${opts.comment}\n`);
  for (const f of frames) {
    let line = f.seconds.toFixed(opts.decimals ?? 9) + ' ';
    if (f.link) line += `${f.link}: `;
    const parts: string[] = [];
    for (const b of f.bytes) parts.push(HEX[b]);
    if (out.add(line + parts.join(sep) + '\n')) yield out.take();
  }
  if (out.pending) yield out.take();
}

/** the whole log at once (small files, tests) */
export function frameLogBytes(frames: Iterable<LoggedFrame>, opts: FrameLogWriterOptions = {}): Uint8Array {
  return collect(frameLogChunks(frames, opts));
}
