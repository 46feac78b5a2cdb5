/** Seconds per unit of the time units $timescale allows: 1, 10 or 100 of s, ms, us, ns, ps, fs (IEEE Std 1364-2001 §18.2.3.5; subclause from a secondary source). */
const UNITS: Record<string, number> = { s: 1, ms: 1e-3, us: 1e-6, ns: 1e-9, ps: 1e-12, fs: 1e-15 };

/** "1ps", "10 ns", "100 us" → seconds; null when it is not 1/10/100 of a known unit */
export function parseTimescale(text: string): number | null {
  const m = /^\s*(1|10|100)\s*(s|ms|us|ns|ps|fs)\s*$/.exec(text);
  if (!m) return null;
  // 10 × 1e-9 is not exactly 1e-8 in floating point; build from the decimal exponent instead
  const exp = Math.round(Math.log10(UNITS[m[2]])) + (m[1].length - 1);
  return Number(`1e${exp}`);
}

/** seconds → "1 ns" style text, or null when not a power of ten in range */
export function formatTimescale(seconds: number): string | null {
  const exp = Math.round(Math.log10(seconds));
  if (Math.abs(Number(`1e${exp}`) - seconds) > seconds * 1e-9) return null;
  for (const [unit, e] of [['s', 0], ['ms', -3], ['us', -6], ['ns', -9], ['ps', -12], ['fs', -15]] as const) {
    const d = exp - e;
    if (d >= 0 && d <= 2) return `${10 ** d} ${unit}`;
  }
  return null;
}
