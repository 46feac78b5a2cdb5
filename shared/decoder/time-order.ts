// Holds frames and line events of several links until no link can still produce anything
// earlier, then lets them out in time order. A binary heap on (sample, arrival).
import type { DecodedFrame, FrameSink, LineEvent } from './types';

interface Held {
  key: number;
  order: number;
  frame: DecodedFrame | null;
  event: LineEvent | null;
}

export class TimeOrder {
  private heap: Held[] = [];
  private order = 0;

  constructor(
    private readonly sink: FrameSink,
    /** items held at most; beyond it the earliest goes out anyway so memory stays bounded */
    private readonly maxHeld = 100_000,
  ) {}

  get size(): number {
    return this.heap.length;
  }

  frame(f: DecodedFrame): void {
    this.add({ key: f.firstSample, order: this.order++, frame: f, event: null });
  }

  event(e: LineEvent): void {
    this.add({ key: e.sample, order: this.order++, frame: null, event: e });
  }

  /** Lets out everything at or before `watermark`, and the earliest items beyond maxHeld. */
  release(watermark: number): void {
    const h = this.heap;
    while (h.length > 0 && (h[0].key <= watermark || h.length > this.maxHeld)) this.out(this.pop());
  }

  flush(): void {
    while (this.heap.length > 0) this.out(this.pop());
  }

  private out(item: Held): void {
    if (item.frame) this.sink.frame(item.frame);
    else if (item.event) this.sink.event(item.event);
  }

  private less(a: Held, b: Held): boolean {
    return a.key < b.key || (a.key === b.key && a.order < b.order);
  }

  private add(item: Held): void {
    const h = this.heap;
    h.push(item);
    let i = h.length - 1;
    while (i > 0) {
      const p = (i - 1) >> 1;
      if (!this.less(h[i], h[p])) break;
      const t = h[i];
      h[i] = h[p];
      h[p] = t;
      i = p;
    }
  }

  private pop(): Held {
    const h = this.heap;
    const top = h[0];
    const last = h.pop()!;
    if (h.length > 0) {
      h[0] = last;
      let i = 0;
      for (;;) {
        const l = 2 * i + 1;
        const r = l + 1;
        let m = i;
        if (l < h.length && this.less(h[l], h[m])) m = l;
        if (r < h.length && this.less(h[r], h[m])) m = r;
        if (m === i) break;
        const t = h[i];
        h[i] = h[m];
        h[m] = t;
        i = m;
      }
    }
    return top;
  }
}
