/**
 * Lines out of chunks that may split anywhere: inside a line, between CR and LF, inside a
 * multi-byte UTF-8 character. Complete lines are handed on in place (no copy); only the cut one
 * at a chunk's end is carried, as bytes, so nothing is decoded before the line is whole. Shared
 * by the CSV and frame-log readers; the VCD tokenizer carries its cut token with `Carry`.
 */
export class LineSplitter {
  private readonly carry: Carry;

  constructor(
    maxLine: number,
    /** one line: buf[start, end) without its LF (a CR before it is left to the reader); `offset` in the file */
    private readonly onLine: (buf: Uint8Array, start: number, end: number, offset: number) => void,
    /** the carried line grew past maxLine bytes; nothing more is read */
    onTooLong: (offset: number) => void,
    /** true once the reader has stopped (a fatal issue): the rest is not looked at */
    private readonly stopped: () => boolean,
  ) {
    this.carry = new Carry(maxLine, onTooLong);
  }

  /** `base`: the file offset of chunk[0] */
  push(chunk: Uint8Array, base: number): void {
    let from = 0;
    if (this.carry.held) {
      const nl = chunk.indexOf(10);
      if (nl < 0) {
        this.carry.add(chunk);
        return;
      }
      const offset = this.carry.offset;
      const whole = this.carry.take(chunk.subarray(0, nl));
      this.onLine(whole, 0, whole.length, offset);
      from = nl + 1;
    }
    while (from < chunk.length && !this.stopped()) {
      const nl = chunk.indexOf(10, from);
      if (nl < 0) {
        this.carry.start(chunk.subarray(from), base + from);
        return;
      }
      this.onLine(chunk, from, nl, base + from);
      from = nl + 1;
    }
  }

  /** the last line, when the file does not end in a line break */
  finish(): void {
    if (!this.carry.held) return;
    const offset = this.carry.offset;
    const whole = this.carry.take(new Uint8Array(0));
    this.onLine(whole, 0, whole.length, offset);
  }
}

/** The bytes of a line or token cut at a chunk's end, kept until its end arrives, up to a limit. */
export class Carry {
  private parts: Uint8Array[] = [];
  private length = 0;
  /** file offset of the first carried byte */
  offset = 0;
  held = false;

  constructor(
    private readonly max: number,
    private readonly onTooLong: (offset: number) => void,
  ) {}

  /** starts carrying a copy of `bytes` (the caller may reuse its chunk) */
  start(bytes: Uint8Array, offset: number): void {
    this.parts = [bytes.slice()];
    this.length = bytes.length;
    this.offset = offset;
    this.held = true;
    this.check();
  }

  add(bytes: Uint8Array): void {
    this.parts.push(bytes.slice());
    this.length += bytes.length;
    this.check();
  }

  /** the carried bytes followed by `tail`, in one array; carrying stops */
  take(tail: Uint8Array): Uint8Array {
    const out = new Uint8Array(this.length + tail.length);
    let at = 0;
    for (const p of this.parts) {
      out.set(p, at);
      at += p.length;
    }
    out.set(tail, at);
    this.parts = [];
    this.length = 0;
    this.held = false;
    return out;
  }

  private check(): void {
    if (this.length > this.max) {
      this.parts = [];
      this.length = 0;
      this.held = false;
      this.onTooLong(this.offset);
    }
  }
}
