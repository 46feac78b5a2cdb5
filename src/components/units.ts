/** Number formats for captures: sizes, durations, capture time. Plain functions, no React. */

export function formatBytes(n: number): string {
  if (n < 1024) return `${n} B`;
  if (n < 1024 * 1024) return `${(n / 1024).toFixed(1)} KiB`;
  if (n < 1024 ** 3) return `${(n / 1024 / 1024).toFixed(1)} MiB`;
  return `${(n / 1024 ** 3).toFixed(2)} GiB`;
}

/** Capture time: seconds with microsecond digits, the resolution a bit cell at 800 kbit/s needs. */
export function formatSeconds(t: number): string {
  return t.toFixed(6);
}

/** A time difference in the unit that keeps it readable: µs, ms or s. */
export function formatDelta(seconds: number): string {
  const sign = seconds < 0 ? '−' : '+';
  const a = Math.abs(seconds);
  if (a < 1e-3) return `${sign}${(a * 1e6).toFixed(1)} µs`;
  if (a < 1) return `${sign}${(a * 1e3).toFixed(3)} ms`;
  return `${sign}${a.toFixed(3)} s`;
}

export function formatDuration(seconds: number): string {
  if (seconds < 1e-3) return `${(seconds * 1e6).toFixed(1)} µs`;
  if (seconds < 1) return `${(seconds * 1e3).toFixed(2)} ms`;
  if (seconds < 120) return `${seconds.toFixed(3)} s`;
  const m = Math.floor(seconds / 60);
  return `${m} min ${(seconds - m * 60).toFixed(1)} s`;
}

export function formatCount(n: number): string {
  return n.toLocaleString('en-GB');
}

export function formatHexByte(n: number): string {
  return n.toString(16).padStart(2, '0');
}

export function formatFcs(n: number | null): string {
  return n === null ? '—' : `0x${n.toString(16).toUpperCase().padStart(4, '0')}`;
}
