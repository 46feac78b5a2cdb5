// Octet timing where a capture has its clock: how the bit period spreads, from every interval
// between active clock edges. The anomaly tap (faults/anomalies.ts) measures the intervals as it
// checks the clock; this file keeps them as a histogram (no object per edge) and sums them up.

/** How the captured clock's period spread over the capture; seconds. */
export interface ClockSpread {
  /** intervals measured (clock edges that were neither missing nor extra nor a stopped clock) */
  periods: number;
  /** 1 / median period */
  bitRate: number;
  medianSeconds: number;
  meanSeconds: number;
  /** standard deviation */
  sdSeconds: number;
  minSeconds: number;
  maxSeconds: number;
  /** 1st and 99th percentiles */
  p01Seconds: number;
  p99Seconds: number;
  /** (p99 − p01) / median, in percent: how wide the ordinary spread is */
  spreadPercent: number;
  /** periods at least `stretchFraction` of the running period but not long enough to be a missing edge */
  stretched: number;
  /** gaps of about two periods or more (each one or more missing edges) */
  missing: number;
  /** edges far too soon after the previous one */
  extra: number;
  /** the fraction of a period from which one counts as stretched */
  stretchFraction: number;
  /** the periods by length: bin k holds periods from fromSeconds + k·binSeconds */
  histogram: { fromSeconds: number; binSeconds: number; counts: number[] };
}

/** histogram resolution: bins per reference period */
const BINS_PER_PERIOD = 256;
/** longest period kept in the histogram, in reference periods (missing edges start at 1.5) */
const SPAN = 2;

/** Accumulates clock intervals (in samples) against a reference period fixed at the first interval. */
export class ClockPeriodHistogram {
  private ref = 0;
  private readonly counts = new Uint32Array(BINS_PER_PERIOD * SPAN + 1);
  private n = 0;
  private sum = 0;
  private sumSq = 0;
  private min = Infinity;
  private max = 0;
  stretched = 0;
  missing = 0;
  extra = 0;

  constructor(readonly stretchFraction: number) {}

  /** one interval of `samples` samples while the running period is `period` samples */
  add(samples: number, period: number): void {
    if (this.ref === 0) this.ref = period;
    const bin = Math.min(this.counts.length - 1, Math.max(0, Math.round((samples / this.ref) * BINS_PER_PERIOD)));
    this.counts[bin]++;
    this.n++;
    this.sum += samples;
    this.sumSq += samples * samples;
    if (samples < this.min) this.min = samples;
    if (samples > this.max) this.max = samples;
  }

  /**
   * `times` intervals of `samples` samples each, as that many add() calls would leave it: the sums
   * are multiplied out only while they stay whole numbers below 2^53, where adding is exact and so
   * order-free; otherwise added one by one.
   */
  addRepeated(samples: number, times: number, period: number): void {
    if (times <= 0) return;
    const sum = this.sum + samples * times;
    const sumSq = this.sumSq + samples * samples * times;
    if (!(Number.isInteger(samples) && Number.isSafeInteger(sumSq) && Number.isSafeInteger(sum) && Number.isInteger(this.sum) && Number.isInteger(this.sumSq))) {
      for (let k = 0; k < times; k++) this.add(samples, period);
      return;
    }
    if (this.ref === 0) this.ref = period;
    const bin = Math.min(this.counts.length - 1, Math.max(0, Math.round((samples / this.ref) * BINS_PER_PERIOD)));
    this.counts[bin] += times;
    this.n += times;
    this.sum = sum;
    this.sumSq = sumSq;
    if (samples < this.min) this.min = samples;
    if (samples > this.max) this.max = samples;
  }

  /** null before any interval */
  spread(samplePeriodSeconds: number): ClockSpread | null {
    if (this.n === 0) return null;
    const unit = (this.ref / BINS_PER_PERIOD) * samplePeriodSeconds;
    const quantile = (q: number) => {
      const target = Math.max(1, Math.ceil(q * this.n));
      let seen = 0;
      for (let k = 0; k < this.counts.length; k++) {
        seen += this.counts[k];
        if (seen >= target) return k * unit;
      }
      return (this.counts.length - 1) * unit;
    };
    const mean = this.sum / this.n;
    const variance = Math.max(0, this.sumSq / this.n - mean * mean);
    let first = 0;
    while (this.counts[first] === 0) first++;
    let last = this.counts.length - 1;
    while (this.counts[last] === 0) last--;
    // the exact extremes are known; the median from the histogram is good to 1/256 of a period
    const median = Math.min(Math.max(quantile(0.5), this.min * samplePeriodSeconds), this.max * samplePeriodSeconds);
    const p01 = Math.max(quantile(0.01), this.min * samplePeriodSeconds);
    const p99 = Math.min(quantile(0.99), this.max * samplePeriodSeconds);
    return {
      periods: this.n,
      bitRate: 1 / median,
      medianSeconds: median,
      meanSeconds: mean * samplePeriodSeconds,
      sdSeconds: Math.sqrt(variance) * samplePeriodSeconds,
      minSeconds: this.min * samplePeriodSeconds,
      maxSeconds: this.max * samplePeriodSeconds,
      p01Seconds: p01,
      p99Seconds: p99,
      spreadPercent: ((p99 - p01) / median) * 100,
      stretched: this.stretched,
      missing: this.missing,
      extra: this.extra,
      stretchFraction: this.stretchFraction,
      histogram: { fromSeconds: first * unit, binSeconds: unit, counts: Array.from(this.counts.subarray(first, last + 1)) },
    };
  }
}
