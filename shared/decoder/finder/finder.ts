// The settings finder: trial decodes of a capture's head (and of windows spread over the file
// when the head is idle) under every plausible setting, ranked by good frames.
//
// Pure and I/O-free: the caller reads the bytes. `SettingsFinder` says which bytes it wants next
// (`next()`) and takes them in any chunks (`push`); `findSettings` drives it from an async
// source (a file on the server, a File in the browser). Input is processed in fixed slices from
// each window's start, so the result does not depend on how the bytes were chunked.
import { detectFormat, onesRuns } from '../readers/detect';
import type { CaptureFormat, DecodeIssue } from '../types';
import { Family, type FamilySpec, type TrialConstraints } from './family';
import { rankCandidates, type FinderCandidate } from './rank';
import { describeFailure, describeTried, summaryLine } from './evidence';
import { DEFAULT_BUDGET, resyncPoint, spreadWindows, textHeader, type FinderBudget, type PlannedWindow } from './windows';

export interface FinderOptions extends TrialConstraints {
  /** a format the user chose; default: detected from the content, binary formats tried both ways */
  format?: CaptureFormat;
  budget?: Partial<FinderBudget>;
}

export interface ReadRequest {
  offset: number;
  length: number;
}

export interface FinderWindow {
  offset: number;
  length: number;
  /** bytes actually decoded */
  decoded: number;
  /** seconds of line time (null without a time base) */
  lineSeconds: number | null;
}

export interface FinderResult {
  /** true when some setting decoded at least one frame with a good FCS */
  found: boolean;
  /** best first; every setting that was tried */
  ranking: FinderCandidate[];
  best: FinderCandidate | null;
  runnerUp: FinderCandidate | null;
  /** "NRZ, rising, not inverted: 412 frames, 409 good · NRZI: 0 good of 61" */
  summary: string;
  /** what the format detection said */
  detection: { format: CaptureFormat | null; reason: string; tried: CaptureFormat[] };
  /** what was tried, one line per dimension */
  tried: string[];
  /** when nothing decoded: what to check, in words a restorer can act on */
  advice: string[];
  /** probing safety, shown wherever the advice is */
  cautions: string[];
  windows: FinderWindow[];
  bytesRead: number;
  /** seconds of line time decoded (null when the capture gives no time base) */
  lineSeconds: number | null;
  /** a problem that stopped a way of reading the file (e.g. no sample rate for a sample-index CSV) */
  issues: DecodeIssue[];
}

/** how many good frames make a candidate worth stopping for */
const STOP_GOOD = 32;
/** after the head: this many good frames are enough not to read further windows */
const ENOUGH_GOOD = 8;
const DETECT_BYTES = 64 * 1024;

interface Current {
  plan: PlannedWindow;
  /** bytes of the window received so far */
  received: number;
  buffered: Uint8Array[];
  bufferedLength: number;
  /** bytes of the window handed to the families */
  fed: number;
  started: boolean;
  /** bytes to skip at the window's start before a reader can take it up */
  skip: number | null;
  stopped: boolean;
}

export class SettingsFinder {
  private readonly budget: FinderBudget;
  private families: Family[] | null = null;
  private detection: FinderResult['detection'] = { format: null, reason: '', tried: [] };
  private readonly windows: PlannedWindow[];
  private windowIndex = 0;
  private current: Current | null = null;
  private planned = false;
  private done = false;
  private clear = false;
  private readBytes = 0;
  private readonly finished: FinderWindow[] = [];
  private header: Uint8Array | null = null;
  /** decoded input of each window (prefix included), kept to re-decode under the chosen setting */
  readonly kept: { offset: number; input: Uint8Array[] }[] = [];
  private keptBytes = 0;

  constructor(
    readonly size: number,
    private readonly options: FinderOptions = {},
  ) {
    this.budget = { ...DEFAULT_BUDGET, ...options.budget };
    this.windows = size > 0 ? [{ offset: 0, length: Math.min(size, this.budget.headBytes) }] : [];
    if (size === 0) this.done = true;
  }

  get bytesRead(): number {
    return this.readBytes;
  }

  /** The bytes wanted next, or null when the finder has its answer. */
  next(): ReadRequest | null {
    for (;;) {
      if (this.done) return null;
      const cur = this.current;
      if (cur && cur.received < cur.plan.length && !cur.stopped) return { offset: cur.plan.offset + cur.received, length: cur.plan.length - cur.received };
      if (cur) this.endWindow();
      if (this.done) return null;
      if (this.windowIndex >= this.windows.length && !this.planMore()) {
        this.done = true;
        return null;
      }
      const plan = this.windows[this.windowIndex++];
      this.current = { plan, received: 0, buffered: [], bufferedLength: 0, fed: 0, started: false, skip: plan.offset === 0 ? 0 : null, stopped: false };
    }
  }

