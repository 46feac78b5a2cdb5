// Bit time from the intervals between a line's level changes, and clock period from a clock's.
//
// On a data line every change falls on a bit-cell boundary, so each interval is a whole number
// k of bit times T (k ≥ 1; zero-bit insertion keeps k ≤ 7 on an NRZI line, NRZ has no bound).
// T is first taken from the shortest interval cluster with real mass, then refined by the
// least-squares fit of T to all intervals of up to MAX_CELLS cells (T = Σ interval / Σ k). The
// spread is the cell-to-cell variation of the per-interval estimate (interval / k), weighted by
// k: jitter and sampling granularity show up there.

/** intervals longer than this many cells are left out of the fit (long NRZ runs, idle) */
const MAX_CELLS = 8;
/** pulses shorter than this share of the first guess are glitches */
const GLITCH = 0.5;

export interface BitTimeEstimate {
  /** samples per bit cell */
  samplesPerBit: number;
  /** relative spread (standard deviation) of the per-interval cell time, e.g. 0.003 */
  spread: number;
  /** intervals the fit used */
  intervals: number;
}

/** Sorted copy of the first n values. */
function sorted(values: ArrayLike<number>, n: number): Float64Array {
  const a = new Float64Array(n);
  for (let i = 0; i < n; i++) a[i] = values[i];
  a.sort();
  return a;
}

/**
 * Estimates the bit time of a data line from the intervals between its level changes
 * (in samples). Null when there are too few intervals to say.
 */
export function estimateBitTime(values: ArrayLike<number>, n = values.length, minIntervals = 24): BitTimeEstimate | null {
  if (n < minIntervals) return null;
  const iv = sorted(values, n);
  // the 5th percentile lies in the one-cell cluster of any line with frames on it (flags alone
  // give a one-cell interval per flag); glitches below it are dropped by the cluster bounds
  let t = iv[Math.floor(n * 0.05)];
  if (!(t > 0)) return null;
  let lo = 0;
  while (lo < n && iv[lo] < t * GLITCH) lo++;
  // the one-cell cluster's middle
  let sum = 0;
  let count = 0;
  for (let i = lo; i < n && iv[i] < t * 1.45; i++) {
    sum += iv[i];
    count++;
  }
  if (count === 0) return null;
  t = sum / count;
  for (let pass = 0; pass < 3; pass++) {
    let sumI = 0;
    let sumK = 0;
    for (let i = lo; i < n; i++) {
      const k = Math.round(iv[i] / t);
      if (k < 1 || k > MAX_CELLS) continue;
      sumI += iv[i];
      sumK += k;
    }
    if (sumK === 0) return null;
    t = sumI / sumK;
    // when many intervals fall half-way between multiples, the guess was two cells long
    let off = 0;
    let used = 0;
    for (let i = lo; i < n; i++) {
      const x = iv[i] / t;
      if (x > MAX_CELLS + 0.5) continue;
      used++;
      if (Math.abs(x - Math.round(x)) > 0.3) off++;
    }
    if (used > 0 && off > used * 0.2) t /= 2;
  }
  let w = 0;
  let acc = 0;
  let used = 0;
  for (let i = lo; i < n; i++) {
    const k = Math.round(iv[i] / t);
    if (k < 1 || k > MAX_CELLS) continue;
    const d = iv[i] / k - t;
    acc += k * d * d;
    w += k;
    used++;
  }
  if (used < minIntervals / 2) return null;
  return { samplesPerBit: t, spread: Math.sqrt(acc / w) / t, intervals: used };
}

export interface ClockEstimate {
  /** samples per clock period (one bit) */
  period: number;
  /** share of periods within ±25 % of the typical one: 1 for a perfect clock */
  regularity: number;
  spread: number;
}

/**
 * A clock line's period from the intervals between its changes: each period is a high and a low
 * half, so consecutive pairs are summed (a duty cycle other than 50 % does not matter).
 */
export function estimateClock(values: ArrayLike<number>, n = values.length): ClockEstimate | null {
  if (n < 16) return null;
  const pairs = new Float64Array(n - 1);
  for (let i = 0; i + 1 < n; i++) pairs[i] = values[i] + values[i + 1];
  const s = sorted(pairs, pairs.length);
  const median = s[s.length >> 1];
  if (!(median > 0)) return null;
  let inside = 0;
  let sum = 0;
  for (let i = 0; i < s.length; i++) {
    if (s[i] >= median * 0.75 && s[i] <= median * 1.25) {
      inside++;
      sum += s[i];
    }
  }
  const period = sum / Math.max(1, inside);
  let acc = 0;
  for (let i = 0; i < s.length; i++) if (s[i] >= median * 0.75 && s[i] <= median * 1.25) acc += (s[i] - period) ** 2;
  return { period, regularity: inside / s.length, spread: Math.sqrt(acc / Math.max(1, inside)) / period };
}

/** "800 000 bit/s", with thin spaces between thousands as the product writes numbers. */
export function formatBitRate(bitsPerSecond: number): string {
  const digits = bitsPerSecond >= 100 ? 3 : 2;
  const rounded = Number(bitsPerSecond.toPrecision(digits + (bitsPerSecond >= 1e6 ? 1 : 0)));
  return `${groupDigits(Math.round(rounded))} bit/s`;
}

export function groupDigits(n: number): string {
  return String(n).replace(/\B(?=(\d{3})+(?!\d))/g, ' ');
}

/** "± 0.3 %" */
export function formatSpread(spread: number): string {
  const pct = spread * 100;
  return `± ${pct < 0.1 ? '< 0.1' : pct < 10 ? pct.toFixed(1) : pct.toFixed(0)} %`;
}
