import { and, asc, sql } from 'drizzle-orm';
import type { Response } from 'express';
import type { TimelineQuery } from '../../../shared/schemas';
import type { CaptureDeps } from './deps';
import { frameSummary } from './summaries';
import { prepared } from '../../db/prepared';
import { allRows } from '../../db/rows';
import { f as frameTable, frameFilters, frameRowColumns, type SelectiveProbe } from './timeline';
import { csvCell } from '../../http/csv';

const COLUMNS = ['id', 'link', 'seq', 't', 'tEnd', 'status', 'address', 'station', 'kind', 'command', 'ns', 'nr', 'pf', 'infoLength', 'fcsReceived', 'fcsComputed', 'flippedBit', 'hex', 'summary'] as const;

const f = frameTable;
const exportColumns = { ...frameRowColumns, fcsReceived: f.fcsReceived, fcsComputed: f.fcsComputed, hex: f.hex };

const PAGE = 2000;

/** Streams the filtered frames of the visible run as CSV or a JSON array, row by row. */
export async function exportFrames(deps: CaptureDeps, res: Response, opts: { jobId: number | null; q: TimelineQuery; names: Map<number, string>; fileName: string; format: 'csv' | 'json'; selective?: SelectiveProbe }) {
  const base = opts.fileName.replace(/[^A-Za-z0-9._-]+/g, '_').replace(/\.[^.]*$/, '') || 'capture';
  res.setHeader('Content-Type', opts.format === 'csv' ? 'text/csv; charset=utf-8' : 'application/json; charset=utf-8');
  res.setHeader('Content-Disposition', `attachment; filename="${base}-frames.${opts.format}"`);
  const write = async (s: string) => {
    if (!res.write(s)) await new Promise((r) => res.once('drain', r));
  };
  if (opts.format === 'csv') await write(COLUMNS.join(',') + '\n');
  else await write('[');
  if (opts.jobId !== null) {
    const w = frameFilters(opts.jobId, opts.q, opts.selective);
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
    let first = true;
    let after = { t: -1, id: 0 };
    // keyset pages, each iterated and written before the next: the connection is never held
    // across an await, and a slow client slows the export instead of filling memory
    for (;;) {
      let buffer = '';
      let n = 0;
      for (const r of allRows(stmt, exportColumns, { ...w.values, afterT: after.t, afterId: after.id })) {
        const station = r.address === null ? null : (opts.names.get(r.address) ?? null);
        const summary = frameSummary(r, station);
        if (opts.format === 'csv') {
          const values: Record<(typeof COLUMNS)[number], unknown> = { ...r, station, summary };
          buffer += COLUMNS.map((c) => csvCell(values[c])).join(',') + '\n';
        } else {
          buffer += (first ? '' : ',\n') + JSON.stringify({ ...r, station, summary });
        }
        first = false;
        after = { t: r.t, id: r.id };
        n++;
      }
      if (buffer) await write(buffer);
      if (n < PAGE || res.destroyed) break;
    }
  }
  if (opts.format === 'json') await write(']\n');
  res.end();
}
