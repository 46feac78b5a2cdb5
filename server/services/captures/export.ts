import { and, asc, sql } from 'drizzle-orm';
import type { Response } from 'express';
import type { TimelineQuery } from '../../../shared/schemas';
import type { CaptureDeps } from './deps';
import { frameSummary } from './summaries';
import { prepared } from '../../db/prepared';
import { allRows } from '../../db/rows';
import { f as frameTable, frameFilters, frameRowColumns, type TimelineReader } from './timeline';
import { csvCell } from '../../http/csv';

const COLUMNS = ['id', 'link', 'seq', 't', 'tEnd', 'status', 'address', 'station', 'kind', 'command', 'ns', 'nr', 'pf', 'infoLength', 'fcsReceived', 'fcsComputed', 'flippedBit', 'hex', 'summary'] as const;

const f = frameTable;
const exportColumns = { ...frameRowColumns, fcsReceived: f.fcsReceived, fcsComputed: f.fcsComputed, hex: f.hex };

const PAGE = 2000;
const utf8 = new TextEncoder();

/** where an export goes on: after the last frame written (keyset), and whether anything was written yet */
export interface ExportChunkArgs {
  rigId: number;
  jobId: number;
  q: TimelineQuery;
  format: 'csv' | 'json';
  after: { t: number; id: number };
  first: boolean;
}
export interface ExportChunk {
  /** the rows as UTF-8 text (bytes, so a read worker hands them over without a copy) */
  body: Uint8Array;
  after: { t: number; id: number };
  /** fewer rows than a page: the export has all its rows */
  done: boolean;
}

/** The next page of an export's rows as text (runs on the request thread or in a read worker). */
export function exportChunk(deps: Pick<CaptureDeps, 'db'>, timeline: TimelineReader, a: ExportChunkArgs): ExportChunk {
  const w = frameFilters(a.jobId, a.q, timeline.selective);
  w.add('after', sql`(${f.t}, ${f.id}) > (${sql.placeholder('afterT')}, ${sql.placeholder('afterId')})`);
  const stmt = prepared(deps.db, `export ${w.shape}`, () =>
    deps.db
      .select(exportColumns)
      .from(f)
      .where(and(...w.parts))
      .orderBy(asc(f.t), asc(f.id))
      .limit(PAGE)
      .prepare(),
  );
  const names = timeline.stationNames(a.rigId);
  let text = '';
  let first = a.first;
  let after = a.after;
  let n = 0;
  for (const r of allRows(stmt, exportColumns, { ...w.values, afterT: after.t, afterId: after.id })) {
    const station = r.address === null ? null : (names.get(r.address) ?? null);
    const summary = frameSummary(r, station);
    if (a.format === 'csv') {
      const values: Record<(typeof COLUMNS)[number], unknown> = { ...r, station, summary };
      text += COLUMNS.map((c) => csvCell(values[c])).join(',') + '\n';
    } else {
      text += (first ? '' : ',\n') + JSON.stringify({ ...r, station, summary });
    }
    first = false;
    after = { t: r.t, id: r.id };
    n++;
  }
  return { body: utf8.encode(text), after, done: n < PAGE };
}

/**
 * Streams the filtered frames of the visible run as CSV or a JSON array, a page at a time: each
 * page is read (by `next`, on a read worker or in-thread) and written before the next, so the
 * connection is never held across an await, and a slow client slows the export instead of
 * filling memory.
 */
export async function exportFrames(
  res: Response,
  opts: { rigId: number; jobId: number | null; q: TimelineQuery; fileName: string; format: 'csv' | 'json'; next: (a: ExportChunkArgs) => Promise<ExportChunk> },
) {
  const base = opts.fileName.replace(/[^A-Za-z0-9._-]+/g, '_').replace(/\.[^.]*$/, '') || 'capture';
  res.setHeader('Content-Type', opts.format === 'csv' ? 'text/csv; charset=utf-8' : 'application/json; charset=utf-8');
  res.setHeader('Content-Disposition', `attachment; filename="${base}-frames.${opts.format}"`);
  const write = async (s: string | Uint8Array) => {
    if (!res.write(s)) await new Promise((r) => res.once('drain', r));
  };
  if (opts.format === 'csv') await write(COLUMNS.join(',') + '\n');
  else await write('[');
  if (opts.jobId !== null) {
    let at: ExportChunkArgs = { rigId: opts.rigId, jobId: opts.jobId, q: opts.q, format: opts.format, after: { t: -1, id: 0 }, first: true };
    for (;;) {
      const chunk = await opts.next(at);
      if (chunk.body.length > 0) await write(chunk.body);
      if (chunk.done || res.destroyed) break;
      at = { ...at, after: chunk.after, first: false };
    }
  }
  if (opts.format === 'json') await write(']\n');
  res.end();
}
