// From a group's statistics to hints: each with its confidence, a sentence with the counts, and
// the first frames that agree and disagree (found again in the group's first frames).
import type { FrameRef } from '../calls/exchanges';
import type { FieldType } from '../calls/field-map';
import type { EchoStats } from './echo-stats';
import { ECHO_SPAN } from './echo-stats';
import { GroupStats, LENGTH_TYPES, lengthValue, lengthWidth, readAt, READINGS, SPAN } from './group-stats';
import { cpmNameAt, printableTail } from './shapes';
import type { FieldHint, HintDirection, HintFrame } from './types';

const REFS = 20;
const RECORD = 128;

const hex = (v: number) => `0x${v.toString(16).toUpperCase().padStart(2, '0')}`;
const pct = (n: number, d: number) => `${n} of ${d}`;
/** agreement tempered by how many frames there were: 3 frames agreeing is a weaker hint than 300 */
const confidence = (agree: number, total: number) => (total > 0 ? (agree / total) * (total / (total + 2)) : 0);

interface Refs {
  supporting: FrameRef[];
  contradicting: FrameRef[];
}

function refsOf<T>(items: readonly T[], ref: (t: T) => FrameRef, verdict: (t: T, i: number) => boolean | null): Refs {
  const out: Refs = { supporting: [], contradicting: [] };
  for (let i = 0; i < items.length; i++) {
    if (out.supporting.length >= REFS && out.contradicting.length >= REFS) break;
    const v = verdict(items[i], i);
    if (v === null) continue;
    const list = v ? out.supporting : out.contradicting;
    if (list.length < REFS) list.push(ref(items[i]));
  }
  return out;
}

const frameRef = (f: HintFrame) => f.ref;

export interface GroupContext {
  direction: HintDirection;
  selector: number | null;
  selectorOffset: number | null;
  stats: GroupStats;
  echo: EchoStats | null;
  /** offsets that count up per station across every call (a tag): never a record number */
  stationCounters?: ReadonlySet<number>;
}

