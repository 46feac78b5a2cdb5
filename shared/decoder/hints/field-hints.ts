// The field-hints engine: frames in (any number, in time order), a report of hints per link
// direction and per value of a selector octet out. Streaming with bounded memory: statistics in
// typed arrays, the first frames of each group kept to name the frames behind each hint.
import type { DecodedFrame } from '../types';
import type { LinkRole } from '../calls/exchanges';
import { EchoStats } from './echo-stats';
import { evaluateGroup } from './evaluate';
import { GroupStats } from './group-stats';
import { fileKey, nameOffsets, printableTail } from './shapes';
import type { CallHint, FieldHint, HintDirection, HintFrame, HintGroup, HintReport } from './types';

export interface HintOptions {
  /** offset of the selector octet (the call code, as far as anyone knows yet); null: no split */
  selectorOffset?: number | null;
  /** selector values with fewer frames than this get no group of their own (default 3) */
  minGroupFrames?: number;
}

interface Group {
  direction: HintDirection;
  selector: number | null;
  stats: GroupStats;
  echo: EchoStats | null;
}

export class FieldHints {
  private readonly selectorOffset: number | null;
  private readonly minGroup: number;
  private readonly groups = new Map<string, Group>();
  /** per direction: the group of every frame, and one per selector value */
  private readonly allOf: (Group | null)[] = [null, null];
  private readonly bySelector: (Group | undefined)[][] = [[], []];
  private readonly pending = new Map<number, HintFrame>();
  private readonly files = new Set<number>();
  /** per direction: frames, and how many had each bit of the selector octet set */
  private readonly bits = [new Uint32Array(8), new Uint32Array(8)];
  private readonly counts = [0, 0];
  private frames = 0;
  private pairs = 0;

  constructor(options: HintOptions = {}) {
    this.selectorOffset = options.selectorOffset === undefined ? 0 : options.selectorOffset;
    this.minGroup = options.minGroupFrames ?? 3;
  }

  private group(direction: HintDirection, selector: number | null): Group {
    const key = `${direction}:${selector ?? 'all'}`;
    let g = this.groups.get(key);
    if (!g) this.groups.set(key, (g = { direction, selector, stats: new GroupStats(direction === 'request'), echo: direction === 'response' ? new EchoStats() : null }));
    return g;
  }

  push(f: HintFrame): void {
    const info = f.info;
    if (info.length === 0) return;
    this.frames++;
    const d = f.direction === 'request' ? 0 : 1;
    this.counts[d]++;
    const so = this.selectorOffset;
    const sel = so !== null && info.length > so ? info[so] : null;
    if (sel !== null) for (let b = 0; b < 8; b++) if (sel & (1 << b)) this.bits[d][b]++;
    const names = nameOffsets(info);
    const file = names.length ? fileKey(f.station, info, names[0]) : 0;
    const first = file !== 0 && f.direction === 'request' && !this.files.has(file);
    if (first) this.files.add(file);
    const tail = printableTail(info);
    const all = (this.allOf[d] ??= this.group(f.direction, null));
    const one = sel === null ? null : (this.bySelector[d][sel] ??= this.group(f.direction, sel));
    all.stats.push(f, file, names, first, sel ?? -1);
    all.stats.textTail(tail, info.length);
    if (one) {
      one.stats.push(f, file, names, first, sel!);
      one.stats.textTail(tail, info.length);
    }
    if (f.direction === 'request') this.pending.set(f.station, f);
    else {
      const req = this.pending.get(f.station);
      if (req) {
        this.pending.delete(f.station);
        this.pairs++;
        all.echo!.push(req.info, info, f.ref, so);
        one?.echo!.push(req.info, info, f.ref, so);
      }
    }
  }

