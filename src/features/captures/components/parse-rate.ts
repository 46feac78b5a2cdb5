/** "4M", "800k", "8000000", "1.5 MHz" → per second; null when it is none of these */
export function parseRate(text: string): number | null {
  const m = /^\s*(\d+(?:\.\d+)?)\s*([kKmMgG])?\s*(?:hz|Hz|HZ|\/s|bit\/s)?\s*$/.exec(text);
  if (!m) return null;
  const scale = { k: 1e3, m: 1e6, g: 1e9 }[(m[2] ?? '').toLowerCase() as 'k' | 'm' | 'g'] ?? 1;
  const v = Number(m[1]) * scale;
  return v > 0 ? Math.round(v) : null;
}
