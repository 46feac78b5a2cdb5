import type { RecordCoverageName, RecoveredFileSummary } from '../../../../shared/schemas';

export interface CoverageRun {
  state: RecordCoverageName;
  first: number;
  last: number;
}

/** Per-record coverage from a file summary: its missing ranges and conflicting records, the rest seen. */
export function coverageOf(file: Pick<RecoveredFileSummary, 'recordCount' | 'missing' | 'conflicts'>): RecordCoverageName[] {
  const out: RecordCoverageName[] = new Array(file.recordCount).fill('seen');
  for (const [first, last] of file.missing) for (let r = first; r <= last && r < out.length; r++) out[r] = 'missing';
  for (const r of file.conflicts) if (r < out.length) out[r] = 'conflict';
  return out;
}

/** Consecutive records in the same state, so a 10 000-record file draws as a few segments. */
export function coverageRuns(coverage: readonly RecordCoverageName[]): CoverageRun[] {
  const runs: CoverageRun[] = [];
  coverage.forEach((state, r) => {
    const last = runs[runs.length - 1];
    if (last && last.state === state && last.last === r - 1) last.last = r;
    else runs.push({ state, first: r, last: r });
  });
  return runs;
}

function rangeText(runs: CoverageRun[]): string {
  return runs.map((r) => (r.first === r.last ? String(r.first) : `${r.first}–${r.last}`)).join(', ');
}

/** The coverage said in words: the bar's text alternative and its caption. */
export function coverageText(coverage: readonly RecordCoverageName[]): string {
  const runs = coverageRuns(coverage);
  const count = (s: RecordCoverageName) => coverage.filter((c) => c === s).length;
  const parts = [`${count('seen')} of ${coverage.length} records seen`];
  const missing = runs.filter((r) => r.state === 'missing');
  const conflict = runs.filter((r) => r.state === 'conflict');
  if (missing.length) parts.push(`missing ${count('missing') === 1 ? 'record' : 'records'} ${rangeText(missing)}`);
  if (conflict.length) parts.push(`conflicting ${count('conflict') === 1 ? 'record' : 'records'} ${rangeText(conflict)}`);
  return parts.join('; ');
}