  finish(): HintReport {
    const groups: HintGroup[] = [];
    const notes: string[] = [];
    const ordered = [...this.groups.values()].sort(
      (a, b) => (a.direction === b.direction ? 0 : a.direction === 'request' ? -1 : 1) || (a.selector ?? -1) - (b.selector ?? -1),
    );
    // a counter across all of a station's requests is a tag, never a record number
    const stationCounters = new Set<number>();
    const reqAll = this.groups.get('request:all');
    if (reqAll) {
      for (const h of evaluateGroup({ direction: 'request', selector: null, selectorOffset: this.selectorOffset, stats: reqAll.stats, echo: null })) {
        if (h.kind === 'counter' && h.counter!.acrossCalls) stationCounters.add(h.offset);
      }
    }
    for (const g of ordered) {
      if (g.selector !== null && g.stats.frames < this.minGroup) continue;
      const hints = evaluateGroup({ direction: g.direction, selector: g.selector, selectorOffset: this.selectorOffset, stats: g.stats, echo: g.echo, stationCounters });
      const lengths = [...g.stats.lengths].map(([length, count]) => ({ length, count })).sort((a, b) => b.count - a.count || a.length - b.length).slice(0, 8);
      groups.push({ direction: g.direction, selector: g.selector, frames: g.stats.frames, lengths, hints });
    }
    const [reqs, resps] = this.counts;
    let mask = 0;
    if (reqs > 0 && resps > 0) {
      for (let b = 7; b >= 0; b--) if (this.bits[1][b] >= resps * 0.98 && this.bits[0][b] <= reqs * 0.02) mask |= 1 << b;
    }
    if (this.frames === 0) notes.push('No information frames to look at: decode the capture (frames with a good FCS on links of known direction) first.');
    else if (reqs === 0 || resps === 0) notes.push(`Only ${reqs === 0 ? 'answers' : 'requests'} were seen: set the direction of the links of both sides for echoes, tags and record numbers.`);
    else if (this.pairs === 0) notes.push('No request was followed by an answer to the same station: check the links’ directions and station addresses.');
    assignRoles(groups, mask, this.selectorOffset);
    const calls = callHints(groups, mask, this.selectorOffset, this.groups);
    return { frames: this.frames, requests: reqs, responses: resps, pairs: this.pairs, selectorOffset: this.selectorOffset, responseMask: mask, groups, calls, notes };
  }
}

/**
 * Roles that need more than one group: a tag counts up per station in requests and comes back
 * in the answer; a status is a small set of answer values, 0 the commonest, that no request
 * carries; an answer octet echoing the request's record number is the answer's record number.
 */
function assignRoles(groups: HintGroup[], mask: number, selectorOffset: number | null): void {
  const reqAll = groups.find((g) => g.direction === 'request' && g.selector === null);
  const respAll = groups.find((g) => g.direction === 'response' && g.selector === null);
  if (!reqAll || !respAll) return;
  const echoOf = (g: HintGroup, i: number) => g.hints.find((h) => h.kind === 'echo' && h.echo!.requestOffset <= i && i < h.echo!.requestOffset + h.length);
  const tagAt = reqAll.hints.find((h) => h.kind === 'counter' && h.counter!.acrossCalls && h.offset !== selectorOffset && echoOf(respAll, h.offset)?.length === 1);
  if (tagAt) {
    tagAt.role = 'tag';
    const e = echoOf(respAll, tagAt.offset)!;
    e.role = 'tag';
    for (const g of groups) {
      if (g.selector === null) continue;
      for (const h of g.hints) {
        if (g.direction === 'request' && h.offset === tagAt.offset && (h.kind === 'counter' || h.kind === 'small-set')) h.role = 'tag';
        if (g.direction === 'response' && h.kind === 'echo' && h.length === 1 && h.echo!.requestOffset === tagAt.offset) h.role = 'tag';
      }
    }
  }
  const taken = (g: HintGroup, k: number) => g.hints.some((h) => h.offset <= k && k < h.offset + h.length && h.role !== null && h.kind !== 'small-set' && h.kind !== 'constant');
  for (const g of groups.filter((x) => x.direction === 'response')) {
    const status = g.hints.find(
      (h) => (h.kind === 'small-set' || (h.kind === 'constant' && g.selector !== null)) && h.offset !== selectorOffset && h.role === null && !taken(g, h.offset) && !g.hints.some((x) => x.kind === 'echo' && x.offset === h.offset) && h.values!.some((v) => v.value === 0),
    );
    const all = g.selector === null ? status : respAll.hints.find((h) => h.role === 'status');
    if (status && (g.selector === null || !all || all.offset === status.offset)) status.role = 'status';
  }
  // an answer's record number: octets echoing the request's record-number octets
  for (const g of groups.filter((x) => x.direction === 'response' && x.selector !== null)) {
    const reqSel = g.selector! & ~mask;
    const req = groups.find((x) => x.direction === 'request' && x.selector === reqSel);
    const rn = req?.hints.find((h) => h.kind === 'record-number');
    if (!rn) continue;
    // the echo of the number's low octet (its high octets may never have changed)
    const low = rn.number!.endian === 'big' ? rn.offset + rn.length - 1 : rn.offset;
    const e = echoOf(g, low);
    if (!e || e.role !== null) continue;
    e.role = 'record-number';
    // the answer's number has the request's width and order, its low octet where the echo puts it
    const at = e.offset + (low - e.echo!.requestOffset);
    e.offset = rn.number!.endian === 'big' ? at - (rn.length - 1) : at;
    e.length = rn.length;
    e.type = rn.type;
    e.summary += ` — the request's ${rn.length * 8}-bit record number`;
  }
}

