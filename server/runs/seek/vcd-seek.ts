// Seek index for value change dumps. A VCD reader cannot start mid-file: it needs the header
// (identifier codes) and every channel's level. While a run decodes, this tracker follows the
// body's time and levels; every ~256 KB, at the start of a "#time" token, it records the byte
// offset, the time before it and the levels there. A window is read later by feeding a fresh
// reader the header, one synthetic "#time" with those levels, and the file from that offset.
import { VcdReader } from '../../../shared/decoder/readers';

export const SEEK_SPACING = 256 << 10;

export interface SeekPoint {
  byteOffset: number;
  sample: number;
  levels: number[];
}

/** Byte offset just past "$enddefinitions $end", or -1 when the bytes end first. */
export function headerEnd(bytes: Uint8Array): number {
  const text = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.length).toString('latin1');
  const at = text.indexOf('$enddefinitions');
  if (at < 0) return -1;
  const end = text.indexOf('$end', at + '$enddefinitions'.length);
  return end < 0 ? -1 : end + 4;
}

/** identifier code → channel indices, from a complete header */
export function headerIds(header: Uint8Array): { ids: Map<string, number[]>; channels: number } {
  const reader = new VcdReader({}, { header: () => {}, transitions: () => {} });
  reader.push(header);
  const ids = new Map<string, number[]>();
  for (const v of reader.vars) if (v.channel >= 0) ids.set(v.id, [...(ids.get(v.id) ?? []), v.channel]);
  return { ids, channels: reader.channels.length };
}

/** The "#time" line and value lines that put a fresh reader at `p`. */
export function resumeText(p: SeekPoint, ids: Map<string, number[]>): Uint8Array {
  // the leading line break ends the header's last token, which a reader holds until whitespace follows
  let s = `\n#${p.sample}\n`;
  for (const [id, chans] of ids) s += `${'01x'[p.levels[chans[0]]] ?? 'x'}${id}\n`;
  return Buffer.from(s, 'latin1');
}

export class VcdSeekTracker {
  private head: Uint8Array[] = [];
  private headLength = 0;
  private ids: Map<string, number[]> | null = null;
  private levels: Uint8Array = new Uint8Array(0);
  private time = 0;
  private lastPoint = 0;
  private carry = '';
  private carryOffset = 0;
  /** 1: the next token is a vector's or real's identifier, skipped */
  private skipNext = false;
  private inComment = false;

  constructor(private readonly record: (p: SeekPoint) => void) {}

  push(chunk: Uint8Array, base: number): void {
    if (!this.ids) {
      this.head.push(chunk.slice());
      this.headLength += chunk.length;
      const all = Buffer.concat(this.head);
      const end = headerEnd(all);
      if (end < 0) {
        if (this.headLength > 64 << 20) this.head = []; // not a VCD header we can use; stop collecting
        return;
      }
      const { ids, channels } = headerIds(all.subarray(0, end));
      this.ids = ids;
      this.levels = new Uint8Array(channels).fill(2);
      this.head = [];
      this.lastPoint = end;
      this.scan(all.subarray(end), end);
      return;
    }
    this.scan(chunk, base);
  }

  private scan(bytes: Uint8Array, base: number): void {
    const text = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.length).toString('latin1');
    let i = 0;
    const n = text.length;
    if (this.carry) {
      while (i < n && text.charCodeAt(i) > 32) i++;
      const tok = this.carry + text.slice(0, i);
      const at = this.carryOffset;
      this.carry = '';
      if (i === n) {
        this.carry = tok;
        this.carryOffset = at;
        return;
      }
      this.token(tok, at);
    }
    while (i < n) {
      if (text.charCodeAt(i) <= 32) {
        i++;
        continue;
      }
      const start = i;
      while (i < n && text.charCodeAt(i) > 32) i++;
      if (i === n) {
        this.carry = text.slice(start);
        this.carryOffset = base + start;
        return;
      }
      this.token(text.slice(start, i), base + start);
    }
  }

  private token(tok: string, offset: number): void {
    if (this.skipNext) {
      this.skipNext = false;
      return;
    }
    if (this.inComment) {
      if (tok === '$end') this.inComment = false;
      return;
    }
    const c = tok[0];
    if (c === '#') {
      if (offset - this.lastPoint >= SEEK_SPACING) {
        this.record({ byteOffset: offset, sample: this.time, levels: Array.from(this.levels) });
        this.lastPoint = offset;
      }
      const t = Number(tok.slice(1));
      if (Number.isFinite(t) && t >= this.time) this.time = t;
    } else if (c === '0' || c === '1' || c === 'x' || c === 'X' || c === 'z' || c === 'Z') {
      const chans = this.ids!.get(tok.slice(1));
      if (chans) for (const ch of chans) this.levels[ch] = c === '0' ? 0 : c === '1' ? 1 : 2;
    } else if (c === 'b' || c === 'B' || c === 'r' || c === 'R') {
      this.skipNext = true;
    } else if (tok === '$comment') {
      this.inComment = true;
    }
  }
}
