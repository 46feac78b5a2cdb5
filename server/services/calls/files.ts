// Recovered files of a capture's visible call run.
import { missingRanges, type RecordCoverage } from '../../../shared/decoder/calls';
import type { RecoveredFileDetail, RecoveredFileSummary } from '../../../shared/schemas';
import { and, asc, eq, sql } from 'drizzle-orm';
import { prepared } from '../../db/prepared';
import { recoveredFiles } from '../../db/schema';
import { notFound } from '../../http/errors';
import { fileLockConflictDetail } from './call-results';
import { visibleRun } from './capture-layer';
import { stationNames } from './exchanges';
import type { CallsModule } from './module';
import type { RowOf } from '../../db/rows';

const COLUMNS = {
  id: recoveredFiles.id,
  name: recoveredFiles.name,
  kind: recoveredFiles.kind,
  user: recoveredFiles.user,
  stations: recoveredFiles.stations,
  recordCount: recoveredFiles.recordCount,
  endKnown: recoveredFiles.endKnown,
  sha256: recoveredFiles.sha256,
  coverage: recoveredFiles.coverage,
  conflicts: recoveredFiles.conflicts,
  exchangeIds: recoveredFiles.exchangeIds,
  sizeSource: recoveredFiles.sizeSource,
  sizeExchangeId: recoveredFiles.sizeExchangeId,
  lockConflicts: recoveredFiles.lockConflicts,
};
type Row = RowOf<typeof COLUMNS>;
const ph = sql.placeholder;
const COVERAGE: Record<string, RecordCoverage> = { s: 'seen', m: 'missing', c: 'conflict' };

function coverageOf(r: Row): RecordCoverage[] {
  return Array.from(r.coverage, (c) => COVERAGE[c]);
}

function toSummary(r: Row): RecoveredFileSummary {
  const coverage = coverageOf(r);
  const missing = missingRanges(coverage);
  const conflicts = coverage.flatMap((c, i) => (c === 'conflict' ? [i] : []));
  const exchangeIds = JSON.parse(r.exchangeIds) as number[];
  return {
    id: r.id,
    name: r.name,
    kind: r.kind,
    user: r.user,
    stations: JSON.parse(r.stations),
    size: r.recordCount * 128,
    recordCount: r.recordCount,
    endKnown: r.endKnown,
    missing,
    conflicts,
    complete: r.endKnown && missing.length === 0 && conflicts.length === 0,
    sha256: r.sha256,
    exchangeCount: exchangeIds.length,
    // rows of runs stored before these columns leave them out rather than guess
    ...(r.sizeSource === null ? {} : { sizeSource: r.sizeSource, sizeExchangeId: r.sizeExchangeId }),
    ...(r.lockConflicts === null ? {} : { lockConflicts: (JSON.parse(r.lockConflicts) as unknown[]).length }),
  };
}

export function listFiles(m: CallsModule, captureId: number): RecoveredFileSummary[] {
  const run = visibleRun(m, captureId);
  if (!run) return [];
  const rows = prepared(m.db, 'recovered files of a run', () =>
    m.db
      .select(COLUMNS)
      .from(recoveredFiles)
      .where(eq(recoveredFiles.runId, ph('runId')))
      .orderBy(asc(recoveredFiles.name), asc(recoveredFiles.user), asc(recoveredFiles.id))
      .prepare(),
  ).all({ runId: run.runId });
  return rows.map(toSummary);
}

function findFile(m: CallsModule, captureId: number, fileId: number): Row {
  const run = visibleRun(m, captureId);
  const row = run
    ? prepared(m.db, 'recovered file of a run', () =>
        m.db
          .select(COLUMNS)
          .from(recoveredFiles)
          .where(and(eq(recoveredFiles.id, ph('fileId')), eq(recoveredFiles.runId, ph('runId'))))
          .prepare(),
      ).get({ fileId, runId: run.runId })
    : undefined;
  if (!row) throw notFound(`No recovered file with id ${fileId} in this capture (ids change when the call layer runs again)`);
  return row;
}

export function fileDetail(m: CallsModule, captureId: number, fileId: number): RecoveredFileDetail {
  const r = findFile(m, captureId, fileId);
  return {
    ...toSummary(r),
    coverage: coverageOf(r),
    conflictDetail: JSON.parse(r.conflicts),
    ...(r.lockConflicts === null ? {} : { lockConflictDetail: fileLockConflictDetail(r.lockConflicts, stationNames(m, captureId)) }),
    exchangeIds: JSON.parse(r.exchangeIds),
  };
}

/** The bytes and a download name safe in a Content-Disposition header and on any file system. */
export function fileDownload(m: CallsModule, captureId: number, fileId: number): { name: string; bytes: Buffer } {
  const r = findFile(m, captureId, fileId);
  const { bytes } = m.db.select({ bytes: recoveredFiles.bytes }).from(recoveredFiles).where(eq(recoveredFiles.id, r.id)).get()!;
  return { name: safeFileName(r.name), bytes };
}

export function safeFileName(name: string): string {
  const cleaned = name.replace(/[^A-Za-z0-9._-]/g, '_').replace(/^\.+/, '_');
  return cleaned.slice(0, 64) || 'recovered.bin';
}
