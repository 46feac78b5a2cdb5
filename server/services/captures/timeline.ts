import type { TimelineCallMarker, TimelineEvent, TimelineFrame, TimelinePage, TimelineQuery, TimelineRow } from '../../../shared/schemas';
import { SQLiteSyncDialect } from 'drizzle-orm/sqlite-core';
import type { SQL } from 'drizzle-orm';
import { badRequest } from '../../http/errors';
import { searchHitCount, searchHitIds } from '../../runs/search-index';
import type { CaptureDeps } from './deps';
import { hexTokens, longestLiteral } from './hex-pattern';
import type { CaptureRow } from './rows';
import { eventSummary, frameSummary } from './summaries';

// The timeline is two keyset streams in one order: frames (k = 0) and line events (k = 1),
// each sorted by (t, id) through an index; rows are ordered by (t, k, id) overall. A cursor is
// such a key plus the direction it continues in, so each stream's query starts exactly after
// (or before) it and a page boundary never drops or repeats a row.

export interface Cursor {
  t: number;
  /** -1 positions before every row at t (jump to time) */
  k: number;
  id: number;
  d: 'f' | 'b';
}

export const encodeCursor = (c: Cursor) => Buffer.from(JSON.stringify([c.t, c.k, c.id, c.d])).toString('base64url');

export function decodeCursor(s: string): Cursor {
  try {
    const [t, k, id, d] = JSON.parse(Buffer.from(s, 'base64url').toString('utf8')) as unknown[];
    if (typeof t === 'number' && typeof k === 'number' && typeof id === 'number' && (d === 'f' || d === 'b') && Number.isFinite(t)) {
      return { t, k, id, d };
    }
  } catch {
    // falls through to the error below
  }
  throw badRequest('Some fields need attention', { cursor: 'This cursor is not one the timeline gave out; start from the first page' });
}

interface Sql {
  where: string[];
  params: unknown[];
}

/** filters that only frames can satisfy: with any of them, line events are left out */
const hasFrameFilter = (q: TimelineQuery) =>
  !!(q.station?.length || q.status?.length || q.kind?.length || q.command?.length || q.text || q.hex);

const dialect = new SQLiteSyncDialect();
/** a search-index fragment as SQL text and its values */
const rendered = (fragment: SQL) => dialect.sqlToQuery(fragment);

const placeholders = (n: number) => Array.from({ length: n }, () => '?').join(', ');

/**
 * Whether a trigram search (column LIKE pattern) finds few enough rows to drive the query.
 * A common pattern is answered faster by walking frames in time order and testing each, which
 * stops after one page; a rare one by collecting its few rows from the index first.
 */
export type SelectiveProbe = (column: 'hex' | 'text', likePattern: string) => boolean;

export function frameFilters(jobId: number, q: TimelineQuery, selective: SelectiveProbe = () => true): Sql {
  const where = ['f.job_id = ?'];
  const params: unknown[] = [jobId];
  const inList = (col: string, values: unknown[] | undefined) => {
    if (!values || values.length === 0) return;
    where.push(`${col} in (${placeholders(values.length)})`);
    params.push(...values);
  };
  inList('f.link', q.link);
  inList('f.address', q.station);
  inList('f.status', q.status);
  inList('f.kind', q.kind);
  inList('f.command', q.command);
  if (q.from !== undefined) {
    where.push('f.t >= ?');
    params.push(q.from);
  }
  if (q.to !== undefined) {
    where.push('f.t <= ?');
    params.push(q.to);
  }
  if (q.text) {
    const escaped = q.text.replace(/[\\%_]/g, (m) => `\\${m}`);
    // frames whose notes hold the text match too; notes pin frames by link + seq, not by id
    const notesOfRun = "notes n where n.capture_id = (select capture_id from decode_jobs where id = ?) and n.body like ? escape '\\'";
    // the trigram index answers substrings of three or more characters without LIKE wildcards
    if (q.text.length >= 3 && escaped === q.text && selective('text', `%${q.text}%`)) {
      const hits = rendered(searchHitIds('text', `%${q.text}%`));
      where.push(`f.id in (${hits.sql} union select nf.id from ${notesOfRun.replace('notes n', 'notes n cross join frames nf on nf.job_id = ? and nf.link = n.link and nf.seq = n.seq')})`);
      params.push(...hits.params, jobId, jobId, `%${escaped}%`);
    }
    where.push(`(f.text like ? escape '\\' or exists (select 1 from ${notesOfRun} and n.link = f.link and n.seq = f.seq))`);
    params.push(`%${escaped}%`, jobId, `%${escaped}%`);
  }
  if (q.hex) {
    const tokens = hexTokens(q.hex);
    if (tokens.length > 0) {
      const literal = longestLiteral(tokens);
      if (literal.length >= 4 && selective('hex', `%${literal}%`)) {
        const hits = rendered(searchHitIds('hex', `%${literal}%`));
        where.push(`f.id in (${hits.sql})`);
        params.push(...hits.params);
      }
      where.push('hex_match(f.hex, ?)');
      params.push(tokens.join(' '));
    }
  }
  // With a rare search term the rows come from the search index: the unary + keeps the planner
  // from walking the job's whole time index instead and testing each frame against the list.
  if (where.some((w) => w.includes('frame_search'))) where[0] = '+f.job_id = ?';
  return { where, params };
}

