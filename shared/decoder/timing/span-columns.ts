// Spans on a time axis kept as columns (typed arrays) so a lane of a million frames is a few
// arrays, not a million objects; sorted by start. The schedule's rows are made of these.

export interface SpanColumns {
  /** seconds */
  start: Float64Array;
  end: Float64Array;
  /** a small category per span (frame status, exchange outcome, station lane…) */
  code: Uint8Array;
  /** the caller's id per span (frame or exchange id; -1 when none) */
  id: Float64Array;
  n: number;
  /** the longest span, so a window finds spans that began before it */
  maxLength: number;
}

/** Builds SpanColumns span by span; spans may come in any order (sorted on build when needed). */
export class SpanBuilder {
  private start = new Float64Array(16);
  private end = new Float64Array(16);
  private code = new Uint8Array(16);
  private id = new Float64Array(16);
  n = 0;
  private sorted = true;
  private maxLength = 0;

  add(start: number, end: number, code: number, id = -1): void {
    if (this.n === this.start.length) {
      const grow = <T extends Float64Array | Uint8Array>(a: T): T => {
        const b = new (a.constructor as { new (n: number): T })(a.length * 2);
        b.set(a);
        return b;
      };
      this.start = grow(this.start);
      this.end = grow(this.end);
      this.code = grow(this.code);
      this.id = grow(this.id);
    }
    if (this.n > 0 && start < this.start[this.n - 1]) this.sorted = false;
    const e = Math.max(start, end);
    this.start[this.n] = start;
    this.end[this.n] = e;
    this.code[this.n] = code;
    this.id[this.n] = id;
    if (e - start > this.maxLength) this.maxLength = e - start;
    this.n++;
  }

  build(): SpanColumns {
    const n = this.n;
    let start = this.start.slice(0, n);
    let end = this.end.slice(0, n);
    let code = this.code.slice(0, n);
    let id = this.id.slice(0, n);
    if (!this.sorted) {
      const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => start[a] - start[b] || a - b);
      start = Float64Array.from(order, (i) => this.start[i]);
      end = Float64Array.from(order, (i) => this.end[i]);
      code = Uint8Array.from(order, (i) => this.code[i]);
      id = Float64Array.from(order, (i) => this.id[i]);
    }
    return { start, end, code, id, n, maxLength: this.maxLength };
  }
}

/** Index of the first span that can reach `from` (it may still end before it). */
export function firstReaching(s: SpanColumns, from: number): number {
  const t = from - s.maxLength;
  let lo = 0;
  let hi = s.n;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (s.start[mid] < t) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

export const emptySpans = (): SpanColumns => ({ start: new Float64Array(0), end: new Float64Array(0), code: new Uint8Array(0), id: new Float64Array(0), n: 0, maxLength: 0 });
