import type { Response } from 'express';
import type { TimelineQuery } from '../../../shared/schemas';
import type { CaptureDeps } from './deps';
import { frameSummary } from './summaries';
import { frameFilters, type SelectiveProbe } from './timeline';
import { csvCell } from '../../http/csv';

const COLUMNS = ['id', 'link', 'seq', 't', 'tEnd', 'status', 'address', 'station', 'kind', 'command', 'ns', 'nr', 'pf', 'infoLength', 'fcsReceived', 'fcsComputed', 'flippedBit', 'hex', 'summary'] as const;

interface ExportRow {
  id: number;
  link: string;
  seq: number;
  t: number;
  tEnd: number;
  status: string;
  address: number | null;
  kind: string | null;
  command: string | null;
  ns: number | null;
  nr: number | null;
  pf: number | null;
  infoLength: number;
  fcsReceived: number | null;
  fcsComputed: number | null;
  flippedBit: number | null;
  hex: string;
}

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
    const f = frameFilters(opts.jobId, opts.q, opts.selective);
    const stmt = deps.sqlite.prepare(
      `select f.id, f.link, f.seq, f.t, f.t_end as tEnd, f.status, f.address, f.kind, f.command, f.ns, f.nr, f.pf, f.info_length as infoLength,
         f.fcs_received as fcsReceived, f.fcs_computed as fcsComputed, f.flipped_bit as flippedBit, f.hex
       from frames f where ${f.where.join(' and ')} and (f.t, f.id) > (?, ?) order by f.t, f.id limit ?`,
    );
    let first = true;
    let after = { t: -1, id: 0 };
    // keyset pages, each iterated and written before the next: the connection is never held
    // across an await, and a slow client slows the export instead of filling memory
    for (;;) {
      let buffer = '';
      let n = 0;
      for (const r of stmt.iterate(...f.params, after.t, after.id, PAGE) as Iterable<ExportRow>) {
        const station = r.address === null ? null : (opts.names.get(r.address) ?? null);
        const summary = frameSummary(r, station);
        const pf = r.pf === null ? null : r.pf === 1;
        if (opts.format === 'csv') {
          const values: Record<(typeof COLUMNS)[number], unknown> = { ...r, station, summary, pf };
          buffer += COLUMNS.map((c) => csvCell(values[c])).join(',') + '\n';
        } else {
          buffer += (first ? '' : ',\n') + JSON.stringify({ ...r, pf, station, summary });
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