function eventFilters(jobId: number, q: TimelineQuery): Sql {
  const where = ['e.job_id = ?'];
  const params: unknown[] = [jobId];
  if (q.link?.length) {
    where.push(`e.link in (${placeholders(q.link.length)})`);
    params.push(...q.link);
  }
  if (q.from !== undefined) {
    where.push('e.t >= ?');
    params.push(q.from);
  }
  if (q.to !== undefined) {
    where.push('e.t <= ?');
    params.push(q.to);
  }
  return { where, params };
}

/** the keyset condition of one stream (its k) relative to a cursor */
function keyset(alias: string, k: number, c: Cursor | null, forward: boolean): Sql {
  if (!c) return { where: [], params: [] };
  const t = `${alias}.t`;
  const id = `${alias}.id`;
  if (forward) {
    if (c.k < k) return { where: [`${t} >= ?`], params: [c.t] };
    if (c.k === k) return { where: [`(${t}, ${id}) > (?, ?)`], params: [c.t, c.id] };
    return { where: [`${t} > ?`], params: [c.t] };
  }
  if (c.k > k) return { where: [`${t} <= ?`], params: [c.t] };
  if (c.k === k) return { where: [`(${t}, ${id}) < (?, ?)`], params: [c.t, c.id] };
  return { where: [`${t} < ?`], params: [c.t] };
}

const noteKey = (link: string, seq: number) => `${link}\u0000${seq}`;

function withNotesAndCall(f: TimelineFrame, counts: Map<string, number>, calls: Map<number, TimelineCallMarker>): TimelineFrame {
  const n = counts.get(noteKey(f.link, f.seq));
  const call = calls.get(f.id);
  return n || call ? { ...f, ...(n ? { notes: n } : {}), ...(call ? { call } : {}) } : f;
}

interface CallMarkerDbRow {
  frameId: number;
  exchangeId: number;
  role: TimelineCallMarker['role'];
  station: number;
  callName: string | null;
  callCode: number | null;
  rtt: number | null;
  outcome: TimelineCallMarker['outcome'];
}

const FRAME_COLUMNS = `f.id, f.link, f.seq, f.t, f.t_end as tEnd, f.status, f.address, f.kind, f.command, f.ns, f.nr, f.pf,
  f.info_length as infoLength, substr(f.hex, 1, 128) as hex, f.flipped_bit as flippedBit`;
const EVENT_COLUMNS = 'e.id, e.link, e.channel, e.kind, e.t, e.t_end as tEnd, e.count';

interface FrameDbRow {
  id: number;
  link: string;
  seq: number;
  t: number;
  tEnd: number;
  status: TimelineFrame['status'];
  address: number | null;
  kind: TimelineFrame['kind'];
  command: string | null;
  ns: number | null;
  nr: number | null;
  pf: number | null;
  infoLength: number;
  hex: string;
  flippedBit: number | null;
}

interface EventDbRow {
  id: number;
  link: string | null;
  channel: string;
  kind: TimelineEvent['kind'];
  t: number;
  tEnd: number | null;
  count: number | null;
}

/** matches above this many, a search walks the frames in time order instead of collecting them first */
const SELECTIVE_LIMIT = 5000;
const PROBE_TTL_MS = 30_000;

export class TimelineReader {
  private readonly statements = new Map<string, import('better-sqlite3').Statement>();
  private readonly probes = new Map<string, { selective: boolean; at: number }>();
  constructor(private readonly deps: CaptureDeps) {}

  /** counts up to SELECTIVE_LIMIT index hits of a pattern; remembered briefly so the pages of one search ask once */
  readonly selective: SelectiveProbe = (column, likePattern) => {
    const key = `${column}\u0000${likePattern}`;
    const now = Date.now();
    const hit = this.probes.get(key);
    if (hit && now - hit.at < PROBE_TTL_MS) return hit.selective;
    const probe = rendered(searchHitCount(column, likePattern, SELECTIVE_LIMIT));
    const n = this.stmt(probe.sql).get(...probe.params) as { n: number };
    const selective = n.n < SELECTIVE_LIMIT;
    if (this.probes.size > 500) this.probes.clear();
    this.probes.set(key, { selective, at: now });
    return selective;
  };

