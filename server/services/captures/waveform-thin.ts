/**
 * Thins one channel's level changes for drawing: the window is cut into `points` columns and each
 * column keeps at most its first two changes and its last. Two-level signals lose nothing a screen
 * can show: a column with several changes still draws as a stroke from low to high, and the level
 * at every column's end is exact. A channel with few changes comes back as it was.
 */
export function thinChanges(changes: [number, number][], from: number, to: number, points: number): [number, number][] {
  if (changes.length <= 3 * points + 1) return changes;
  const width = Math.max(1, (to - from + 1) / points);
  const out: [number, number][] = [changes[0]];
  let column = -1;
  let kept = 0;
  let last: [number, number] | null = null;
  for (let i = 1; i < changes.length; i++) {
    const c = changes[i];
    const k = Math.floor((c[0] - from) / width);
    if (k !== column) {
      if (last) out.push(last);
      last = null;
      column = k;
      kept = 0;
    }
    if (kept < 2) {
      out.push(c);
      kept++;
    } else last = c;
  }
  if (last) out.push(last);
  return out;
}
