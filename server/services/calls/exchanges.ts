// Exchanges of a capture's visible call run: filtered pages and round-trip statistics.
import type { ExchangePage, ExchangeQuery, ExchangeRow, ExchangeStats, RttSummary, StationExchangeStats } from '../../../shared/schemas';
import { and, asc, count, desc, eq, sql } from 'drizzle-orm';
import { Conditions } from '../../db/conditions';
import { prepared } from '../../db/prepared';
import { allRows, type RowOf } from '../../db/rows';
import { captures, exchanges, recoveredFiles, stations } from '../../db/schema';
import { badRequest } from '../../http/errors';
import { exchangeLockConflicts } from './call-results';
import { visibleRun } from './capture-layer';
import type { CallsModule } from './module';

/** the stored fields of an exchange that its wire row (ExchangeRow) is made of */
export const exchangeColumns = {
  id: exchanges.id,
  station: exchanges.station,
  callCode: exchanges.callCode,
  callName: exchanges.callName,
  tag: exchanges.tag,
  fileName: exchanges.fileName,
  recordNumber: exchanges.recordNumber,
  status: exchanges.status,
  statusMeaning: exchanges.statusMeaning,
  requestFrameId: exchanges.requestFrameId,
  retryFrameIds: exchanges.retryFrameIds,
  responseFrameIds: exchanges.responseFrameIds,
  tRequest: exchanges.tRequest,
  tRequestEnd: exchanges.tRequestEnd,
  tResponse: exchanges.tResponse,
  rtt: exchanges.rtt,
  outcome: exchanges.outcome,
  retries: exchanges.retries,
  serviceDelay: exchanges.serviceDelay,
  damagedResponseFrameIds: exchanges.damagedResponseFrameIds,
  lockConflicts: exchanges.lockConflicts,
};
export type Row = RowOf<typeof exchangeColumns>;

const ph = sql.placeholder;

/** Station names of the capture's rig by address. */
export function stationNames(m: Pick<CallsModule, 'db'>, captureId: number): Map<number, string> {
  const rows = prepared(m.db, 'exchanges station names', () =>
    m.db
      .select({ address: stations.address, name: stations.name })
      .from(stations)
      .innerJoin(captures, eq(captures.rigId, stations.rigId))
      .where(eq(captures.id, ph('captureId')))
      .prepare(),
  ).all({ captureId });
  return new Map(rows.map((r) => [r.address, r.name]));
}

/** One exchange of a call run, by id. */
export function findExchange(m: Pick<CallsModule, 'db'>, runId: number, exchangeId: number): Row | undefined {
  return prepared(m.db, 'exchange by id', () =>
    m.db
      .select(exchangeColumns)
      .from(exchanges)
      .where(and(eq(exchanges.runId, ph('runId')), eq(exchanges.id, ph('exchangeId'))))
      .prepare(),
  ).get({ runId, exchangeId });
}

export function toExchangeRow(r: Row, names: Map<number, string>): ExchangeRow {
  return {
    id: r.id,
    station: { address: r.station, name: names.get(r.station) ?? null },
    call: { code: r.callCode, name: r.callName },
    tag: r.tag,
    fileName: r.fileName,
    recordNumber: r.recordNumber,
    status: r.status,
    statusMeaning: r.statusMeaning,
    requestFrameId: r.requestFrameId,
    retryFrameIds: JSON.parse(r.retryFrameIds),
    responseFrameIds: JSON.parse(r.responseFrameIds),
    tRequest: r.tRequest,
    tRequestEnd: r.tRequestEnd,
    tResponse: r.tResponse,
    rttSeconds: r.rtt,
    outcome: r.outcome,
    retries: r.retries,
    serviceDelaySeconds: r.serviceDelay,
    damagedResponseFrameIds: JSON.parse(r.damagedResponseFrameIds),
    lockConflicts: exchangeLockConflicts(r.lockConflicts, names),
  };
}

