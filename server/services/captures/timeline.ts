import { and, asc, count, desc, eq, isNotNull, sql, type Placeholder } from 'drizzle-orm';
import { alias, type SQLiteColumn } from 'drizzle-orm/sqlite-core';
import type { TimelineCallMarker, TimelineEvent, TimelineFrame, TimelinePage, TimelineQuery, TimelineRow } from '../../../shared/schemas';
import { Conditions } from '../../db/conditions';
import { prepared } from '../../db/prepared';
import { allRows } from '../../db/rows';
import { callRuns, captureCallLayers, decodeJobs, exchangeFrames, exchanges, frames, lineEvents, notes, stations } from '../../db/schema';
import { badRequest } from '../../http/errors';
import { searchHitCount, searchHitIds, type SearchColumn } from '../../runs/search-index';
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

/** the timeline's tables under the aliases its query plans are checked with (f frames, e line events) */
export const f = alias(frames, 'f');
const e = alias(lineEvents, 'e');
// inside sql`` an alias renders as its name alone, so FROM clauses name the table before it
const n = alias(notes, 'n');
const nf = alias(frames, 'nf');

/** filters that only frames can satisfy: with any of them, line events are left out */
const hasFrameFilter = (q: TimelineQuery) =>
  !!(q.station?.length || q.status?.length || q.kind?.length || q.command?.length || q.text || q.hex);

/**
 * Whether a trigram search (column LIKE pattern) finds few enough rows to drive the query.
 * A common pattern is answered faster by walking frames in time order and testing each, which
 * stops after one page; a rare one by collecting its few rows from the index first.
 */
export type SelectiveProbe = (column: SearchColumn, likePattern: string) => boolean;

/** the capture of a decode run, as a scalar subquery */
const captureOfRun = (jobId: Placeholder) => sql`(select ${decodeJobs.captureId} from ${decodeJobs} where ${decodeJobs.id} = ${jobId})`;

const markedFrame = exchangeFrames.frameId;
/** a page frame's exchange and its part in it */
const markerColumns = {
  frameId: markedFrame,
  exchangeId: exchanges.id,
  station: exchanges.station,
  callName: exchanges.callName,
  callCode: exchanges.callCode,
  rtt: exchanges.rtt,
  outcome: exchanges.outcome,
  role: sql<TimelineCallMarker['role']>`case when ${exchanges.requestFrameId} = ${markedFrame} then 'request'
      when exists (select 1 from json_each(${exchanges.responseFrameIds}) r where r.value = ${markedFrame}) then 'response'
      when exists (select 1 from json_each(${exchanges.damagedResponseFrameIds}) r where r.value = ${markedFrame}) then 'damaged-response'
      else 'retry' end`,
};

/** the call run visible over a decode run (its capture's current one, finished, over this run), as a scalar subquery */
const visibleCallRun = (jobId: Placeholder) =>
  sql`(select ${callRuns.id} from ${decodeJobs}
        join ${captureCallLayers} on ${captureCallLayers.captureId} = ${decodeJobs.captureId}
        join ${callRuns} on ${callRuns.id} = ${captureCallLayers.currentRunId} and ${callRuns.decodeJobId} = ${decodeJobs.id} and ${callRuns.state} = 'done'
        where ${decodeJobs.id} = ${jobId})`;

/** The frame filters of a timeline query over the frames aliased `f`. */
export function frameFilters(jobId: number, q: TimelineQuery, selective: SelectiveProbe = () => true): Conditions {
  const w = new Conditions();
  w.inList('link', f.link, q.link);
  w.inList('station', f.address, q.station);
  w.inList('status', f.status, q.status);
  w.inList('kind', f.kind, q.kind);
  w.inList('command', f.command, q.command);
  if (q.from !== undefined) w.add('from', sql`${f.t} >= ${w.v(q.from)}`);
  if (q.to !== undefined) w.add('to', sql`${f.t} <= ${w.v(q.to)}`);
  let searched = false;
  if (q.text) {
    const escaped = q.text.replace(/[\\%_]/g, (m) => `\\${m}`);
    // frames whose notes hold the text match too; notes pin frames by link + seq, not by id
    const noteMatches = () => sql`${n.captureId} = ${captureOfRun(w.v(jobId))} and ${n.body} like ${w.v(`%${escaped}%`)} escape '\\'`;
    // the trigram index answers substrings of three or more characters without LIKE wildcards
    if (q.text.length >= 3 && escaped === q.text && selective('text', `%${q.text}%`)) {
      searched = true;
      const hits = searchHitIds('text', w.v(`%${q.text}%`));
      const noted = sql`select ${nf.id} from ${notes} ${n} cross join ${frames} ${nf} on ${nf.jobId} = ${w.v(jobId)} and ${nf.link} = ${n.link} and ${nf.seq} = ${n.seq} where ${noteMatches()}`;
      w.add('text-index', sql`${f.id} in (${hits} union ${noted})`);
    }
    w.add('text', sql`(${f.text} like ${w.v(`%${escaped}%`)} escape '\\' or exists (select 1 from ${notes} ${n} where ${noteMatches()} and ${n.link} = ${f.link} and ${n.seq} = ${f.seq}))`);
  }
  if (q.hex) {
    const tokens = hexTokens(q.hex);
    if (tokens.length > 0) {
      const literal = longestLiteral(tokens);
      if (literal.length >= 4 && selective('hex', `%${literal}%`)) {
        searched = true;
        w.add('hex-index', sql`${f.id} in (${searchHitIds('hex', w.v(`%${literal}%`))})`);
      }
      w.add('hex', sql`hex_match(${f.hex}, ${w.v(tokens.join(' '))})`);
    }
  }
  // With a rare search term the rows come from the search index: the unary + keeps the planner
  // from walking the job's whole time index instead and testing each frame against the list.
  w.parts.unshift(searched ? sql`+${f.jobId} = ${w.v(jobId)}` : sql`${f.jobId} = ${w.v(jobId)}`);
  w.shape = `${searched ? '+job' : 'job'};${w.shape}`;
  return w;
}

