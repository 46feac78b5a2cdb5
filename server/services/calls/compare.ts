// Two captures of one rig side by side at exchange level, through the engine's compareExchanges.
import { compareExchanges, type ComparableExchange } from '../../../shared/decoder/calls';
import type { ComparedExchange, CompareResult, ComparisonKindName } from '../../../shared/schemas';
import { asc, eq, sql } from 'drizzle-orm';
import { prepared } from '../../db/prepared';
import { allRows, type RowOf } from '../../db/rows';
import { exchanges } from '../../db/schema';
import { HttpError } from '../../http/errors';
import { findCapture } from '../captures/rows';
import { visibleRun } from './capture-layer';
import { stationNames } from './exchanges';
import type { CallsModule } from './module';

/** what the comparison reads of a stored exchange */
const compareColumns = {
  id: exchanges.id,
  station: exchanges.station,
  callCode: exchanges.callCode,
  callName: exchanges.callName,
  fileName: exchanges.fileName,
  recordNumber: exchanges.recordNumber,
  status: exchanges.status,
  statusMeaning: exchanges.statusMeaning,
  tRequest: exchanges.tRequest,
  rtt: exchanges.rtt,
  outcome: exchanges.outcome,
  retries: exchanges.retries,
  answer: exchanges.answer,
};
type Row = RowOf<typeof compareColumns>;

type StoredExchange = ComparableExchange & { rowId: number };

/**
 * A stored exchange as compareExchanges reads it: the answer is the stored signature of the
 * response's fields (tag left out), the request time stands in for its sample.
 */
function asExchange(r: Row): StoredExchange {
  const answerFields = r.answer === null ? [] : [{ id: 'answer', role: null, display: r.answer }];
  return {
    rowId: r.id,
    station: r.station,
    requestCall: { fileName: r.fileName, recordNumber: r.recordNumber },
    responseCall: r.answer === null && r.outcome === 'unanswered' ? null : { fields: answerFields },
    callCode: r.callCode,
    callName: r.callName,
    recordNumber: r.recordNumber,
    fileName: r.fileName,
    firstSample: r.tRequest,
    rttSeconds: r.rtt,
    outcome: r.outcome,
  };
}

function loadExchanges(m: CallsModule, rigId: number, captureId: number, which: 'a' | 'b'): { name: string; rows: Map<number, Row>; list: StoredExchange[] } {
  const c = findCapture(m, rigId, captureId);
  const run = visibleRun(m, captureId);
  if (!run) throw new HttpError(422, `Capture ${which.toUpperCase()} (“${c.name}”) has no exchanges yet: decode it first`);
  const stmt = prepared(m.db, 'compare exchanges', () =>
    m.db
      .select(compareColumns)
      .from(exchanges)
      .where(eq(exchanges.runId, sql.placeholder('runId')))
      .orderBy(asc(exchanges.tRequest), asc(exchanges.id))
      .prepare(),
  );
  const rows = allRows(stmt, compareColumns, { runId: run.runId });
  return { name: c.name, rows: new Map(rows.map((r) => [r.id, r])), list: rows.map(asExchange) };
}

function brief(r: Row): ComparedExchange {
  return { id: r.id, tRequest: r.tRequest, rttSeconds: r.rtt, outcome: r.outcome, status: r.status, statusMeaning: r.statusMeaning, retries: r.retries, answer: r.answer };
}

export function compareCaptures(m: CallsModule, rigId: number, q: { a: number; b: number; kind?: ComparisonKindName[] }): CompareResult {
  const a = loadExchanges(m, rigId, q.a, 'a');
  const b = loadExchanges(m, rigId, q.b, 'b');
  const { rows, summary } = compareExchanges(a.list, b.list);
  const names = stationNames(m, q.a);
  const wanted = q.kind && q.kind.length ? new Set(q.kind) : null;
  return {
    a: { captureId: q.a, name: a.name },
    b: { captureId: q.b, name: b.name },
    rows: rows
      .filter((r) => !wanted || wanted.has(r.kind))
      .map((r) => ({
        station: { address: r.station, name: names.get(r.station) ?? null },
        call: { code: r.callCode, name: r.callName },
        fileName: r.fileName,
        recordNumber: r.recordNumber,
        kind: r.kind,
        rttDeltaSeconds: r.rttDeltaSeconds,
        a: r.a ? brief(a.rows.get(r.a.rowId)!) : null,
        b: r.b ? brief(b.rows.get(r.b.rowId)!) : null,
      })),
    summary,
  };
}