  /** Bytes for the last request, from its offset on; fewer than asked is fine. */
  push(bytes: Uint8Array): void {
    const cur = this.current;
    if (!cur || cur.stopped || bytes.length === 0) return;
    const take = bytes.subarray(0, cur.plan.length - cur.received);
    cur.received += take.length;
    this.readBytes += take.length;
    cur.buffered.push(take.slice());
    cur.bufferedLength += take.length;
    this.pump();
  }

  private pump(): void {
    const cur = this.current!;
    const complete = cur.received >= cur.plan.length;
    if (!cur.started) {
      if (cur.bufferedLength < Math.min(this.budget.probeBytes, cur.plan.length) && !complete) return;
      this.startWindow(cur);
      if (this.done || cur.stopped) return;
    }
    const slice = this.budget.sliceBytes;
    while (!cur.stopped && (cur.bufferedLength >= slice || (complete && cur.bufferedLength > 0))) {
      let chunk = this.take(cur, Math.min(slice, cur.bufferedLength));
      if (complete && cur.bufferedLength === 0) chunk = this.trimEnd(cur, chunk);
      this.feed(cur, chunk);
      this.afterSlice(cur);
    }
  }

  private take(cur: Current, n: number): Uint8Array {
    const out = new Uint8Array(n);
    let at = 0;
    while (at < n) {
      const b = cur.buffered[0];
      const k = Math.min(b.length, n - at);
      out.set(b.subarray(0, k), at);
      at += k;
      if (k === b.length) cur.buffered.shift();
      else cur.buffered[0] = b.subarray(k);
    }
    cur.bufferedLength -= n;
    return out;
  }

  /** a window that stops before the file's end loses its cut last line (text formats) */
  private trimEnd(cur: Current, chunk: Uint8Array): Uint8Array {
    const atEnd = cur.plan.offset + cur.plan.length >= this.size;
    const f = this.detection.format;
    if (atEnd || !f || f === 'raw' || f === 'octets') return chunk;
    const nl = chunk.lastIndexOf(10);
    return nl < 0 ? chunk : chunk.subarray(0, nl + 1);
  }

  private startWindow(cur: Current): void {
    cur.started = true;
    const head = this.peek(cur, Math.min(this.budget.probeBytes, cur.bufferedLength));
    if (!this.families) {
      this.families = this.makeFamilies(head.subarray(0, DETECT_BYTES));
      if (this.families.length === 0) {
        this.done = true;
        cur.stopped = true;
        return;
      }
      const text = this.families[0].spec.format;
      if (text === 'vcd' || text === 'csv') this.header = textHeader(text, head);
    }
    // a window from the middle of a text capture starts after the file's header, at a line start
    const format = this.families[0].spec.format;
    let skip = 0;
    if (cur.plan.offset > 0) skip = resyncPoint(format, head);
    cur.skip = skip;
    if (skip > 0) this.take(cur, Math.min(skip, cur.bufferedLength));
    const prefix = cur.plan.offset > 0 && this.header ? [this.header] : [];
    const probeInput = [...prefix, this.peek(cur, Math.min(this.budget.probeBytes, cur.bufferedLength))];
    for (const f of this.families) {
      f.startWindow(probeInput);
      for (const p of prefix) f.push(p);
    }
    this.kept.push({ offset: cur.plan.offset + skip, input: [...prefix] });
  }

  private peek(cur: Current, n: number): Uint8Array {
    const out = new Uint8Array(n);
    let at = 0;
    for (const b of cur.buffered) {
      if (at >= n) break;
      const k = Math.min(b.length, n - at);
      out.set(b.subarray(0, k), at);
      at += k;
    }
    return out;
  }

  private feed(cur: Current, chunk: Uint8Array): void {
    cur.fed += chunk.length;
    for (const f of this.families!) f.push(chunk);
    const keep = this.kept[this.kept.length - 1];
    keep.input.push(chunk);
    this.keptBytes += chunk.length;
  }

