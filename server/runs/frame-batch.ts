// The decoder thread's output on its way to the writer thread (server/jobs/decode-thread.ts →
// server/jobs/decode-worker.ts): frames, line events and the sample period in arrival order,
// packed into two transferable buffers (numbers as Float64 slots, octets back to back) instead
// of objects, so the hand-over costs a copy-free transfer rather than a structured clone per
// frame. The writer unpacks each record into the same DecodedFrame / LineEvent the decoder gave,
// so the rows it builds are the ones a decode in one thread stores.
import type { DecodedFrame, FrameKind, FrameStatus, LineEvent, LineEventKind } from '../../shared/decoder';
import type { SeekPoint } from './seek/vcd-seek';

/** what the decoder thread hands over at once */
export interface FrameBatch {
  /** Float64 slots of the records; `slots` of them are used */
  nums: ArrayBuffer;
  slots: number;
  /** frame octets, back to back in record order; `octetsLength` of them are used */
  octets: ArrayBuffer;
  octetsLength: number;
  /** strings first used in this batch: they extend the run's string table in this order */
  strings: string[];
  frames: number;
  events: number;
  /** capture bytes pushed into the decoder when the batch was cut */
  bytesRead: number;
  /** seek points found meanwhile (value change dumps, CSV) */
  seek: SeekPoint[];
}

const FRAME = 1;
const EVENT = 2;
const PERIOD = 3;
/** slots of a frame record besides its stuffing positions, with its link decode */
const FRAME_SLOTS = 22;
const EVENT_SLOTS = 7;

/** null and undefined travel as NaN: no field the records carry is ever NaN itself */
const num = (v: number | null | undefined): number => (v === null || v === undefined ? NaN : v);
const orNull = (v: number): number | null => (Number.isNaN(v) ? null : v);

/** Collects records until the caller takes them as a batch. */
export class BatchPacker {
  private nums: Float64Array;
  private n = 0;
  private octets: Uint8Array;
  private o = 0;
  private readonly ids = new Map<string, number>();
  private fresh: string[] = [];
  private seek: SeekPoint[] = [];
  private period = NaN;
  frames = 0;
  events = 0;

  constructor(private readonly initialSlots = 1 << 16) {
    this.nums = new Float64Array(initialSlots);
    this.octets = new Uint8Array(initialSlots * 2);
  }

  /** records held so far */
  get size(): number {
    return this.frames + this.events;
  }

  private id(s: string): number {
    let i = this.ids.get(s);
    if (i === undefined) {
      i = this.ids.size;
      this.ids.set(s, i);
      this.fresh.push(s);
    }
    return i;
  }

  private room(slots: number, octets: number): void {
    if (this.n + slots > this.nums.length) {
      const grown = new Float64Array(Math.max(this.nums.length * 2, this.n + slots));
      grown.set(this.nums.subarray(0, this.n));
      this.nums = grown;
    }
    if (this.o + octets > this.octets.length) {
      const grown = new Uint8Array(Math.max(this.octets.length * 2, this.o + octets));
      grown.set(this.octets.subarray(0, this.o));
      this.octets = grown;
    }
  }

  /** the seconds per sample the records after this one are written with (a record only when it changes) */
  setPeriod(p: number): void {
    if (p === this.period) return;
    this.room(2, 0);
    this.nums[this.n++] = PERIOD;
    this.nums[this.n++] = p;
    this.period = p;
  }

  frame(f: DecodedFrame): void {
    const stuffed = f.stuffed;
    this.room(FRAME_SLOTS + stuffed.length, f.bytes.length);
    const v = this.nums;
    let n = this.n;
    v[n++] = FRAME;
    v[n++] = this.id(f.link);
    v[n++] = f.seq;
    v[n++] = f.firstSample;
    v[n++] = f.lastSample;
    v[n++] = this.id(f.status);
    v[n++] = f.bitLength;
    v[n++] = f.bytes.length;
    v[n++] = num(f.fcsReceived);
    v[n++] = num(f.fcsComputed);
    v[n++] = num(f.flippedBit);
    v[n++] = stuffed.length;
    for (let i = 0; i < stuffed.length; i++) v[n++] = stuffed[i];
    const d = f.decode;
    if (d) {
      v[n++] = 1;
      v[n++] = d.address;
      v[n++] = d.control;
      v[n++] = this.id(d.kind);
      v[n++] = this.id(d.command);
      v[n++] = num(d.ns);
      v[n++] = num(d.nr);
      v[n++] = d.pf ? 1 : 0;
      v[n++] = d.infoOffset;
      v[n++] = d.infoLength;
    } else v[n++] = 0;
    this.n = n;
    this.octets.set(f.bytes, this.o);
    this.o += f.bytes.length;
    this.frames++;
  }

