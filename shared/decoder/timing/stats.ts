// Summary figures of a list of durations, shared by the service statistics and the race summary.

/** How a set of durations spreads; seconds. */
export interface DurationStats {
  count: number;
  min: number;
  /** the middle value (the lower of the two middle ones for an even count) */
  median: number;
  /** 90th percentile, nearest rank */
  p90: number;
  max: number;
  mean: number;
}

/**
 * Stats of the first `n` values of `values` (any order; the array is sorted in place), scaled by
 * `scale` (e.g. seconds per sample). Null when there are none.
 */
export function durationStats(values: Float64Array, n = values.length, scale = 1): DurationStats | null {
  if (n <= 0) return null;
  const v = n === values.length ? values : values.subarray(0, n);
  v.sort();
  let sum = 0;
  for (let i = 0; i < n; i++) sum += v[i];
  const rank = (q: number) => v[Math.min(n - 1, Math.max(0, Math.ceil(q * n) - 1))];
  return {
    count: n,
    min: v[0] * scale,
    median: v[(n - 1) >> 1] * scale,
    p90: rank(0.9) * scale,
    max: v[n - 1] * scale,
    mean: (sum / n) * scale,
  };
}

/** A growable Float64Array: values appended one by one without an object per value. */
export class Float64List {
  data: Float64Array;
  n = 0;

  constructor(capacity = 64) {
    this.data = new Float64Array(Math.max(4, capacity));
  }

  push(x: number): void {
    if (this.n === this.data.length) {
      const next = new Float64Array(this.data.length * 2);
      next.set(this.data);
      this.data = next;
    }
    this.data[this.n++] = x;
  }

  /** a copy of the values, trimmed to length */
  toArray(): Float64Array {
    return this.data.slice(0, this.n);
  }
}

/** The same for small integers (station indices, codes, counts). */
export class Int32List {
  data: Int32Array;
  n = 0;

  constructor(capacity = 64) {
    this.data = new Int32Array(Math.max(4, capacity));
  }

  push(x: number): void {
    if (this.n === this.data.length) {
      const next = new Int32Array(this.data.length * 2);
      next.set(this.data);
      this.data = next;
    }
    this.data[this.n++] = x;
  }

  toArray(): Int32Array {
    return this.data.slice(0, this.n);
  }
}

/** Counts of equal values, most frequent first (ties: smaller value first). */
export function countValues(values: Iterable<number>): { value: number; count: number }[] {
  const m = new Map<number, number>();
  for (const v of values) m.set(v, (m.get(v) ?? 0) + 1);
  return [...m].map(([value, count]) => ({ value, count })).sort((a, b) => b.count - a.count || a.value - b.value);
}
