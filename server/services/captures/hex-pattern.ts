/**
 * Hex byte patterns ("14 00", "1400", "14 ?? 00"): normalised to tokens of two lower-case hex
 * digits or "??". A match must start on a byte boundary of the frame's hex string.
 */
export function hexTokens(pattern: string): string[] {
  return (pattern.toLowerCase().match(/\?\?|[0-9a-f]{2}/g) ?? []) as string[];
}

/** the longest run of literal bytes, as hex, for the trigram prefilter */
export function longestLiteral(tokens: string[]): string {
  let best = '';
  let run = '';
  for (const t of tokens) {
    if (t === '??') run = '';
    else {
      run += t;
      if (run.length > best.length) best = run;
    }
  }
  return best;
}

const cache = new Map<string, RegExp>();

/** true when the byte pattern (normalised, tokens joined by spaces) occurs in hex at an even offset */
export function hexMatches(hex: string, normalised: string): boolean {
  let re = cache.get(normalised);
  if (!re) {
    const body = normalised
      .split(' ')
      .map((t) => (t === '??' ? '[0-9a-f]{2}' : t))
      .join('');
    re = new RegExp(`^(?:[0-9a-f]{2})*?${body}`);
    if (cache.size > 200) cache.clear();
    cache.set(normalised, re);
  }
  return re.test(hex);
}

/** Adds hex_match(hex, pattern) to a connection: the timeline's hex search checks alignment and ?? wildcards with it after the trigram prefilter. */
export function registerHexMatch(sqlite: { function(name: string, options: { deterministic: boolean }, fn: (a: unknown, b: unknown) => number): unknown }): void {
  sqlite.function('hex_match', { deterministic: true }, (hex: unknown, pattern: unknown) =>
    typeof hex === 'string' && typeof pattern === 'string' && hexMatches(hex, pattern) ? 1 : 0,
  );
}