  event(e: LineEvent): void {
    this.room(EVENT_SLOTS, 0);
    const v = this.nums;
    let n = this.n;
    v[n++] = EVENT;
    v[n++] = e.link === null ? -1 : this.id(e.link);
    v[n++] = this.id(e.channel);
    v[n++] = this.id(e.kind);
    v[n++] = e.sample;
    v[n++] = num(e.endSample);
    v[n++] = num(e.count);
    this.n = n;
    this.events++;
  }

  seekPoint(p: SeekPoint): void {
    this.seek.push(p);
  }

  /** The records so far as a batch (its buffers are the caller's to transfer); the packer starts anew. */
  take(bytesRead: number): FrameBatch {
    const batch: FrameBatch = {
      nums: this.nums.buffer as ArrayBuffer,
      slots: this.n,
      octets: this.octets.buffer as ArrayBuffer,
      octetsLength: this.o,
      strings: this.fresh,
      frames: this.frames,
      events: this.events,
      bytesRead,
      seek: this.seek,
    };
    this.nums = new Float64Array(Math.max(this.initialSlots, this.n));
    this.octets = new Uint8Array(Math.max(this.initialSlots * 2, this.o));
    this.n = 0;
    this.o = 0;
    this.fresh = [];
    this.seek = [];
    this.frames = 0;
    this.events = 0;
    return batch;
  }
}

export interface BatchSink {
  period(p: number): void;
  frame(f: DecodedFrame): void;
  event(e: LineEvent): void;
}

/**
 * Replays a batch into `sink` in record order. `strings` is the run's string table, kept by the
 * caller across batches (this appends the batch's new strings). A frame's octets are a Buffer
 * view into the batch's buffer, which nothing else writes to.
 */
export function unpackBatch(batch: FrameBatch, strings: string[], sink: BatchSink): void {
  for (const s of batch.strings) strings.push(s);
  const v = new Float64Array(batch.nums, 0, batch.slots);
  const octets = batch.octets;
  let o = 0;
  let n = 0;
  while (n < batch.slots) {
    const tag = v[n++];
    if (tag === FRAME) {
      const link = strings[v[n++]];
      const seq = v[n++];
      const firstSample = v[n++];
      const lastSample = v[n++];
      const status = strings[v[n++]] as FrameStatus;
      const bitLength = v[n++];
      const length = v[n++];
      const fcsReceived = orNull(v[n++]);
      const fcsComputed = orNull(v[n++]);
      const flippedBit = orNull(v[n++]);
      const stuffedLength = v[n++];
      const stuffed: number[] = new Array<number>(stuffedLength);
      for (let i = 0; i < stuffedLength; i++) stuffed[i] = v[n++];
      const decode =
        v[n++] === 1
          ? {
              address: v[n++],
              control: v[n++],
              kind: strings[v[n++]] as FrameKind,
              command: strings[v[n++]],
              ns: orNull(v[n++]),
              nr: orNull(v[n++]),
              pf: v[n++] === 1,
              infoOffset: v[n++],
              infoLength: v[n++],
            }
          : null;
      // a Buffer, which the row writer binds as it is
      const bytes = Buffer.from(octets, o, length);
      o += length;
      sink.frame({ link, seq, firstSample, lastSample, bytes, bitLength, stuffed, status, fcsReceived, fcsComputed, flippedBit, decode });
    } else if (tag === EVENT) {
      const linkId = v[n++];
      const e: LineEvent = { link: linkId < 0 ? null : strings[linkId], channel: strings[v[n++]], kind: strings[v[n++]] as LineEventKind, sample: v[n++] };
      const endSample = v[n++];
      const count = v[n++];
      if (!Number.isNaN(endSample)) e.endSample = endSample;
      if (!Number.isNaN(count)) e.count = count;
      sink.event(e);
    } else if (tag === PERIOD) sink.period(v[n++]);
    else throw new Error(`frame batch: unknown record ${tag} at slot ${n - 1}`);
  }
}