export function evaluateGroup(g: GroupContext): FieldHint[] {
  const { stats } = g;
  const id = (kind: string, offset: number) => `${g.direction}:${g.selector === null ? 'all' : g.selector}:${kind}:${offset}`;
  const hints: FieldHint[] = [];
  const res = stats.reservoir;
  const base = (kind: FieldHint['kind'], offset: number, length: number, type: FieldType, agree: number, total: number, summary: string, refs: Refs): FieldHint => ({
    id: id(kind, offset),
    kind,
    offset,
    length,
    type,
    role: null,
    confidence: confidence(agree, total),
    summary,
    support: agree,
    contradict: total - agree,
    ...refs,
  });
  const lengthsSeen = stats.lengths.size;

  for (let k = 0; k < SPAN; k++) {
    const n = stats.present[k];
    if (n < 3) continue;
    const values = stats.values(k);
    const top = values[0];
    if (top.count >= n * 0.98) {
      const h = base('constant', k, 1, 'u8', top.count, n, `octet ${k} is ${hex(top.value)} in ${pct(top.count, n)} frames`, refsOf(res, frameRef, (f) => (f.info.length > k ? f.info[k] === top.value : null)));
      h.values = values.slice(0, 4);
      if (k === g.selectorOffset) h.role = 'call';
      hints.push(h);
    } else {
      let covered = 0;
      let used = 0;
      // a few values, each seen a few times: with 12 frames, 6 values are no "small set"
      const most = Math.min(8, Math.floor(n / 3));
      while (used < values.length && used < most && covered < n * 0.98) covered += values[used++].count;
      if (covered >= n * 0.98 && values.length > 1 && n >= 6) {
        const set = new Set(values.slice(0, used).map((v) => v.value));
        const h = base('small-set', k, 1, 'u8', covered, n, `octet ${k} takes ${used} values (${values.slice(0, used).map((v) => `${hex(v.value)} ×${v.count}`).join(', ')}) in ${pct(covered, n)} frames`, refsOf(res, frameRef, (f) => (f.info.length > k ? set.has(f.info[k]) : null)));
        h.values = values.slice(0, used);
        if (k === g.selectorOffset) h.role = 'call';
        hints.push(h);
      }
      // a counter: +1 from one frame to the next of the same station (or of the group)
      const st = stats.stepCounts(0, k);
      const fr = stats.stepCounts(1, k);
      const stShare = st.plus / Math.max(1, st.plus + st.other);
      const frShare = fr.plus / Math.max(1, fr.plus + fr.other);
      const use = stShare >= frShare ? { c: st, scope: 'station' as const, share: stShare } : { c: fr, scope: 'frame' as const, share: frShare };
      if (use.c.plus + use.c.other >= 3 && use.share >= 0.8) {
        const scope = use.c.same > 0 ? 'exchange' : use.scope;
        const words = scope === 'exchange' ? 'per station, repeated on a retry' : scope === 'station' ? 'from one frame of a station to its next' : 'from one frame to the next';
        const x = stats.crossCounts(k);
        const acrossCalls = x.plus + x.other >= 2 && x.plus >= (x.plus + x.other) * 0.8;
        const h = base('counter', k, 1, 'u8', use.c.plus, use.c.plus + use.c.other, `octet ${k} counts up by one ${words}: ${pct(use.c.plus, use.c.plus + use.c.other)} steps${use.c.same ? `, the same value again ${use.c.same} times` : ''}${acrossCalls ? `, also from one call to another (${pct(x.plus, x.plus + x.other)})` : ''}`, counterRefs(res, k, use.scope));
        h.counter = { scope, acrossCalls };
        hints.push(h);
      }
    }
  }
  // length fields: only where frame lengths differ (in a group of one length a constant fits too)
  if (lengthsSeen >= 2) {
    for (let k = 0; k < SPAN; k++) {
      let best: { t: number; add: number; count: number; n: number } | null = null;
      for (let t = 0; t < LENGTH_TYPES.length; t++) {
        const w = lengthWidth(t);
        const n = stats.present[Math.min(SPAN - 1, k + w - 1)];
        if (n < 3) continue;
        const b = stats.lengthBest(t, k);
        if (b.count >= n * 0.95 && (!best || b.count / n > best.count / best.n + 1e-9)) best = { t, add: b.add, count: b.count, n };
      }
      if (!best) continue;
      // the same octet must not just be constant (a constant octet matches one length only)
      const w = lengthWidth(best.t);
      const seen = new Set<number>();
      for (const f of res) if (f.info.length >= k + w) seen.add(f.info.length);
      if (seen.size < 2) continue;
      const { t, add } = best;
      const type: FieldType = LENGTH_TYPES[t];
      const h = base(
        'length',
        k,
        w,
        type,
        best.count,
        best.n,
        `${w === 1 ? `octet ${k}` : `octets ${k}–${k + 1} (${type === 'u16be' ? 'big' : 'little'}-endian)`} ${add === 0 ? 'equal the octets after them' : `equal the octets after them ${add > 0 ? 'plus' : 'minus'} ${Math.abs(add)}`} in ${pct(best.count, best.n)} frames, over ${seen.size} frame lengths`,
        refsOf(res, frameRef, (f) => {
          const v = lengthValue(f.info, k, t);
          return v < 0 ? null : v - (f.info.length - k - w) === add;
        }),
      );
      h.lengthAdd = add;
      h.role = 'length';
      hints.push(h);
    }
  }
  // CP/M names
  for (let k = 0; k + 11 <= SPAN; k++) {
    const n = stats.present[k + 10];
    const fit = stats.nameFit[k];
    if (n < 3 || fit < n * 0.9) continue;
    const h = base('cpm-name', k, 11, 'cpm-name', fit, n, `octets ${k}–${k + 10} read as a CP/M 8.3 file name in ${pct(fit, n)} frames${stats.nameAttr[k] ? ` (${stats.nameAttr[k]} with attribute bits set in the high bits)` : ''}`, refsOf(res, frameRef, (f) => (f.info.length >= k + 11 ? cpmNameAt(f.info, k) : null)));
    h.role = 'file-name';
    h.attributes = stats.nameAttr[k];
    hints.push(h);
  }
  const names = hints.filter((h) => h.kind === 'cpm-name');
  // names that only some calls carry still rule octets out as numbers
  for (let k = 0; k + 11 <= SPAN; k++) {
    if (stats.present[k + 10] >= 3 && stats.nameFit[k] >= stats.present[k + 10] * 0.3 && !names.some((h) => h.offset === k)) names.push({ offset: k } as FieldHint);
  }
  const overlapsName = (a: number, b: number) => names.some((h) => a < h.offset + 11 && b > h.offset);
  // a 128-octet record at the end of the frame
  let bestP = -1;
  for (let p = 0; p <= SPAN; p++) if (stats.blockAt[p] > (bestP < 0 ? 0 : stats.blockAt[bestP])) bestP = p;
  if (bestP >= 0 && stats.blockAt[bestP] >= 3 && stats.blockAt[bestP] >= stats.frames * 0.3) {
    const p = bestP;
    const distinct = new Set(res.filter((f) => f.info.length === p + RECORD).map((f) => Array.from(f.info.subarray(p, p + 16)).join(',')));
    if (distinct.size >= 2) {
      const c = stats.blockAt[p];
      const h = base('record', p, RECORD, 'bytes', c, stats.frames, `${pct(c, stats.frames)} frames end in a block of 128 octets from octet ${p} (a record), with ${distinct.size}+ different contents`, refsOf(res, frameRef, (f) => f.info.length === p + RECORD));
      h.role = 'record-data';
      h.toEnd = true;
      hints.push(h);
    }
  }
  // printable text to the end of the frame (console and printer output)
  let bestT = -1;
  for (let k = 0; k < SPAN; k++) if (stats.textAt[k] > (bestT < 0 ? 0 : stats.textAt[bestT])) bestT = k;
  if (bestT >= 0 && stats.textAt[bestT] >= 3 && stats.textAt[bestT] >= stats.frames * 0.9 && !hints.some((h) => h.kind === 'record')) {
    const k = bestT;
    const c = stats.textAt[k];
    hints.push(base('text', k, 0, 'ascii', c, stats.frames, `${pct(c, stats.frames)} frames carry printable text from octet ${k} to their end`, refsOf(res, frameRef, (f) => printableTail(f.info) === k)));
  }
  // a record number: 16 or 24 bits stepping by one across a station's requests of one file
  if (g.direction === 'request') {
    const counters = g.stationCounters ?? new Set<number>();
    const found = recordNumber(stats, (a, b) => overlapsName(a, b) || [...counters].some((k) => k >= a && k < b));
    if (found) {
      const { k, r, plus, steps } = found;
      const reading = READINGS[r];
      const start = r === 1 ? k - 1 : r === 3 ? k - 2 : k;
      const bytes = reading.startsWith('u16') ? 2 : 3;
      const endian = reading.endsWith('be') ? 'big' : 'little';
      const h = base(
        'record-number',
        start,
        bytes,
        reading as FieldType,
        plus,
        steps,
        `octets ${start}–${start + bytes - 1} read as a ${bytes * 8}-bit ${endian}-endian number step by one across consecutive requests of the same station and file in ${pct(plus, steps)} steps${found.carries ? `, carrying into the next octet ${found.carries} time${found.carries === 1 ? '' : 's'}` : ''}`,
        fileStepRefs(res, stats.reservoirFile, k, r),
      );
      h.role = 'record-number';
      h.number = { endian, bytes: bytes as 2 | 3, alternatives: found.alternatives };
      hints.push(h);
    }
  }
  // echoes of request octets in the answer; a run of them (a name, a number) is one hint
  if (g.direction === 'response' && g.echo && g.echo.pairs >= 3) {
    const e = g.echo;
    const from = new Int32Array(ECHO_SPAN).fill(-1);
    const hits = new Int32Array(ECHO_SPAN);
    for (let j = 0; j < ECHO_SPAN; j++) {
      let bi = -1;
      let bc = 0;
      for (let i = 0; i < ECHO_SPAN; i++) {
        const c = e.count(i, j);
        // ties go to the same offset, then the lower one
        if (c > bc || (c === bc && c > 0 && i === j)) {
          bc = c;
          bi = i;
        }
      }
      if (bi < 0 || bc < e.pairs * 0.9) continue;
      // an echo of an octet that never changes says nothing; the selector repeated is the call code
      const varied = new Set(e.kept.filter((p) => p.request.length > bi).map((p) => p.request[bi])).size;
      if (varied < 2 || (j === g.selectorOffset && bi === g.selectorOffset)) continue;
      from[j] = bi;
      hits[j] = bc;
    }
    for (let j = 0; j < ECHO_SPAN; j++) {
      if (from[j] < 0) continue;
      let end = j + 1;
      while (end < ECHO_SPAN && from[end] === from[end - 1] + 1) end++;
      const i = from[j];
      const len = end - j;
      let agree = e.pairs;
      for (let x = j; x < end; x++) agree = Math.min(agree, hits[x]);
      const h = base(
        'echo',
        j,
        len,
        len === 1 ? 'u8' : 'bytes',
        agree,
        e.pairs,
        `${len === 1 ? `octet ${j} repeats octet ${i}` : `octets ${j}–${end - 1} repeat octets ${i}–${i + len - 1}`} of the request it answers in ${pct(agree, e.pairs)} pairs`,
        refsOf(e.kept, (p) => p.ref, (p) => {
          if (p.request.length < i + len || p.response.length < j + len) return null;
          for (let x = 0; x < len; x++) if (p.request[i + x] !== p.response[j + x]) return false;
          return true;
        }),
      );
      h.echo = { requestOffset: i };
      hints.push(h);
      j = end - 1;
    }
  }
  // single-octet value hints inside a name, a record or a text add nothing
  const spans = hints.filter((h) => h.kind === 'cpm-name' || h.kind === 'record' || h.kind === 'text');
  for (let x = hints.length - 1; x >= 0; x--) {
    const h = hints[x];
    if ((h.kind === 'small-set' || h.kind === 'constant') && h.role === null && spans.some((sp) => h.offset >= sp.offset && (sp.length === 0 || h.offset < sp.offset + sp.length))) hints.splice(x, 1);
  }
  return hints.sort((a, b) => a.offset - b.offset || a.kind.localeCompare(b.kind));
}

