// Recovered files of a capture's visible call run.
import { missingRanges, type RecordCoverage } from '../../../shared/decoder/calls';
import type { RecoveredFileDetail, RecoveredFileSummary } from '../../../shared/schemas';
import { notFound } from '../../http/errors';
import { fileLockConflictDetail } from './call-results';
import { visibleRun } from './capture-layer';
import { stationNames } from './exchanges';
import type { CallsModule } from './module';

interface Row {
  id: number;
  name: string;
  kind: 'file' | 'boot-image';
  user: number | null;
  stations: string;
  recordCount: number;
  endKnown: number;
  sha256: string;
  coverage: string;
  conflicts: string;
  exchangeIds: string;
  sizeSource: RecoveredFileSummary['sizeSource'] | null;
  sizeExchangeId: number | null;
  lockConflicts: string | null;
}

const COLUMNS = `id, name, kind, user, stations, record_count as recordCount, end_known as endKnown, sha256, coverage, conflicts, exchange_ids as exchangeIds,
  size_source as sizeSource, size_exchange_id as sizeExchangeId, lock_conflicts as lockConflicts`;
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
    endKnown: r.endKnown === 1,
    missing,
    conflicts,
    complete: r.endKnown === 1 && missing.length === 0 && conflicts.length === 0,
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
  const rows = m.sqlite.prepare(`select ${COLUMNS} from recovered_files where run_id = ? order by name, user, id`).all(run.runId) as Row[];
  return rows.map(toSummary);
}

function findFile(m: CallsModule, captureId: number, fileId: number): Row {
  const run = visibleRun(m, captureId);
  const row = run ? (m.sqlite.prepare(`select ${COLUMNS} from recovered_files where id = ? and run_id = ?`).get(fileId, run.runId) as Row | undefined) : undefined;
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
  const bytes = m.sqlite.prepare('select bytes from recovered_files where id = ?').pluck().get(r.id) as Buffer;
  return { name: safeFileName(r.name), bytes };
}

export function safeFileName(name: string): string {
  const cleaned = name.replace(/[^A-Za-z0-9._-]/g, '_').replace(/^\.+/, '_');
  return cleaned.slice(0, 64) || 'recovered.bin';
}