function eventFilters(jobId: number, q: TimelineQuery): Conditions {
  const w = new Conditions();
  w.add('job', eq(e.jobId, w.v(jobId)));
  w.inList('link', e.link, q.link);
  if (q.from !== undefined) w.add('from', sql`${e.t} >= ${w.v(q.from)}`);
  if (q.to !== undefined) w.add('to', sql`${e.t} <= ${w.v(q.to)}`);
  return w;
}

/** adds the keyset condition of one stream (its k) relative to a cursor */
function keyset(w: Conditions, t: SQLiteColumn, id: SQLiteColumn, k: number, c: Cursor | null, forward: boolean): void {
  if (!c) return;
  if (forward) {
    if (c.k < k) w.add('t>=', sql`${t} >= ${w.v(c.t)}`);
    else if (c.k === k) w.add('(t,id)>', sql`(${t}, ${id}) > (${w.v(c.t)}, ${w.v(c.id)})`);
    else w.add('t>', sql`${t} > ${w.v(c.t)}`);
    return;
  }
  if (c.k > k) w.add('t<=', sql`${t} <= ${w.v(c.t)}`);
  else if (c.k === k) w.add('(t,id)<', sql`(${t}, ${id}) < (${w.v(c.t)}, ${w.v(c.id)})`);
  else w.add('t<', sql`${t} < ${w.v(c.t)}`);
}

const noteKey = (link: string, seq: number) => `${link}\u0000${seq}`;

function withNotesAndCall(fr: TimelineFrame, counts: Map<string, number>, calls: Map<number, TimelineCallMarker>): TimelineFrame {
  const notesOn = counts.get(noteKey(fr.link, fr.seq));
  const call = calls.get(fr.id);
  return notesOn || call ? { ...fr, ...(notesOn ? { notes: notesOn } : {}), ...(call ? { call } : {}) } : fr;
}

/** the stored fields of a frame that both a timeline row and the frames export carry */
export const frameRowColumns = {
  id: f.id,
  link: f.link,
  seq: f.seq,
  t: f.t,
  tEnd: f.tEnd,
  status: f.status,
  address: f.address,
  kind: f.kind,
  command: f.command,
  ns: f.ns,
  nr: f.nr,
  pf: f.pf,
  infoLength: f.infoLength,
  flippedBit: f.flippedBit,
};
const frameColumns = {
  ...frameRowColumns,
  // a list shows 64 octets at most
  hex: sql<string>`substr(${f.hex}, 1, 128)`,
};
const eventColumns = { id: e.id, link: e.link, channel: e.channel, kind: e.kind, t: e.t, tEnd: e.tEnd, count: e.count };

/** the stored fields of a frame that a timeline row shows */
export type TimelineFrameRow = Pick<typeof frames.$inferSelect, keyof typeof frameColumns>;
type EventRow = Pick<typeof lineEvents.$inferSelect, keyof typeof eventColumns>;

/** matches above this many, a search walks the frames in time order instead of collecting them first */
const SELECTIVE_LIMIT = 5000;
const PROBE_TTL_MS = 30_000;
const ph = sql.placeholder;

export class TimelineReader {
  private readonly probes = new Map<string, { selective: boolean; at: number }>();
  constructor(private readonly deps: Pick<CaptureDeps, 'db'>) {}

