import { BIT_CHUNK_SIZE } from '../link-bits';
import type { BitChunk, CaptureReader, DecodeIssue, LineBitSink, ReaderOptions } from '../types';
import { IssueLog } from './issue-log';

/**
 * Octet stream of line bits, as a synchronous serial adapter hands them over: 8 bits per
 * byte, least significant bit first, still stuffed and with flags. Each bit's sample is its
 * index; the sample period is 1 / opts.bitRate (or 1 / opts.sampleRate), else 1 s.
 * The link is named opts.channelNames[0], else "line".
 */
export class OctetReader implements CaptureReader {
  bytesRead = 0;
  private readonly log = new IssueLog();
  private readonly chunk: BitChunk = { bits: new Uint8Array(BIT_CHUNK_SIZE), samples: new Float64Array(BIT_CHUNK_SIZE), n: 0 };
  private readonly link: string;
  private started = false;
  private bit = 0;

  constructor(
    private readonly opts: ReaderOptions,
    private readonly sink: LineBitSink,
  ) {
    this.link = opts.channelNames?.[0] ?? 'line';
  }

  get issues(): DecodeIssue[] {
    return this.log.issues;
  }

  fatal(): DecodeIssue | null {
    return this.log.fatalIssue;
  }

  private header(): void {
    this.started = true;
    const rate = this.opts.bitRate ?? this.opts.sampleRate;
    this.sink.header([{ index: 0, name: this.link }], rate && rate > 0 ? 1 / rate : 1);
  }

  push(bytes: Uint8Array): void {
    if (this.log.fatalIssue) return;
    if (!this.started) this.header();
    const c = this.chunk;
    const bits = c.bits;
    const samples = c.samples;
    let n = c.n;
    let s = this.bit;
    for (let i = 0; i < bytes.length; i++) {
      const b = bytes[i];
      if (n > BIT_CHUNK_SIZE - 8) {
        c.n = n;
        this.sink.bits(this.link, c);
        n = 0;
      }
      for (let k = 0; k < 8; k++) {
        bits[n] = (b >> k) & 1;
        samples[n] = s++;
        n++;
      }
    }
    c.n = n;
    this.bit = s;
    this.bytesRead += bytes.length;
  }

  finish(): void {
    if (this.log.fatalIssue) return;
    if (!this.started) {
      this.log.fatal({ offset: 0, expected: 'at least one octet', message: 'The octet stream is empty.' });
      return;
    }
    if (this.chunk.n > 0) {
      this.sink.bits(this.link, this.chunk);
      this.chunk.n = 0;
    }
  }
}