  private stmt(sql: string) {
    let s = this.statements.get(sql);
    if (!s) {
      s = this.deps.sqlite.prepare(sql);
      if (this.statements.size > 500) this.statements.clear();
      this.statements.set(sql, s);
    }
    return s;
  }

  stationNames(rigId: number): Map<number, string> {
    const rows = this.stmt('select address, name from stations where rig_id = ?').all(rigId) as { address: number; name: string }[];
    return new Map(rows.map((r) => [r.address, r.name]));
  }

  /** notes per frame of the run's capture, keyed link + seq (a capture holds few notes; frames many) */
  private noteCounts(jobId: number): Map<string, number> {
    const rows = this.stmt(
      'select link, seq, count(*) as n from notes where capture_id = (select capture_id from decode_jobs where id = ?) and seq is not null group by link, seq',
    ).all(jobId) as { link: string; seq: number; n: number }[];
    return new Map(rows.map((r) => [noteKey(r.link, r.seq), r.n]));
  }

  /**
   * The call markers of the page's frames: each frame's exchange in the capture's visible call
   * run (the one over this decode run), found through exchange_frames by (run, frame).
   */
  private callMarkers(jobId: number, frameIds: number[]): Map<number, TimelineCallMarker> {
    const markers = new Map<number, TimelineCallMarker>();
    if (frameIds.length === 0) return markers;
    const rows = this.stmt(
      `select ef.frame_id as frameId, e.id as exchangeId, e.station, e.call_name as callName, e.call_code as callCode, e.rtt, e.outcome,
         case when e.request_frame_id = ef.frame_id then 'request'
              when exists (select 1 from json_each(e.response_frame_ids) r where r.value = ef.frame_id) then 'response'
              when exists (select 1 from json_each(e.damaged_response_frame_ids) r where r.value = ef.frame_id) then 'damaged-response'
              else 'retry' end as role
       from decode_jobs j join capture_call_layers l on l.capture_id = j.capture_id
       join call_runs cr on cr.id = l.current_run_id and cr.decode_job_id = j.id and cr.state = 'done'
       join json_each(?) ids
       join exchange_frames ef on ef.run_id = cr.id and ef.frame_id = ids.value
       join exchanges e on e.id = ef.exchange_id
       where j.id = ?
       order by ef.frame_id, e.id`,
    ).all(JSON.stringify(frameIds), jobId) as CallMarkerDbRow[];
    // a frame in several exchanges (a repeated answer, say) is marked with the latest one
    for (const r of rows) {
      markers.set(r.frameId, {
        exchangeId: r.exchangeId,
        role: r.role,
        station: r.station,
        callName: r.callName ?? (r.callCode === null ? 'call' : `call ${r.callCode}`),
        rttSeconds: r.rtt,
        outcome: r.outcome,
      });
    }
    return markers;
  }

  toFrame(r: FrameDbRow, names: Map<number, string>): TimelineFrame {
    const stationName = r.address === null ? null : (names.get(r.address) ?? null);
    return {
      type: 'frame',
      id: r.id,
      link: r.link,
      seq: r.seq,
      t: r.t,
      tEnd: r.tEnd,
      status: r.status,
      address: r.address,
      stationName,
      kind: r.kind,
      command: r.command,
      ns: r.ns,
      nr: r.nr,
      pf: r.pf === null ? null : r.pf === 1,
      infoLength: r.infoLength,
      hex: r.hex,
      summary: frameSummary(r, stationName),
    };
  }

  private frames(jobId: number, q: TimelineQuery, c: Cursor | null, forward: boolean, limit: number): FrameDbRow[] {
    const f = frameFilters(jobId, q, this.selective);
    const ks = keyset('f', 0, c, forward);
    const dir = forward ? 'asc' : 'desc';
    const sql = `select ${FRAME_COLUMNS} from frames f where ${[...f.where, ...ks.where].join(' and ')} order by f.t ${dir}, f.id ${dir} limit ?`;
    return this.stmt(sql).all(...f.params, ...ks.params, limit) as FrameDbRow[];
  }

  private events(jobId: number, q: TimelineQuery, c: Cursor | null, forward: boolean, limit: number): EventDbRow[] {
    if (!q.events || hasFrameFilter(q)) return [];
    const e = eventFilters(jobId, q);
    const ks = keyset('e', 1, c, forward);
    const dir = forward ? 'asc' : 'desc';
    const sql = `select ${EVENT_COLUMNS} from line_events e where ${[...e.where, ...ks.where].join(' and ')} order by e.t ${dir}, e.id ${dir} limit ?`;
    return this.stmt(sql).all(...e.params, ...ks.params, limit) as EventDbRow[];
  }