  private afterSlice(cur: Current): void {
    const fams = this.families!;
    const ranking = this.rank();
    // a way of reading the file that found frames but not one good, while another reads good
    // frames, is not read further
    const bestOf = (f: Family) => ranking.find((c) => c.key.startsWith(`${f.spec.key}|`));
    const leader = ranking[0];
    if (leader && leader.good >= ENOUGH_GOOD) {
      for (const f of fams) {
        const b = bestOf(f);
        if (!f.retired && b && b.good === 0 && b.frames >= 64) f.retired = true;
      }
    }
    if (isClear(ranking)) {
      this.clear = true;
      cur.stopped = true;
      return;
    }
    // enough line time in this window
    const timed = fams.filter((f) => f.timeBase && !f.issue);
    if (timed.length > 0 && timed.every((f) => f.windowSeconds() >= this.budget.windowSeconds)) cur.stopped = true;
  }

  private endWindow(): void {
    const cur = this.current!;
    this.current = null;
    if (!cur.started && this.families && cur.bufferedLength > 0) {
      // a window shorter than the probe that never started (cannot happen with complete reads)
      this.startWindow(cur);
    }
    if (!this.families) return;
    const timed = this.families.find((f) => f.timeBase && !f.issue);
    const seconds = timed ? timed.windowSeconds() : null;
    for (const f of this.families) f.endWindow();
    this.finished.push({ offset: cur.plan.offset, length: cur.plan.length, decoded: cur.fed, lineSeconds: seconds });
    if (this.clear) {
      this.done = true;
      return;
    }
    const best = this.rank()[0];
    if (best && best.good >= ENOUGH_GOOD) this.done = true;
    if (this.families.every((f) => f.issue)) this.done = true;
  }

  private planMore(): boolean {
    if (this.planned) return false;
    this.planned = true;
    const f = this.families?.[0];
    if (!f) return false;
    const align = f.spec.format === 'raw' ? (this.families!.some((x) => x.spec.rawWidth === 2) ? 2 : 1) : 1;
    const more = spreadWindows(this.size, this.windows[0].length, this.budget, align);
    this.windows.push(...more);
    return more.length > 0;
  }

  private makeFamilies(head: Uint8Array): Family[] {
    const o = this.options;
    const detected = detectFormat(head);
    let formats: CaptureFormat[];
    if (o.format) formats = [o.format];
    else if (detected.format === 'raw' || detected.format === 'octets') {
      // detection in doubt names the other format; the finder's own test may add it too
      formats = [...new Set<CaptureFormat>([detected.format, ...(detected.alternatives ?? []), ...binaryDoubt(head, detected.format)])];
    }
    else if (detected.format) formats = [detected.format];
    else if (!looksLikeText(head)) {
      // detection could not tell: both, the likelier first
      const { r1, r2 } = repeats(head);
      formats = Math.max(r1, r2) >= 0.5 ? ['raw', 'octets'] : ['octets', 'raw'];
    }
    else formats = [];
    this.detection = { format: detected.format, reason: detected.reason, tried: formats };
    const specs: FamilySpec[] = [];
    for (const format of formats) {
      if (format === 'raw') {
        const widths = o.rawWidth ? [o.rawWidth] : rawWidths(head);
        for (const w of widths) specs.push({ key: `raw${w}`, format, rawWidth: w });
      } else specs.push({ key: format, format, rawWidth: null });
    }
    return specs.map((s) => new Family(s, o));
  }

  /** Channels named like handshake lines (RTS, CTS, DCD, DTR, DSR) in a sample capture. */
  handshakeLines(): { channel: string; role: string }[] {
    const f = this.families?.find((x) => x.handshake.size > 0);
    return f ? [...f.handshake].map(([channel, role]) => ({ channel, role })) : [];
  }

  private rank(): FinderCandidate[] {
    return rankCandidates(this.families ?? []);
  }

  /** The ranking and its evidence (call when next() returns null, or any time for the state so far). */
  result(): FinderResult {
    const ranking = this.rank();
    const fams = this.families ?? [];
    const best = ranking.length && ranking[0].good > 0 ? ranking[0] : null;
    const timed = fams.find((f) => f.timeBase && !f.issue);
    const issues = fams.map((f) => f.issue).filter((i): i is DecodeIssue => i !== null);
    const tried = describeTried(fams, ranking, this.detection);
    return {
      found: best !== null,
      ranking,
      best,
      runnerUp: best ? ranking[1] ?? null : null,
      summary: best ? summaryLine(ranking) : 'No setting decoded a frame with a good FCS.',
      detection: this.detection,
      tried,
      advice: best ? [] : describeFailure(fams, ranking, this.detection, this.readBytes, this.size),
      cautions: best ? [] : PROBING_CAUTIONS,
      windows: this.finished,
      bytesRead: this.readBytes,
      lineSeconds: timed ? timed.lineSeconds() : null,
      issues,
    };
  }
}