const encodeCursor = (offset: number) => Buffer.from(`o:${offset}`).toString('base64url');
function decodeCursor(cursor: string): number {
  const text = Buffer.from(cursor, 'base64url').toString();
  const match = /^o:(\d{1,12})$/.exec(text);
  if (!match) throw badRequest('Some fields need attention', { cursor: 'This cursor is not one the server gave out; start from the first page' });
  return Number(match[1]);
}

/** The exchange filters of a list or an export over a call run. */
export function filters(m: Pick<CallsModule, 'db'>, runId: number, q: Pick<ExchangeQuery, 'station' | 'call' | 'outcome' | 'file'>): Conditions {
  const w = new Conditions();
  w.add('run', eq(exchanges.runId, w.v(runId)));
  w.inList('station', exchanges.station, q.station);
  w.inList('call', exchanges.callCode, q.call);
  w.inList('outcome', exchanges.outcome, q.outcome);
  if (q.file !== undefined) {
    const file = prepared(m.db, 'exchanges of a file', () =>
      m.db
        .select({ exchangeIds: recoveredFiles.exchangeIds })
        .from(recoveredFiles)
        .where(and(eq(recoveredFiles.id, ph('file')), eq(recoveredFiles.runId, ph('runId'))))
        .prepare(),
    ).get({ file: q.file, runId });
    w.inList('id', exchanges.id, file ? (JSON.parse(file.exchangeIds) as number[]) : [-1]);
    if (!file) w.add('none', sql`0`);
  }
  return w;
}

export function exchangePage(m: CallsModule, captureId: number, q: ExchangeQuery): ExchangePage {
  const run = visibleRun(m, captureId);
  if (!run) return { rows: [], nextCursor: null, total: 0 };
  const w = filters(m, run.runId, q);
  const byRtt = q.sort === 'rtt-desc';
  const order = byRtt ? [sql`${exchanges.rtt} is null`, desc(exchanges.rtt), asc(exchanges.id)] : [asc(exchanges.tRequest), asc(exchanges.id)];
  const offset = q.cursor ? decodeCursor(q.cursor) : 0;
  const page = prepared(m.db, `exchange page ${byRtt ? 'rtt' : 't'} ${w.shape}`, () =>
    m.db
      .select(exchangeColumns)
      .from(exchanges)
      .where(and(...w.parts))
      .orderBy(...order)
      .limit(ph('limit'))
      .offset(ph('offset'))
      .prepare(),
  );
  const rows = allRows(page, exchangeColumns, { ...w.values, limit: q.limit + 1, offset });
  const counted = prepared(m.db, `exchange count ${w.shape}`, () => m.db.select({ n: count() }).from(exchanges).where(and(...w.parts)).prepare());
  const total = counted.get(w.values)?.n ?? 0;
  const names = stationNames(m, captureId);
  const more = rows.length > q.limit;
  return { rows: rows.slice(0, q.limit).map((r) => toExchangeRow(r, names)), nextCursor: more ? encodeCursor(offset + q.limit) : null, total };
}

/** Nearest-rank percentile of sorted values. */
function percentile(sorted: number[], p: number): number {
  return sorted[Math.min(sorted.length - 1, Math.max(0, Math.ceil(p * sorted.length) - 1))];
}

function summary(values: number[]): RttSummary | null {
  if (values.length === 0) return null;
  const s = [...values].sort((a, b) => a - b);
  return { min: s[0], median: percentile(s, 0.5), p95: percentile(s, 0.95), max: s[s.length - 1], mean: s.reduce((a, b) => a + b, 0) / s.length };
}

const statColumns = { station: exchanges.station, outcome: exchanges.outcome, rtt: exchanges.rtt, serviceDelay: exchanges.serviceDelay };

/** a visible call run's figures per station (names left out: a station can be renamed) and its round trips */
interface RunStats {
  stations: Omit<StationExchangeStats, 'name'>[];
  rttStation: Int32Array;
  rtt: Float64Array;
}