  /** counts up to SELECTIVE_LIMIT index hits of a pattern; remembered briefly so the pages of one search ask once */
  readonly selective: SelectiveProbe = (column, likePattern) => {
    const key = `${column}\u0000${likePattern}`;
    const now = Date.now();
    const hit = this.probes.get(key);
    if (hit && now - hit.at < PROBE_TTL_MS) return hit.selective;
    // once per pattern and TTL, so not worth a prepared statement per pattern
    const hits = this.deps.db.get<{ n: number }>(searchHitCount(column, likePattern, SELECTIVE_LIMIT));
    const selective = hits.n < SELECTIVE_LIMIT;
    if (this.probes.size > 500) this.probes.clear();
    this.probes.set(key, { selective, at: now });
    return selective;
  };

  /** the prepared statement of one query shape, built on first use */
  private cached<T>(key: string, build: () => T): T {
    return prepared(this.deps.db, `timeline ${key}`, build);
  }

  stationNames(rigId: number): Map<number, string> {
    const rows = this.cached('stations', () =>
      this.deps.db.select({ address: stations.address, name: stations.name }).from(stations).where(eq(stations.rigId, ph('rigId'))).prepare(),
    ).all({ rigId });
    return new Map(rows.map((r) => [r.address, r.name]));
  }

  /** notes per frame of the run's capture, keyed link + seq (a capture holds few notes; frames many) */
  private noteCounts(jobId: number): Map<string, number> {
    const rows = this.cached('notes', () =>
      this.deps.db
        .select({ link: sql<string>`${notes.link}`, seq: sql<number>`${notes.seq}`, n: count() })
        .from(notes)
        .where(and(eq(notes.captureId, captureOfRun(ph('jobId'))), isNotNull(notes.seq)))
        .groupBy(notes.link, notes.seq)
        .prepare(),
    ).all({ jobId });
    return new Map(rows.map((r) => [noteKey(r.link, r.seq), r.n]));
  }

  /**
   * The call markers of the page's frames: each frame's exchange in the capture's visible call
   * run (the one over this decode run), found through exchange_frames by (run, frame).
   */
  private callMarkers(jobId: number, frameIds: number[]): Map<number, TimelineCallMarker> {
    const markers = new Map<number, TimelineCallMarker>();
    if (frameIds.length === 0) return markers;
    const stmt = this.cached('calls', () =>
      this.deps.db
        .select(markerColumns)
        .from(exchangeFrames)
        .innerJoin(exchanges, eq(exchanges.id, exchangeFrames.exchangeId))
        .where(
          and(
            eq(exchangeFrames.runId, visibleCallRun(ph('jobId'))),
            // each page frame looked up by (run, frame) in the index; joined the other way round,
            // SQLite walked every exchange frame of the run and scanned the page's ids for each
            // (1.2 s a page with 100 000 exchange frames)
            sql`${exchangeFrames.frameId} in (select value from json_each(${ph('ids')}))`,
          ),
        )
        .orderBy(exchangeFrames.frameId, exchanges.id)
        .prepare(),
    );
    const rows = allRows(stmt, markerColumns, { ids: JSON.stringify(frameIds), jobId });
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

  toFrame(r: TimelineFrameRow, names: Map<number, string>): TimelineFrame {
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
      pf: r.pf,
      infoLength: r.infoLength,
      hex: r.hex,
      summary: frameSummary(r, stationName),
    };
  }

  private frames(jobId: number, q: TimelineQuery, c: Cursor | null, forward: boolean, limit: number): TimelineFrameRow[] {
    const w = frameFilters(jobId, q, this.selective);
    keyset(w, f.t, f.id, 0, c, forward);
    const order = forward ? [asc(f.t), asc(f.id)] : [desc(f.t), desc(f.id)];
    const stmt = this.cached(`frames ${forward ? 'f' : 'b'} ${w.shape}`, () =>
      this.deps.db
        .select(frameColumns)
        .from(f)
        .where(and(...w.parts))
        .orderBy(...order)
        .limit(ph('limit'))
        .prepare(),
    );
    return allRows(stmt, frameColumns, { ...w.values, limit });
  }

  private events(jobId: number, q: TimelineQuery, c: Cursor | null, forward: boolean, limit: number): EventRow[] {
    if (!q.events || hasFrameFilter(q)) return [];
    const w = eventFilters(jobId, q);
    keyset(w, e.t, e.id, 1, c, forward);
    const order = forward ? [asc(e.t), asc(e.id)] : [desc(e.t), desc(e.id)];
    const stmt = this.cached(`events ${forward ? 'f' : 'b'} ${w.shape}`, () =>
      this.deps.db
        .select(eventColumns)
        .from(e)
        .where(and(...w.parts))
        .orderBy(...order)
        .limit(ph('limit'))
        .prepare(),
    );
    return allRows(stmt, eventColumns, { ...w.values, limit });
  }

