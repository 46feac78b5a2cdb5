import type { CaptureOverview, LinkStats } from '../../../shared/schemas';
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
  const q = (sql: string, ...params: unknown[]) => deps.sqlite.prepare(sql).all(...params, job.id) as Record<string, number | string | null>[];
  const duration = (job.lastSample ?? 0) * period;

  for (const r of q('select status, count(*) as n from frames where job_id = ? group by status')) byStatus[r.status as keyof typeof byStatus] = r.n as number;
  const byKind: Record<string, number> = {};
  for (const r of q('select coalesce(kind, \'none\') as kind, command, count(*) as n from frames where job_id = ? group by kind, command')) {
    byKind[r.kind as string] = (byKind[r.kind as string] ?? 0) + (r.n as number);
    if (r.command !== null && r.kind !== 'I') byKind[`${r.kind} ${r.command}`] = r.n as number;
  }

  const linkNames = JSON.parse(job.links ?? '[]') as string[];
  const perLink = new Map(
    q('select link, count(*) as n, sum(length(bytes)) as octets, sum(t_end - t) as busy from frames where job_id = ? group by link').map((r) => [r.link as string, r]),
  );
  const links: LinkStats[] = linkNames.map((name) => {
    const role = settings?.links.find((l) => l.channel === name);
    const r = perLink.get(name);
    return {
      name,
      label: role?.label ?? '',
      direction: role?.direction ?? 'unknown',
      stationAddress: role?.stationAddress ?? null,
      frames: (r?.n as number) ?? 0,
      octets: (r?.octets as number) ?? 0,
      utilisation: duration > 0 && r ? Math.min(1, (r.busy as number) / duration) : 0,
    };
  });

  const names = timeline.stationNames(c.rigId);
  const stations = q('select address, count(*) as n from frames where job_id = ? and address is not null group by address order by address').map((r) => ({
    address: r.address as number,
    name: names.get(r.address as number) ?? null,
    frames: r.n as number,
  }));

  const binSeconds = duration > 0 ? duration / BINS : 0;
  const counts: Record<string, number[]> = {};
  if (binSeconds > 0) {
    for (const r of q('select status, min(cast(t / ? as integer), ?) as bin, count(*) as n from frames where job_id = ? group by status, bin', binSeconds, BINS - 1)) {
      (counts[r.status as string] ??= new Array(BINS).fill(0))[r.bin as number] += r.n as number;
    }
  }

  // gaps between consecutive frames on one link: end of one to start of the next
  const gapCounts = GAP_EDGES.slice(1).map(() => 0);
  const gaps = deps.sqlite.prepare('select t - lag(t_end) over (partition by link order by t, id) as gap from frames where job_id = ?').pluck();
  for (const g of gaps.iterate(job.id) as Iterable<number | null>) {
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