function counterRefs(res: readonly HintFrame[], k: number, scope: 'station' | 'frame'): Refs {
  const last = new Map<number, number>();
  let prev = -1;
  return refsOf(res, frameRef, (f) => {
    const key = scope === 'station' ? f.station : 0;
    const before = scope === 'station' ? (last.get(key) ?? -1) : prev;
    const v = f.info.length > k ? f.info[k] : -1;
    if (scope === 'station') last.set(key, v);
    else prev = v;
    if (before < 0 || v < 0) return null;
    const d = (v - before) & 0xff;
    return d === 0 ? null : d === 1;
  });
}

function fileStepRefs(res: readonly HintFrame[], files: readonly number[], k: number, r: number): Refs {
  const last = new Map<number, number>();
  return refsOf(res, frameRef, (f, i) => {
    const file = files[i];
    if (!file) return null;
    const v = readAt(f.info, k, r);
    const before = last.get(file);
    last.set(file, v);
    if (before === undefined || before < 0 || v < 0) return null;
    return v === before ? null : v === before + 1;
  });
}

/**
 * The best reading of a stepping number: most +1 steps, then 16 bits before 24 and 8, then the
 * reading whose extra octets never change. A carry (the low octet wrapping while the next one
 * steps) counts as +1 only in the right octet order, so a file of more than 256 records decides it.
 */
