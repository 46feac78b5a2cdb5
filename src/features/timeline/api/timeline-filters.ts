import { timelineQuerySchema, type TimelineQuery } from '../../../../shared/schemas';

/** The timeline's filters: the query's own fields minus paging. They live in the URL. */
export type TimelineFilters = Omit<TimelineQuery, 'cursor' | 'direction' | 'limit' | 'events'>;

const listKeys = ['link', 'station', 'status', 'kind', 'command'] as const;
const scalarKeys = ['from', 'to', 'text', 'hex'] as const;
export const filterParamNames = [...listKeys, ...scalarKeys];

/**
 * Reads filters from URL search params with the same schema the server uses. A bad value
 * (e.g. a hex pattern with an odd digit) is left out and reported, so the rest still apply.
 */
export function filtersFromParams(params: URLSearchParams): { filters: TimelineFilters; problems: Record<string, string> } {
  const raw: Record<string, string> = {};
  for (const key of filterParamNames) {
    const v = params.get(key);
    if (v !== null && v !== '') raw[key] = v;
  }
  const problems: Record<string, string> = {};
  let result = timelineQuerySchema.safeParse(raw);
  while (!result.success) {
    const issue = result.error.issues[0];
    const key = String(issue.path[0]);
    problems[key] = issue.message;
    delete raw[key];
    result = timelineQuerySchema.safeParse(raw);
  }
  const { cursor: _c, direction: _d, limit: _l, events: _e, ...filters } = result.data;
  return { filters: stripEmpty(filters), problems };
}

function stripEmpty(f: TimelineFilters): TimelineFilters {
  const out: Record<string, unknown> = {};
  for (const [k, v] of Object.entries(f)) {
    if (v === undefined || v === '' || (Array.isArray(v) && v.length === 0)) continue;
    out[k] = v;
  }
  return out as TimelineFilters;
}

/** Filters as query-string pairs, lists comma-joined (the form timelineQuerySchema reads). */
export function filterSearch(filters: TimelineFilters): URLSearchParams {
  const out = new URLSearchParams();
  for (const [k, v] of Object.entries(filters)) {
    if (v === undefined) continue;
    out.set(k, Array.isArray(v) ? v.join(',') : String(v));
  }
  return out;
}

export const damagedStatuses = ['bad-fcs', 'abort', 'short', 'residue'] as const;