/** What each selector value seems to do, from where its records and names are. */
function callHints(groups: HintGroup[], mask: number, selectorOffset: number | null, raw: Map<string, Group>): CallHint[] {
  if (selectorOffset === null) return [];
  const out: CallHint[] = [];
  for (const g of groups) {
    if (g.direction !== 'request' || g.selector === null) continue;
    const v = g.selector;
    const answer = groups.find((x) => x.direction === 'response' && x.selector !== null && (x.selector & ~mask) === v) ?? null;
    const has = (x: HintGroup | null, kind: FieldHint['kind']) => x?.hints.find((h) => h.kind === kind) ?? null;
    const name = has(g, 'cpm-name');
    const written = has(g, 'record');
    const read = has(answer, 'record');
    const number = has(g, 'record-number');
    const status = answer?.hints.find((h) => h.role === 'status') ?? null;
    const stats = raw.get(`request:${v}`)!.stats;
    let file: CallHint['file'] = null;
    let why = '';
    if (written) {
      file = number ? 'write-random' : 'write-sequential';
      why = `requests carry a 128-octet record${number ? ' and a record number' : ''}`;
    } else if (read && name) {
      const eof = status?.values?.some((x) => x.value === 1) ?? false;
      file = eof || !number ? 'read-sequential' : 'read-random';
      why = `answers carry a 128-octet record${eof ? '; some answers have status 1 and none (an end of file)' : ''}`;
    } else if (name && stats.withName > 0 && stats.firstForFile >= stats.withName * 0.8) {
      file = 'open';
      why = `${stats.firstForFile} of ${stats.withName} requests are a station's first to name their file`;
    }
    out.push({ selector: v, requests: g.frames, responses: answer?.frames ?? 0, answerSelector: answer?.selector ?? null, file, why });
  }
  return out;
}

/**
 * The frames field hints look at: good information frames (I, and UI for datagrams) on links of
 * known direction, with the information field after address and control.
 */
/** What hints read of a frame: stored frames rebuilt from rows fit it without a cast. */
export type HintSourceFrame = Pick<DecodedFrame, 'link' | 'seq' | 'firstSample' | 'status' | 'bytes' | 'decode'>;

export function hintFrameOf(frame: HintSourceFrame, role: LinkRole | undefined): HintFrame | null {
  const d = frame.decode;
  if (!role || frame.status !== 'ok' || !d || (d.kind !== 'I' && d.command !== 'UI') || d.infoLength === 0) return null;
  return {
    ref: { link: frame.link, seq: frame.seq },
    direction: role.direction === 'to-server' ? 'request' : 'response',
    station: role.station ?? d.address,
    sample: frame.firstSample,
    info: frame.bytes.subarray(d.infoOffset, d.infoOffset + d.infoLength),
  };
}

/** Batch form: hints over decoded frames with their links' roles. */
export function fieldHints(frames: Iterable<DecodedFrame>, links: LinkRole[], options: HintOptions = {}): HintReport {
  const roles = new Map(links.map((l) => [l.link, l]));
  const engine = new FieldHints(options);
  for (const f of frames) {
    const h = hintFrameOf(f, roles.get(f.link));
    if (h) engine.push(h);
  }
  return engine.finish();
}