function recordNumber(stats: GroupStats, overlapsName: (a: number, b: number) => boolean): { k: number; r: number; plus: number; steps: number; carries: number; alternatives: string[] } | null {
  const cands: { k: number; r: number; plus: number; steps: number; share: number; start: number; end: number }[] = [];
  for (let k = 0; k < SPAN; k++) {
    for (let r = 0; r < READINGS.length; r++) {
      const c = stats.fileStepCounts(r, k);
      const steps = c.plus + c.other;
      if (steps < 3) continue;
      const share = c.plus / steps;
      if (share < 0.8) continue;
      const start = r === 1 ? k - 1 : r === 3 ? k - 2 : k;
      const end = start + (r === 0 ? 1 : r <= 2 ? 2 : 3);
      if (overlapsName(start, end)) continue;
      cands.push({ k, r, plus: c.plus, steps, share, start, end });
    }
  }
  const wide = cands.filter((c) => c.r !== 0);
  if (wide.length === 0) return null;
  const width = (r: number) => (r <= 2 ? 2 : 3);
  wide.sort((a, b) => b.share - a.share || width(a.r) - width(b.r) || b.plus - a.plus || a.start - b.start);
  const best = wide[0];
  const ties = wide.filter((c) => c !== best && c.k === best.k && Math.abs(c.share - best.share) < 1e-9 && width(c.r) === width(best.r));
  // the same share either way round: the reading whose other octet is constant zero wins
  let pick = best;
  if (ties.length) {
    const zeroHigh = (c: (typeof wide)[number]) => {
      const hi = c.r === 1 ? c.k - 1 : c.k + 1;
      const v = stats.values(hi);
      return v.length === 1 && v[0].value === 0 ? 1 : 0;
    };
    pick = [best, ...ties].sort((a, b) => zeroHigh(b) - zeroHigh(a))[0];
  }
  const u8 = stats.fileStepCounts(0, pick.k);
  const carries = Math.max(0, pick.plus - u8.plus);
  const alternatives = wide.filter((c) => c !== pick && c.k === pick.k && c.share >= pick.share - 1e-9).map((c) => `${READINGS[c.r]} at octet ${c.start}`);
  return { k: pick.k, r: pick.r, plus: pick.plus, steps: pick.steps, carries, alternatives };
}
