import type { ComparisonKindName, CompareRow } from '../../../../shared/schemas';

export const kindOrder: ComparisonKindName[] = ['answered-differently', 'outcome-differs', 'slower', 'faster', 'only-in-a', 'only-in-b', 'same'];

/** What happened to the request in B, relative to A; the row's own words come from kindText. */
export const kindLabels: Record<ComparisonKindName, string> = {
  'answered-differently': 'answered differently',
  'outcome-differs': 'answered in one only',
  slower: 'slower',
  faster: 'faster',
  'only-in-a': 'only in A',
  'only-in-b': 'only in B',
  same: 'same',
};

export function kindText(row: CompareRow): string {
  if (row.kind === 'outcome-differs' && row.a && row.b) {
    if (row.a.outcome === 'unanswered') return 'not answered in A';
    if (row.b.outcome === 'unanswered') return 'not answered in B';
    return `${row.a.outcome} in A, ${row.b.outcome} in B`;
  }
  return kindLabels[row.kind];
}

/** Rows that differ, the most telling kinds first, each kind in time order. */
export function sortRows(rows: readonly CompareRow[]): CompareRow[] {
  const t = (r: CompareRow) => r.a?.tRequest ?? r.b?.tRequest ?? 0;
  return [...rows].sort((x, y) => kindOrder.indexOf(x.kind) - kindOrder.indexOf(y.kind) || t(x) - t(y));
}