  /** up to `limit` rows after (forward) or before (backward) the cursor, merged in (t, k, id) order, nearest first */
  private slice(jobId: number, q: TimelineQuery, c: Cursor | null, forward: boolean, limit: number) {
    const fs = this.frames(jobId, q, c, forward, limit).map((r) => ({ k: 0 as const, r }));
    const es = this.events(jobId, q, c, forward, limit).map((r) => ({ k: 1 as const, r }));
    const sign = forward ? 1 : -1;
    const merged = [...fs, ...es].sort((a, b) => sign * (a.r.t - b.r.t || a.k - b.k || a.r.id - b.r.id));
    return merged.slice(0, limit);
  }

  page(rigId: number, jobId: number | null, q: TimelineQuery): TimelinePage {
    if (jobId === null) return { rows: [], nextCursor: null, prevCursor: null };
    const cursor = q.cursor ? decodeCursor(q.cursor) : null;
    const forward = cursor ? cursor.d === 'f' : q.direction === 'forward';
    const got = this.slice(jobId, q, cursor, forward, q.limit + 1);
    // the extra row says whether the page's own direction goes on
    const more = got.length > q.limit;
    const taken = got.slice(0, q.limit);
    if (!forward) taken.reverse();
    const names = this.stationNames(rigId);
    const noteCounts = this.noteCounts(jobId);
    const calls = this.callMarkers(jobId, taken.flatMap((x) => (x.k === 0 ? [x.r.id] : [])));
    const rows: TimelineRow[] = taken.map((x) =>
      x.k === 0
        ? withNotesAndCall(this.toFrame(x.r, names), noteCounts, calls)
        : ({ type: 'event', ...x.r, summary: eventSummary(x.r) } satisfies TimelineEvent),
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
    // the other way needs a look only from a cursor: without one the page starts at an end
    const otherWay = (from: Cursor, ahead: boolean) => cursor !== null && this.slice(jobId, q, from, ahead, 1).length > 0;
    const before = forward ? otherWay(keyOf(first, 'b'), false) : more;
    const after = forward ? more : otherWay(keyOf(last, 'f'), true);
    // nextCursor continues in the page's direction; prevCursor goes the other way
    const forwardCursor = after ? encodeCursor(keyOf(last, 'f')) : null;
    const backwardCursor = before ? encodeCursor(keyOf(first, 'b')) : null;
    return forward
      ? { rows, nextCursor: forwardCursor, prevCursor: backwardCursor }
      : { rows, nextCursor: backwardCursor, prevCursor: forwardCursor };
  }

  count(jobId: number | null, q: TimelineQuery): number {
    if (jobId === null) return 0;
    if (!hasFrameFilter(q) && !q.link?.length && q.from === undefined && q.to === undefined) {
      // the whole run: its totals were recorded when it finished
      const totals = this.cached('totals', () =>
        this.deps.db.select({ frames: decodeJobs.frames, events: decodeJobs.events }).from(decodeJobs).where(eq(decodeJobs.id, ph('jobId'))).prepare(),
      ).get({ jobId });
      return totals ? totals.frames + (q.events ? totals.events : 0) : 0;
    }
    const fw = frameFilters(jobId, q, this.selective);
    const countFrames = this.cached(`count frames ${fw.shape}`, () => this.deps.db.select({ n: count() }).from(f).where(and(...fw.parts)).prepare());
    let total = countFrames.get(fw.values)?.n ?? 0;
    if (q.events && !hasFrameFilter(q)) {
      const ew = eventFilters(jobId, q);
      const countEvents = this.cached(`count events ${ew.shape}`, () => this.deps.db.select({ n: count() }).from(e).where(and(...ew.parts)).prepare());
      total += countEvents.get(ew.values)?.n ?? 0;
    }
    return total;
  }

  /** a forward cursor that starts at the first row at or after t */
  at(t: number): string {
    return encodeCursor({ t, k: -1, id: 0, d: 'f' });
  }

  /** the next or previous damaged frame (any status but ok) on the timeline */
  damaged(jobId: number, from: { t: number; id: number }, dir: 'next' | 'prev'): number | null {
    const forward = dir === 'next';
    const stmt = this.cached(`damaged ${dir}`, () =>
      this.deps.db
        .select({ id: frames.id })
        .from(frames)
        .where(
          and(
            eq(frames.jobId, ph('jobId')),
            sql`${frames.status} in ('bad-fcs', 'abort', 'short', 'residue')`,
            forward ? sql`(${frames.t}, ${frames.id}) > (${ph('t')}, ${ph('id')})` : sql`(${frames.t}, ${frames.id}) < (${ph('t')}, ${ph('id')})`,
          ),
        )
        .orderBy(...(forward ? [asc(frames.t), asc(frames.id)] : [desc(frames.t), desc(frames.id)]))
        .limit(1)
        .prepare(),
    );
    return stmt.get({ jobId, t: from.t, id: from.id })?.id ?? null;
  }
}

export type { CaptureRow };
