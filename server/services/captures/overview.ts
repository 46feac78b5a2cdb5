import { and, asc, count, eq, isNotNull, sql } from 'drizzle-orm';
import type { CaptureOverview, LinkStats } from '../../../shared/schemas';
import { frames } from '../../db/schema';
import { iterateValues } from '../../db/rows';
import type { CaptureDeps } from './deps';
import { currentJob, parseSettings, toSummary, type CaptureRow } from './rows';
import type { TimelineReader } from './timeline';

const BINS = 100;
const GAP_EDGES = [0, 1e-5, 1e-4, 1e-3, 1e-2, 1e-1, 1, 10];
const STATUSES = ['ok', 'bad-fcs', 'abort', 'short', 'residue'] as const;

/** Totals of the visible run: everything here is one grouped query over indexed columns. */
export function captureOverview(deps: CaptureDeps, timeline: TimelineReader, c: CaptureRow): CaptureOverview {
  const capture = toSummary(deps, c);
  const job = currentJob(deps, c);
  const settings = parseSettings(job?.settings ?? null) ?? parseSettings(c.settings);
  const period = job?.samplePeriod ?? 0;
  const byStatus = Object.fromEntries(STATUSES.map((s) => [s, 0])) as CaptureOverview['byStatus'];
  const empty: CaptureOverview = {
    capture,
    durationSeconds: 0,
    samplePeriodSeconds: period,
    links: [],
    byStatus,
    byKind: {},
    stations: [],
    timeBins: { binSeconds: 0, start: 0, counts: {} },
    gapHistogram: { edges: GAP_EDGES, counts: GAP_EDGES.slice(1).map(() => 0) },
    lineEvents: 0,
  };
  if (!job) return empty;
  const ofRun = eq(frames.jobId, job.id);
  const duration = (job.lastSample ?? 0) * period;

  for (const r of deps.db.select({ status: frames.status, n: count() }).from(frames).where(ofRun).groupBy(frames.status).all()) byStatus[r.status] = r.n;
  const byKind: Record<string, number> = {};
  const kinds = deps.db
    .select({ kind: sql<string>`coalesce(${frames.kind}, 'none')`, command: frames.command, n: count() })
    .from(frames)
    .where(ofRun)
    .groupBy(frames.kind, frames.command)
    .all();
  for (const r of kinds) {
    byKind[r.kind] = (byKind[r.kind] ?? 0) + r.n;
    if (r.command !== null && r.kind !== 'I') byKind[`${r.kind} ${r.command}`] = r.n;
  }

  const linkNames = JSON.parse(job.links ?? '[]') as string[];
  const perLink = new Map(
    deps.db
      .select({
        link: frames.link,
        n: count(),
        octets: sql<number>`sum(length(${frames.bytes}))`.mapWith(Number),
        busy: sql<number>`sum(${frames.tEnd} - ${frames.t})`.mapWith(Number),
      })
      .from(frames)
      .where(ofRun)
      .groupBy(frames.link)
      .all()
      .map((r) => [r.link, r]),
  );
  const links: LinkStats[] = linkNames.map((name) => {
    const role = settings?.links.find((l) => l.channel === name);
    const r = perLink.get(name);
    return {
      name,
      label: role?.label ?? '',
      direction: role?.direction ?? 'unknown',
      stationAddress: role?.stationAddress ?? null,
      frames: r?.n ?? 0,
      octets: r?.octets ?? 0,
      utilisation: duration > 0 && r ? Math.min(1, r.busy / duration) : 0,
    };
  });

  const names = timeline.stationNames(c.rigId);
  const stations = deps.db
    .select({ address: sql<number>`${frames.address}`, n: count() })
    .from(frames)
    .where(and(ofRun, isNotNull(frames.address)))
    .groupBy(frames.address)
    .orderBy(asc(frames.address))
    .all()
    .map((r) => ({ address: r.address, name: names.get(r.address) ?? null, frames: r.n }));

  const binSeconds = duration > 0 ? duration / BINS : 0;
  const counts: Record<string, number[]> = {};
  if (binSeconds > 0) {
    const bin = sql<number>`min(cast(${frames.t} / ${binSeconds} as integer), ${BINS - 1})`;
    const binned = deps.db.select({ status: frames.status, bin: bin.as('bin'), n: count() }).from(frames).where(ofRun).groupBy(frames.status, sql`bin`).all();
    for (const r of binned) (counts[r.status] ??= new Array(BINS).fill(0))[r.bin] += r.n;
  }

  // gaps between consecutive frames on one link: end of one to start of the next
  const gapCounts = GAP_EDGES.slice(1).map(() => 0);
  // streamed: a run's gaps never sit in memory at once
  const gaps = iterateValues<[number | null]>(
    deps.db,
    deps.db
      .select({ gap: sql<number | null>`${frames.t} - lag(${frames.tEnd}) over (partition by ${frames.link} order by ${frames.t}, ${frames.id})` })
      .from(frames)
      .where(ofRun),
  );
  for (const [g] of gaps) {
    if (g === null) continue;
    let b = GAP_EDGES.findIndex((e) => g < e) - 1;
    if (b < 0) b = g < 0 ? 0 : gapCounts.length - 1;
    gapCounts[Math.min(b, gapCounts.length - 1)]++;
  }

  return {
    capture,
    durationSeconds: duration,
    samplePeriodSeconds: period,
    links,
    byStatus,
    byKind,
    stations,
    timeBins: { binSeconds, start: 0, counts },
    gapHistogram: { edges: GAP_EDGES, counts: gapCounts },
    lineEvents: job.events,
  };
}
