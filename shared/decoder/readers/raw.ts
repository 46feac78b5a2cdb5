import type { CaptureReader, ChannelInfo, DecodeIssue, ReaderOptions, TransitionSink } from '../types';
import { IssueLog } from './issue-log';
import { newTransitions } from './transition-batch';

/** Takes raw samples as they are, instead of transitions (the fused raw + clock path). */
export interface RawSampleConsumer {
  /** whole samples bytes[start, end), `width` bytes each, the first at sample index `firstSample` */
  samples(bytes: Uint8Array, start: number, end: number, firstSample: number, width: 1 | 2): void;
}

/** A transition sink that may, once the header is out, ask for the samples themselves. */
export interface RawTransitionSink extends TransitionSink {
  rawConsumer?(): RawSampleConsumer | null;
}

/** transitions per batch; a module-local constant keeps the hot loops free of imported bindings */
const BATCH = 16384;

/**
 * Raw binary samples: one byte per sample (bit n = channel n) or two bytes little-endian
 * (16 channels). Most samples repeat the previous one, so the loop compares whole samples
 * and only looks at bits where something changed.
 */
export class RawReader implements CaptureReader {
  bytesRead = 0;
  private readonly log = new IssueLog();
  private readonly width: 1 | 2;
  private readonly channels: ChannelInfo[];
  private readonly t = newTransitions(BATCH + 16);
  private prev = -1;
  private sample = 0;
  private oddByte = -1;
  private started = false;
  /** undefined until the header is out; then the consumer of raw samples, or null for transitions */
  private direct: RawSampleConsumer | null | undefined = undefined;

  constructor(
    private readonly opts: ReaderOptions,
    private readonly sink: RawTransitionSink,
  ) {
    this.width = opts.rawWidth ?? 1;
    const count = this.width * 8;
    this.channels = [];
    for (let i = 0; i < count; i++) this.channels.push({ index: i, name: opts.channelNames?.[i] ?? String(i) });
    const rate = opts.sampleRate;
    if (!(typeof rate === 'number' && rate > 0 && Number.isFinite(rate))) {
      this.log.fatal({
        offset: 0,
        expected: 'a sample rate',
        message: 'Raw binary samples carry no time base: give the sample rate (samples per second) the capture was taken at.',
        setting: 'sampleRate',
      });
    }
  }

  get issues(): DecodeIssue[] {
    return this.log.issues;
  }

  fatal(): DecodeIssue | null {
    return this.log.fatalIssue;
  }

  push(chunk: Uint8Array): void {
    if (this.log.fatalIssue || chunk.length === 0) return;
    if (!this.started) {
      this.started = true;
      this.sink.header(this.channels, 1 / this.opts.sampleRate!);
      this.direct = this.sink.rawConsumer?.() ?? null;
    }
    if (this.direct) {
      this.pushDirect(chunk, this.direct);
      return;
    }
    // the scans stop when the batch is full; handing it on happens here, outside the hot loops
    // (a rarely taken call inside them makes the optimizing compiler bail out again and again)
    let i = 0;
    while (i < chunk.length) {
      i = this.width === 1 ? this.scan8(chunk, i) : this.scan16(chunk, i);
      if (this.t.n >= BATCH) {
        this.sink.transitions(this.t);
        this.t.n = 0;
      }
    }
    this.bytesRead += chunk.length;
  }

  private pushDirect(chunk: Uint8Array, direct: RawSampleConsumer): void {
    const len = chunk.length;
    let i = 0;
    if (this.width === 2 && this.oddByte >= 0) {
      const pair = new Uint8Array([this.oddByte, chunk[0]]);
      direct.samples(pair, 0, 2, this.sample, 2);
      this.prev = pair[0] | (pair[1] << 8);
      this.sample++;
      this.oddByte = -1;
      i = 1;
    }
    const whole = this.width === 1 ? len - i : (len - i) & ~1;
    if (whole > 0) {
      direct.samples(chunk, i, i + whole, this.sample, this.width);
      this.prev = this.width === 1 ? chunk[i + whole - 1] : chunk[i + whole - 2] | (chunk[i + whole - 1] << 8);
      this.sample += whole / this.width;
    }
    if (i + whole < len) this.oddByte = chunk[len - 1];
    this.bytesRead += len;
  }

