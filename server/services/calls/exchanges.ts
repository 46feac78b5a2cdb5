// Exchanges of a capture's visible call run: filtered pages and round-trip statistics.
import type { ExchangePage, ExchangeQuery, ExchangeRow, ExchangeStats, RttSummary, StationExchangeStats } from '../../../shared/schemas';
import { badRequest } from '../../http/errors';
import { exchangeLockConflicts } from './call-results';
import { visibleRun } from './capture-layer';
import type { CallsModule } from './module';

export interface Row {
  id: number;
  station: number;
  callCode: number | null;
  callName: string | null;
  tag: number | null;
  fileName: string | null;
  recordNumber: number | null;
  status: number | null;
  statusMeaning: string | null;
  requestFrameId: number | null;
  retryFrameIds: string;
  responseFrameIds: string;
  tRequest: number;
  tRequestEnd: number;
  tResponse: number | null;
  rtt: number | null;
  outcome: ExchangeRow['outcome'];
  retries: number;
  serviceDelay: number | null;
  damagedResponseFrameIds: string;
  lockConflicts: string;
}

export const EXCHANGE_COLUMNS = `id, station, call_code as callCode, call_name as callName, tag, file_name as fileName, record_number as recordNumber,
  status, status_meaning as statusMeaning, request_frame_id as requestFrameId, retry_frame_ids as retryFrameIds, response_frame_ids as responseFrameIds,
  t_request as tRequest, t_request_end as tRequestEnd, t_response as tResponse, rtt, outcome, retries, service_delay as serviceDelay,
  damaged_response_frame_ids as damagedResponseFrameIds, lock_conflicts as lockConflicts`;

/** Station names of the capture's rig by address. */
export function stationNames(m: CallsModule, captureId: number): Map<number, string> {
  const rows = m.sqlite
    .prepare('select s.address, s.name from stations s join captures c on c.rig_id = s.rig_id where c.id = ?')
    .all(captureId) as { address: number; name: string }[];
  return new Map(rows.map((r) => [r.address, r.name]));
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

export function filters(m: CallsModule, runId: number, q: Pick<ExchangeQuery, 'station' | 'call' | 'outcome' | 'file'>): { where: string; params: unknown[] } {
  const parts = ['run_id = ?'];
  const params: unknown[] = [runId];
  const list = (column: string, values: readonly unknown[] | undefined) => {
    if (!values || values.length === 0) return;
    parts.push(`${column} in (${values.map(() => '?').join(', ')})`);
    params.push(...values);
  };
  list('station', q.station);
  list('call_code', q.call);
  list('outcome', q.outcome);
  if (q.file !== undefined) {
    const ids = m.sqlite.prepare('select exchange_ids from recovered_files where id = ? and run_id = ?').pluck().get(q.file, runId) as string | undefined;
    list('id', ids ? (JSON.parse(ids) as number[]) : [-1]);
    if (!ids) parts.push('0');
  }
  return { where: parts.join(' and '), params };
}

export function exchangePage(m: CallsModule, captureId: number, q: ExchangeQuery): ExchangePage {
  const run = visibleRun(m, captureId);
  if (!run) return { rows: [], nextCursor: null, total: 0 };
  const { where, params } = filters(m, run.runId, q);
  const order = q.sort === 'rtt-desc' ? 'rtt is null, rtt desc, id' : 't_request, id';
  const offset = q.cursor ? decodeCursor(q.cursor) : 0;
  const rows = m.sqlite.prepare(`select ${EXCHANGE_COLUMNS} from exchanges where ${where} order by ${order} limit ? offset ?`).all(...params, q.limit + 1, offset) as Row[];
  const total = m.sqlite.prepare(`select count(*) from exchanges where ${where}`).pluck().get(...params) as number;
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

export function exchangeStats(m: CallsModule, captureId: number, q: { station?: number[]; bins: number }): ExchangeStats {
  const run = visibleRun(m, captureId);
  if (!run) return { stations: [], histogram: { edges: [], counts: [] } };
  const rows = m.sqlite.prepare('select station, outcome, rtt, service_delay as serviceDelay from exchanges where run_id = ?').all(run.runId) as {
    station: number;
    outcome: ExchangeRow['outcome'];
    rtt: number | null;
    serviceDelay: number | null;
  }[];
  const names = stationNames(m, captureId);
  const by = new Map<number, typeof rows>();
  for (const r of rows) {
    const l = by.get(r.station);
    if (l) l.push(r);
    else by.set(r.station, [r]);
  }
  const stations: StationExchangeStats[] = [...by.entries()]
    .sort((a, b) => a[0] - b[0])
    .map(([address, list]) => {
      const delays = list.map((r) => r.serviceDelay).filter((x): x is number => x !== null).sort((a, b) => a - b);
      return {
        address,
        name: names.get(address) ?? null,
        count: list.length,
        answered: list.filter((r) => r.outcome === 'answered').length,
        retried: list.filter((r) => r.outcome === 'retried').length,
        unanswered: list.filter((r) => r.outcome === 'unanswered').length,
        rtt: summary(list.map((r) => r.rtt).filter((x): x is number => x !== null)),
        serviceDelay: delays.length ? { count: delays.length, median: percentile(delays, 0.5), max: delays[delays.length - 1] } : null,
      };
    });
  const chosen = q.station && q.station.length ? new Set(q.station) : null;
  const rtts = rows.filter((r) => r.rtt !== null && (!chosen || chosen.has(r.station))).map((r) => r.rtt!);
  return { stations, histogram: histogram(rtts, q.bins) };
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
