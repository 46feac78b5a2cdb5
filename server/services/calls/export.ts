// Exchanges of the visible call run as a CSV or JSON file, streamed page by page in time order.
import { and, asc, sql } from 'drizzle-orm';
import type { Response } from 'express';
import type { ExchangeQuery } from '../../../shared/schemas';
import { visibleRun } from './capture-layer';
import { exchangeColumns, filters, stationNames, toExchangeRow } from './exchanges';
import type { CallsModule } from './module';
import { csvCell } from '../../http/csv';
import { prepared } from '../../db/prepared';
import { allRows } from '../../db/rows';
import { exchanges } from '../../db/schema';

const PAGE = 2000;
const CSV_COLUMNS = [
  'id',
  'station',
  'stationName',
  'callCode',
  'callName',
  'tag',
  'fileName',
  'recordNumber',
  'status',
  'statusMeaning',
  'outcome',
  'retries',
  'tRequest',
  'tRequestEnd',
  'tResponse',
  'rttSeconds',
  'serviceDelaySeconds',
  'requestFrameId',
  'retryFrameIds',
  'responseFrameIds',
  'damagedResponseFrameIds',
] as const;

export async function exportExchanges(
  m: CallsModule,
  res: Response,
  opts: { captureId: number; captureName: string; q: Pick<ExchangeQuery, 'station' | 'call' | 'outcome' | 'file'>; format: 'csv' | 'json' },
): Promise<void> {
  const base = opts.captureName.replace(/[^A-Za-z0-9._-]+/g, '_').replace(/\.[^.]*$/, '') || 'capture';
  res.setHeader('Content-Type', opts.format === 'csv' ? 'text/csv; charset=utf-8' : 'application/json; charset=utf-8');
  res.setHeader('Content-Disposition', `attachment; filename="${base}-exchanges.${opts.format}"`);
  const write = async (s: string) => {
    if (!res.write(s)) await new Promise((r) => res.once('drain', r));
  };
  await write(opts.format === 'csv' ? CSV_COLUMNS.join(',') + '\n' : '[');
  const run = visibleRun(m, opts.captureId);
  if (run) {
    const names = stationNames(m, opts.captureId);
    const w = filters(m, run.runId, opts.q);
    w.add('after', sql`(${exchanges.tRequest}, ${exchanges.id}) > (${sql.placeholder('afterT')}, ${sql.placeholder('afterId')})`);
    const stmt = prepared(m.db, `exchange export ${w.shape}`, () =>
      m.db
        .select(exchangeColumns)
        .from(exchanges)
        .where(and(...w.parts))
        .orderBy(asc(exchanges.tRequest), asc(exchanges.id))
        .limit(PAGE)
        .prepare(),
    );
    let after = { t: -Infinity, id: 0 };
    let first = true;
    for (;;) {
      const rows = allRows(stmt, exchangeColumns, { ...w.values, afterT: after.t, afterId: after.id });
      let buffer = '';
      for (const r of rows) {
        const x = toExchangeRow(r, names);
        if (opts.format === 'csv') {
          const values: Record<(typeof CSV_COLUMNS)[number], unknown> = {
            ...x,
            station: x.station.address,
            stationName: x.station.name,
            callCode: x.call.code,
            callName: x.call.name,
            damagedResponseFrameIds: x.damagedResponseFrameIds ?? [],
          };
          buffer += CSV_COLUMNS.map((c) => csvCell(values[c])).join(',') + '\n';
        } else buffer += (first ? '' : ',\n') + JSON.stringify(x);
        first = false;
      }
      if (buffer) await write(buffer);
      if (rows.length < PAGE || res.destroyed) break;
      const last = rows[rows.length - 1];
      after = { t: last.tRequest, id: last.id };
    }
  }
  if (opts.format === 'json') await write(']\n');
  res.end();
}
