/**
 * In-memory counters over a fixed window that starts at a key's first hit. The server is one
 * process, so memory is the right place: nothing to migrate, and a restart forgets only a few
 * minutes of counts. Keys are capped so a flood of distinct keys cannot grow memory without bound.
 */
export class WindowCounter {
  private readonly hits = new Map<string, { count: number; resetAt: number }>();

  constructor(
    readonly windowMs: number,
    private readonly now: () => number = Date.now,
    private readonly maxKeys = 100_000,
  ) {}

  private live(key: string) {
    const entry = this.hits.get(key);
    if (entry && entry.resetAt <= this.now()) {
      this.hits.delete(key);
      return undefined;
    }
    return entry;
  }

  count(key: string): number {
    return this.live(key)?.count ?? 0;
  }

  /** counts one hit and returns the new count */
  add(key: string): number {
    const entry = this.live(key);
    if (entry) return ++entry.count;
    if (this.hits.size >= this.maxKeys) this.prune();
    this.hits.set(key, { count: 1, resetAt: this.now() + this.windowMs });
    return 1;
  }

  clear(key: string): void {
    this.hits.delete(key);
  }

  /** how long until the key's window ends (0 when it has no hits) */
  retryAfterMs(key: string): number {
    const entry = this.live(key);
    return entry ? Math.max(0, entry.resetAt - this.now()) : 0;
  }

  private prune(): void {
    const now = this.now();
    for (const [key, entry] of this.hits) if (entry.resetAt <= now) this.hits.delete(key);
    // still full: the oldest keys go first (a Map iterates in insertion order)
    for (const key of this.hits.keys()) {
      if (this.hits.size < this.maxKeys) break;
      this.hits.delete(key);
    }
  }
}

/** "3 minutes", "40 seconds": how long to wait, for messages */
export function waitWords(ms: number): string {
  const s = Math.max(1, Math.ceil(ms / 1000));
  if (s < 90) return `${s} second${s === 1 ? '' : 's'}`;
  const m = Math.ceil(s / 60);
  return `${m} minute${m === 1 ? '' : 's'}`;
}