  /** scans from byte `from` until the chunk ends or the batch is full; returns where it stopped */
  private scan8(chunk: Uint8Array, from: number): number {
    const t = this.t;
    const ch = t.channel;
    const sm = t.sample;
    const vl = t.value;
    let n = t.n;
    let prev = this.prev;
    const len = chunk.length;
    let i = from;
    // sample index of chunk[0]
    const s0 = this.sample - from;
    if (prev < 0) {
      // first sample: every channel's initial level
      prev = chunk[0];
      for (let c = 0; c < 8; c++) {
        ch[n] = c;
        sm[n] = 0;
        vl[n] = (prev >> c) & 1;
        n++;
      }
      i = 1;
    }
    // Most samples repeat the one before: compare four at a time through an aligned 32-bit view.
    const headBytes = (4 - (chunk.byteOffset & 3)) & 3;
    const words = len > headBytes + 8 ? new Uint32Array(chunk.buffer, chunk.byteOffset + headBytes, (len - headBytes) >> 2) : null;
    const wordEnd = words ? headBytes + words.length * 4 : 0;
    while (i < len) {
      if (words !== null && i >= headBytes && i < wordEnd && ((i - headBytes) & 3) === 0) {
        const same = Math.imul(prev, 0x01010101) >>> 0;
        let w = (i - headBytes) >> 2;
        const wl = words.length;
        while (w < wl && words[w] === same) w++;
        i = headBytes + w * 4;
        if (i >= wordEnd) continue;
      }
      const b = chunk[i];
      if (b !== prev) {
        let d = b ^ prev;
        prev = b;
        const s = s0 + i;
        while (d !== 0) {
          const low = d & -d;
          const c = 31 - Math.clz32(low);
          ch[n] = c;
          sm[n] = s;
          vl[n] = (b >> c) & 1;
          n++;
          d ^= low;
        }
        if (n >= BATCH) {
          i++;
          break;
        }
      }
      i++;
    }
    t.n = n;
    this.prev = prev;
    this.sample = s0 + i;
    return i;
  }

  private scan16(chunk: Uint8Array, from: number): number {
    const t = this.t;
    const ch = t.channel;
    const sm = t.sample;
    const vl = t.value;
    let n = t.n;
    let prev = this.prev;
    let s = this.sample;
    let i = from;
    const len = chunk.length;
    let odd = this.oddByte;
    while (i < len) {
      let w: number;
      if (odd >= 0) {
        w = odd | (chunk[i] << 8);
        odd = -1;
        i++;
      } else if (i + 1 < len) {
        w = chunk[i] | (chunk[i + 1] << 8);
        i += 2;
      } else {
        odd = chunk[i];
        i++;
        break;
      }
      if (prev < 0) {
        for (let c = 0; c < 16; c++) {
          ch[n] = c;
          sm[n] = 0;
          vl[n] = (w >> c) & 1;
          n++;
        }
        prev = w;
      } else if (w !== prev) {
        let d = w ^ prev;
        prev = w;
        while (d !== 0) {
          const low = d & -d;
          const c = 31 - Math.clz32(low);
          ch[n] = c;
          sm[n] = s;
          vl[n] = (w >> c) & 1;
          n++;
          d ^= low;
        }
        if (n >= BATCH) {
          s++;
          break;
        }
      }
      s++;
    }
    t.n = n;
    this.prev = prev;
    this.sample = s;
    this.oddByte = odd;
    return i;
  }

  finish(): void {
    if (this.log.fatalIssue) return;
    if (this.oddByte >= 0) {
      this.log.add({
        offset: this.bytesRead - 1,
        expected: 'two bytes per sample',
        skipped: true,
        message: 'The file ends in half a 2-byte sample; the last byte was ignored. Check the sample width.',
      });
    }
    if (this.prev < 0) {
      this.log.fatal({ offset: this.bytesRead, expected: 'at least one sample', message: 'The capture holds no samples.' });
      return;
    }
    // the consumer of raw samples needs no end marker: a repeated level makes no clock edge
    if (this.direct) return;
    const t = this.t;
    const last = this.sample - 1;
    const count = this.width * 8;
    for (let c = 0; c < count; c++) {
      t.channel[t.n] = c;
      t.sample[t.n] = last;
      t.value[t.n] = (this.prev >> c) & 1;
      t.n++;
    }
    this.sink.transitions(t);
    t.n = 0;
  }
}
