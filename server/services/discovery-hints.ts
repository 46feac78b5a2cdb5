// Field hints over a decoded capture: its good information frames, told request or answer by the
// link directions of the decode's settings, through the hints engine (shared/decoder/hints).
import { and, eq, gt, or, sql } from 'drizzle-orm';
import type { Db } from '../db/client';
import { callLayerRoles } from '../../shared/decoder/calls';
import { FieldHints, hintFrameOf } from '../../shared/decoder/hints';
import type { CaptureFieldHints, FieldHintsQuery } from '../../shared/schemas';
import { decodeJobs, frames } from '../db/schema';
import { frameFromRow, storedFrameColumns } from '../runs/stored-frame';
import { conflict } from '../http/errors';
import type { CaptureRow } from './captures/rows';
import { parseSettings } from './captures/rows';

/** Frames the statistics take at most: beyond this the request thread would wait too long. */
export const HINT_FRAME_LIMIT = 200_000;
const PAGE = 5000;


export function captureFieldHints(db: Db, c: CaptureRow, q: FieldHintsQuery): CaptureFieldHints {
  const job =
    c.currentJobId === null
      ? undefined
      : db.select({ id: decodeJobs.id, state: decodeJobs.state, settings: decodeJobs.settings }).from(decodeJobs).where(eq(decodeJobs.id, c.currentJobId)).get();
  if (!job || job.state !== 'done') throw conflict('The capture has no finished decode yet: decode it first, then its field hints can be counted');
  const settings = parseSettings(job.settings);
  if (!settings) throw conflict('The decode has no channel roles');
  const { links } = callLayerRoles(settings);
  const roles = new Map(links.map((l) => [l.link, l]));
  const skippedLinks = settings.links
    .filter((l) => l.direction === 'unknown')
    .map((l) => ({ link: l.channel, why: 'its direction is not known, so its frames are neither requests nor answers; set it in the channel roles' }));
  const engine = new FieldHints({ selectorOffset: q.selector === 'none' ? null : q.selector });
  const ids = new Map<string, number>();
  let read = 0;
  let limited = false;
  // keyset pages in (first sample, id) order: a long capture never sits in memory at once
  const page = db
    .select(storedFrameColumns)
    .from(frames)
    .where(
      and(
        eq(frames.jobId, job.id),
        eq(frames.status, 'ok'),
        gt(frames.infoLength, 0),
        or(gt(frames.firstSample, sql.placeholder('sample')), and(eq(frames.firstSample, sql.placeholder('sample')), gt(frames.id, sql.placeholder('id')))),
      ),
    )
    .orderBy(frames.firstSample, frames.id)
    .limit(PAGE)
    .prepare();
  let after = { sample: -Infinity, id: 0 };
  pages: for (;;) {
    const rows = page.all(after);
    for (const r of rows) {
      if (read >= HINT_FRAME_LIMIT) {
        limited = true;
        break pages;
      }
      const f = frameFromRow(r);
      const h = hintFrameOf(f, roles.get(f.link));
      if (!h) continue;
      read++;
      ids.set(`${f.link}:${f.seq}`, r.id);
      engine.push(h);
    }
    if (rows.length < PAGE) break;
    const last = rows[rows.length - 1];
    after = { sample: last.firstSample, id: last.id };
  }
  const report = engine.finish();
  const frameIds: Record<string, number> = {};
  for (const g of report.groups) {
    for (const h of g.hints) {
      for (const ref of [...h.supporting, ...h.contradicting]) {
        const k = `${ref.link}:${ref.seq}`;
        const id = ids.get(k);
        if (id !== undefined) frameIds[k] = id;
      }
    }
  }
  return { report, frameIds, skippedLinks, limited, frameLimit: HINT_FRAME_LIMIT };
}
