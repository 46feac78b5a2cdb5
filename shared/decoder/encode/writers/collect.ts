/** Joins a writer's chunks into one array (for tests and small files). */
export function collect(chunks: Iterable<Uint8Array>): Uint8Array {
  const parts: Uint8Array[] = [];
  let total = 0;
  for (const c of chunks) {
    parts.push(c.slice());
    total += c.length;
  }
  const out = new Uint8Array(total);
  let at = 0;
  for (const p of parts) {
    out.set(p, at);
    at += p.length;
  }
  return out;
}

/** Buffers text and hands it out as UTF-8 chunks of about `size` bytes. */
export class TextChunker {
  private parts: string[] = [];
  private length = 0;
  private readonly encoder = new TextEncoder();
  constructor(private readonly size = 1 << 20) {}

  add(s: string): boolean {
    this.parts.push(s);
    this.length += s.length;
    return this.length >= this.size;
  }

  take(): Uint8Array {
    const out = this.encoder.encode(this.parts.join(''));
    this.parts = [];
    this.length = 0;
    return out;
  }

  get pending(): boolean {
    return this.length > 0;
  }
}