/**
 * A call run's exchanges never change once it is visible, and the overview and schedule ask for
 * its figures once per view and station: reading and sorting 100 000 exchanges took over a second
 * of the request thread, so the last few runs' figures are kept per database (call run ids are
 * AUTOINCREMENT, never reused).
 */
const statsCache = new WeakMap<object, Map<number, RunStats>>();
const STATS_RUNS_KEPT = 8;

function runStats(m: CallsModule, runId: number): RunStats {
  let byRun = statsCache.get(m.db);
  if (!byRun) statsCache.set(m.db, (byRun = new Map()));
  const kept = byRun.get(runId);
  if (kept) {
    // most recently used last, so the oldest is the first key
    byRun.delete(runId);
    byRun.set(runId, kept);
    return kept;
  }
  const rows = allRows(
    prepared(m.db, 'exchange stats', () => m.db.select(statColumns).from(exchanges).where(eq(exchanges.runId, ph('runId'))).prepare()),
    statColumns,
    { runId },
  );
  const by = new Map<number, typeof rows>();
  let withRtt = 0;
  for (const r of rows) {
    const l = by.get(r.station);
    if (l) l.push(r);
    else by.set(r.station, [r]);
    if (r.rtt !== null) withRtt++;
  }
  const stationStats = [...by.entries()]
    .sort((a, b) => a[0] - b[0])
    .map(([address, list]) => {
      const delays = list.map((r) => r.serviceDelay).filter((x): x is number => x !== null).sort((a, b) => a - b);
      return {
        address,
        count: list.length,
        answered: list.filter((r) => r.outcome === 'answered').length,
        retried: list.filter((r) => r.outcome === 'retried').length,
        unanswered: list.filter((r) => r.outcome === 'unanswered').length,
        rtt: summary(list.map((r) => r.rtt).filter((x): x is number => x !== null)),
        serviceDelay: delays.length ? { count: delays.length, median: percentile(delays, 0.5), max: delays[delays.length - 1] } : null,
      };
    });
  const rttStation = new Int32Array(withRtt);
  const rtt = new Float64Array(withRtt);
  let i = 0;
  for (const r of rows) {
    if (r.rtt === null) continue;
    rttStation[i] = r.station;
    rtt[i++] = r.rtt;
  }
  const stats = { stations: stationStats, rttStation, rtt };
  byRun.set(runId, stats);
  if (byRun.size > STATS_RUNS_KEPT) byRun.delete(byRun.keys().next().value!);
  return stats;
}

export function exchangeStats(m: CallsModule, captureId: number, q: { station?: number[]; bins: number }): ExchangeStats {
  const run = visibleRun(m, captureId);
  if (!run) return { stations: [], histogram: { edges: [], counts: [] } };
  const stats = runStats(m, run.runId);
  const names = stationNames(m, captureId);
  const stationsOut: StationExchangeStats[] = stats.stations.map(({ address, ...figures }) => ({ address, name: names.get(address) ?? null, ...figures }));
  const chosen = q.station && q.station.length ? new Set(q.station) : null;
  const rtts: number[] = [];
  for (let i = 0; i < stats.rtt.length; i++) if (!chosen || chosen.has(stats.rttStation[i])) rtts.push(stats.rtt[i]);
  return { stations: stationsOut, histogram: histogram(rtts, q.bins) };
}

function histogram(values: number[], bins: number): { edges: number[]; counts: number[] } {
  if (values.length === 0) return { edges: [], counts: [] };
  // a loop, not Math.min(...values): a busy capture has more round trips than call arguments allow
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of values) {
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  if (hi === lo) {
    lo = Math.max(0, lo - lo * 0.05);
    hi = hi + (hi * 0.05 || 1e-6);
  }
  const width = (hi - lo) / bins;
  const edges = Array.from({ length: bins + 1 }, (_, i) => lo + i * width);
  const counts = new Array<number>(bins).fill(0);
  for (const v of values) counts[Math.min(bins - 1, Math.floor((v - lo) / width))]++;
  return { edges, counts };
}