/** Shown wherever the finder suggests checking probe points (product rule: safety first). */
export const PROBING_CAUTIONS = [
  'Switch the machines off before moving probes; mains-powered supplies and the CRT’s high voltage stay dangerous inside an open cabinet.',
  'RS-232 lines swing ±12 V: never clip a 3.3 V analyzer input onto them without a level shifter or divider; probe on the logic side of the line drivers.',
  'Follow local electrical codes, and get qualified help when in doubt.',
];

/** One candidate is ahead and nothing sits between "as good" and "far behind". */
function isClear(ranking: FinderCandidate[]): boolean {
  const best = ranking[0];
  if (!best || best.good < STOP_GOOD || best.goodShare < 0.5) return false;
  for (let i = 1; i < ranking.length; i++) {
    const g = ranking[i].good;
    if (g < best.good * 0.9 && g > best.good / 3) return false;
  }
  return true;
}

/**
 * The other binary format, when the head fits it too. Detection tells samples from line bits by
 * their statistics; a raw capture with a fast clock bit can look like line bits and an idle octet
 * stream like samples, so the doubtful ones are decoded both ways and the frames decide.
 */
export function binaryDoubt(head: Uint8Array, detected: 'raw' | 'octets'): CaptureFormat[] {
  if (head.length === 0) return [];
  if (detected === 'octets') {
    // samples take few distinct values (a handful of channels)
    const seen = new Uint8Array(256);
    let distinct = 0;
    for (const b of head) if (!seen[b]) {
      seen[b] = 1;
      distinct++;
    }
    return distinct <= 64 ? ['raw'] : [];
  }
  // samples repeat from one to the next (at one or two bytes' distance); line bits do so only in
  // fill. Line bits have runs of exactly six 1s (flags) and few longer ones short of idle:
  // detection wants ten times more of the first, in doubt from three times.
  const { r1, r2 } = repeats(head);
  if (Math.max(r1, r2) >= 0.5) return [];
  const runs = onesRuns(head);
  return runs.six >= 4 && runs.sevenToFourteen <= runs.six / 3 ? ['octets'] : [];
}

/** share of bytes equal to the one before (r1) and to the one two before (r2) */
function repeats(head: Uint8Array): { r1: number; r2: number } {
  let one = 0;
  let two = 0;
  const n = head.length;
  for (let i = 2; i < n; i++) {
    if (head[i] === head[i - 1]) one++;
    if (head[i] === head[i - 2]) two++;
  }
  return n < 3 ? { r1: 0, r2: 0 } : { r1: one / (n - 2), r2: two / (n - 2) };
}

/** Raw sample width: two-byte samples repeat at a distance of two bytes rather than one. */
function rawWidths(head: Uint8Array): (1 | 2)[] {
  if (head.length < 3) return [1];
  const { r1, r2 } = repeats(head);
  if (r2 > r1 + 0.15) return [2];
  if (r1 >= r2) return [1];
  return [1, 2];
}

function looksLikeText(bytes: Uint8Array): boolean {
  let printable = 0;
  for (const b of bytes) if ((b >= 32 && b < 127) || b === 9 || b === 10 || b === 13) printable++;
  return bytes.length > 0 && printable >= bytes.length * 0.98;
}

/** Something the finder can read from: a file on the server, a File in the browser, bytes in memory. */
export interface CaptureSource {
  size: number;
  read(offset: number, length: number): Promise<Uint8Array> | Uint8Array;
}

export interface FinderProgress {
  bytesRead: number;
  /** the most the finder will read */
  budget: number;
}

/** Runs the finder over a source; reads at most the budget (16 MB by default). */
export async function findSettings(source: CaptureSource, options: FinderOptions = {}, onProgress?: (p: FinderProgress) => void): Promise<{ result: FinderResult; finder: SettingsFinder }> {
  const finder = new SettingsFinder(source.size, options);
  const budget = Math.min(source.size, { ...DEFAULT_BUDGET, ...options.budget }.maxBytes);
  let req: ReadRequest | null;
  while ((req = finder.next())) {
    // reads of at most 256 KB keep progress moving, memory flat, and reads close to what is used
    const bytes = await source.read(req.offset, Math.min(req.length, 256 * 1024));
    if (bytes.length === 0) break;
    finder.push(bytes);
    onProgress?.({ bytesRead: finder.bytesRead, budget });
  }
  return { result: finder.result(), finder };
}

/** A source over bytes in memory (tests, small uploads in the browser). */
export function bytesSource(bytes: Uint8Array): CaptureSource {
  return { size: bytes.length, read: (offset, length) => bytes.subarray(offset, offset + length) };
}