  /** up to `limit` rows after (forward) or before (backward) the cursor, merged in (t, k, id) order, nearest first */
  private slice(jobId: number, q: TimelineQuery, c: Cursor | null, forward: boolean, limit: number) {
    const fs = this.frames(jobId, q, c, forward, limit).map((r) => ({ k: 0, r }));
    const es = this.events(jobId, q, c, forward, limit).map((r) => ({ k: 1, r }));
    const sign = forward ? 1 : -1;
    const merged = [...fs, ...es].sort((a, b) => sign * (a.r.t - b.r.t || a.k - b.k || a.r.id - b.r.id));
    return merged.slice(0, limit);
  }

  page(rigId: number, jobId: number | null, q: TimelineQuery): TimelinePage {
    if (jobId === null) return { rows: [], nextCursor: null, prevCursor: null };
    const cursor = q.cursor ? decodeCursor(q.cursor) : null;
    const forward = cursor ? cursor.d === 'f' : q.direction === 'forward';
    const got = this.slice(jobId, q, cursor, forward, q.limit + 1);
    const more = got.length > q.limit;
    const taken = got.slice(0, q.limit);
    if (!forward) taken.reverse();
    const names = this.stationNames(rigId);
    const noteCounts = this.noteCounts(jobId);
    const calls = this.callMarkers(jobId, taken.filter((x) => x.k === 0).map((x) => x.r.id));
    const rows: TimelineRow[] = taken.map(({ k, r }) =>
      k === 0
        ? withNotesAndCall(this.toFrame(r as FrameDbRow, names), noteCounts, calls)
        : ({ type: 'event', ...(r as EventDbRow), summary: eventSummary(r as EventDbRow) } satisfies TimelineEvent),
    );
    const keyOf = (x: { k: number; r: { t: number; id: number } }, d: 'f' | 'b'): Cursor => ({ t: x.r.t, k: x.k, id: x.r.id, d });
    if (taken.length === 0) {
      // nothing on this side of the cursor: offer the way back
      const back = cursor ? encodeCursor({ ...cursor, d: forward ? 'b' : 'f' }) : null;
      const hasBack = cursor ? this.slice(jobId, q, cursor, !forward, 1).length > 0 : false;
      return { rows, nextCursor: null, prevCursor: hasBack ? back : null };
    }
    const first = taken[0];
    const last = taken[taken.length - 1];
    const before = this.slice(jobId, q, keyOf(first, 'b'), false, 1).length > 0;
    const after = this.slice(jobId, q, keyOf(last, 'f'), true, 1).length > 0;
    // nextCursor continues in the page's direction; prevCursor goes the other way
    const forwardCursor = after ? encodeCursor(keyOf(last, 'f')) : null;
    const backwardCursor = before ? encodeCursor(keyOf(first, 'b')) : null;
    void more;
    return forward
      ? { rows, nextCursor: forwardCursor, prevCursor: backwardCursor }
      : { rows, nextCursor: backwardCursor, prevCursor: forwardCursor };
  }

  count(jobId: number | null, q: TimelineQuery): number {
    if (jobId === null) return 0;
    if (!hasFrameFilter(q) && !q.link?.length && q.from === undefined && q.to === undefined) {
      // the whole run: its totals were recorded when it finished
      const totals = this.stmt('select frames, events from decode_jobs where id = ?').get(jobId) as { frames: number; events: number };
      return totals.frames + (q.events ? totals.events : 0);
    }
    const f = frameFilters(jobId, q, this.selective);
    let n = (this.stmt(`select count(*) as n from frames f where ${f.where.join(' and ')}`).get(...f.params) as { n: number }).n;
    if (q.events && !hasFrameFilter(q)) {
      const e = eventFilters(jobId, q);
      n += (this.stmt(`select count(*) as n from line_events e where ${e.where.join(' and ')}`).get(...e.params) as { n: number }).n;
    }
    return n;
  }

  /** a forward cursor that starts at the first row at or after t */
  at(t: number): string {
    return encodeCursor({ t, k: -1, id: 0, d: 'f' });
  }

  /** the next or previous damaged frame (any status but ok) on the timeline */
  damaged(jobId: number, from: { t: number; id: number }, dir: 'next' | 'prev'): number | null {
    const forward = dir === 'next';
    const op = forward ? '>' : '<';
    const order = forward ? 'asc' : 'desc';
    const row = this.stmt(
      `select id from frames where job_id = ? and status in ('bad-fcs', 'abort', 'short', 'residue') and (t, id) ${op} (?, ?) order by t ${order}, id ${order} limit 1`,
    ).get(jobId, from.t, from.id) as { id: number } | undefined;
    return row?.id ?? null;
  }
}

export type { CaptureRow };
