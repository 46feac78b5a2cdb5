import { Link, useNavigate, useSearchParams } from 'react-router';
import type { CaptureSummaryRow, ComparedExchange, CompareResult, CompareRow, RigDetail } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { Card, CardTitle } from '../../../components/card';
import { ErrorNotice } from '../../../components/notice';
import { formatDelta, formatDuration, formatSeconds } from '../../../components/units';
import { formatAddress } from '../../../lib/format';
import { useComparison } from '../api/get-comparison';
import { kindText, sortRows } from './compare-words';
import { captureScope } from '../../../lib/scope';

interface CompareViewProps {
  rig: RigDetail;
  capture: CaptureSummaryRow;
  /** the rig's captures (the caller reads them), to choose B from */
  captures: CaptureSummaryRow[];
}

/** Screen 11: two captures of the same rig side by side at exchange level. A is this capture. */
export function CompareView({ rig, capture, captures }: CompareViewProps) {
  const [params, setParams] = useSearchParams();
  const navigate = useNavigate();
  const withParam = Number(params.get('with') ?? NaN);
  const others = captures.filter((c) => c.id !== capture.id && c.status === 'decoded');
  const b = Number.isInteger(withParam) && withParam !== capture.id ? withParam : null;
  const showSame = params.get('same') === '1';
  const result = useComparison(rig.id, capture.id, b);
  const set = (k: string, v: string | null) =>
    setParams(
      (prev) => {
        const next = new URLSearchParams(prev);
        if (v === null) next.delete(k);
        else next.set(k, v);
        return next;
      },
      { replace: true, preventScrollReset: true },
    );

  return (
    <div className="space-y-5">
      <Card>
        <div className="flex flex-wrap items-end gap-4">
          <div className="text-sm">
            <p className="font-medium">A (this capture)</p>
            <p className="py-1.5 font-mono text-xs">{capture.name}</p>
          </div>
          <label className="space-y-1 text-sm">
            <span className="block font-medium">B (compare with)</span>
            <select
              data-testid="compare-with"
              value={b === null ? '' : String(b)}
              onChange={(e) => set('with', e.target.value === '' ? null : e.target.value)}
              className="block max-w-md rounded-md border border-line bg-surface px-2.5 py-1.5 text-sm text-text focus:outline-none focus:ring-2 focus:ring-focus/60"
            >
              <option value="">Choose a capture…</option>
              {others.map((c) => (
                <option key={c.id} value={c.id}>
                  {c.name}
                </option>
              ))}
            </select>
          </label>
          {b !== null ? (
            <Button variant="secondary" onClick={() => navigate(`${captureScope(rig.id, b).page}/compare?with=${capture.id}`)}>
              Swap A and B
            </Button>
          ) : null}
        </div>
        {others.length === 0 ? <p className="mt-3 text-sm text-muted">This rig has no other decoded capture to compare with.</p> : null}
        <p className="mt-3 text-xs text-muted">
          The same request is the same station asking for the same call, file and record, matched in order of occurrence. Slower or faster means the round trip differs by more than a fifth.
        </p>
      </Card>
      {result.error ? <ErrorNotice error={result.error} /> : null}
      {b !== null && result.isPending ? <p className="text-sm text-muted">Comparing…</p> : null}
      {result.data ? <Comparison result={result.data} showSame={showSame} onShowSame={(v) => set('same', v ? '1' : null)} rig={rig} /> : null}
    </div>
  );
}

function SummaryStat({ label, value, tone }: { label: string; value: string; tone?: 'warn' | 'bad' }) {
  const toneClass = tone === 'bad' ? 'text-danger' : tone === 'warn' ? 'text-flare-700 dark:text-flare-300' : '';
  return (
    <div className="rounded-lg border border-line bg-surface px-3 py-2.5 shadow-sm">
      <dt className="text-xs text-muted">{label}</dt>
      <dd className={`mt-0.5 font-mono text-lg font-medium tabular-nums ${toneClass}`}>{value}</dd>
    </div>
  );
}

function Comparison({ result, showSame, onShowSame, rig }: { result: CompareResult; showSame: boolean; onShowSame: (v: boolean) => void; rig: RigDetail }) {
  const s = result.summary;
  const rows = sortRows(result.rows.filter((r) => showSame || r.kind !== 'same'));
  const mean = (v: number | null) => (v === null ? '—' : formatDuration(v));
  const differing = result.rows.length - s.same;
  return (
    <>
      <section aria-label="Comparison summary" className="space-y-2">
        <p className="text-sm">
          <span className="font-medium">{differing === 0 ? 'B answered every request as A did.' : `${differing} of ${result.rows.length} exchanges differ.`}</span>{' '}
          <span className="text-muted">
            Mean round trip {mean(s.meanRttA)} in A, {mean(s.meanRttB)} in B.
          </span>
        </p>
        <dl className="grid grid-cols-2 gap-2.5 sm:grid-cols-4 lg:grid-cols-8">
          <SummaryStat label="Matched" value={String(s.matched)} />
          <SummaryStat label="Same" value={String(s.same)} />
          <SummaryStat label="Answered differently" value={String(s.answeredDifferently)} tone={s.answeredDifferently ? 'bad' : undefined} />
          <SummaryStat label="Answered in one only" value={String(s.outcomeDiffers)} tone={s.outcomeDiffers ? 'bad' : undefined} />
          <SummaryStat label="Slower in B" value={String(s.slower)} tone={s.slower ? 'warn' : undefined} />
          <SummaryStat label="Faster in B" value={String(s.faster)} />
          <SummaryStat label="Only in A" value={String(s.onlyInA)} tone={s.onlyInA ? 'warn' : undefined} />
          <SummaryStat label="Only in B" value={String(s.onlyInB)} tone={s.onlyInB ? 'warn' : undefined} />
        </dl>
      </section>
      <Card>
        <CardTitle
          aside={
            <label className="flex items-center gap-2 text-sm">
              <input type="checkbox" checked={showSame} onChange={(e) => onShowSame(e.target.checked)} className="accent-flare-500" />
              Show identical exchanges too
            </label>
          }
        >
          Exchanges side by side
        </CardTitle>
        {rows.length === 0 ? (
          <p className="text-sm text-muted">No differences.</p>
        ) : (
          <div className="overflow-x-auto">
            <table className="w-full text-sm">
              <thead>
                <tr className="border-b border-line text-left text-xs uppercase tracking-wide text-muted">
                  <th className="py-2 pr-3 font-medium">Request</th>
                  <th className="py-2 pr-3 font-medium">A: {result.a.name}</th>
                  <th className="py-2 pr-3 font-medium">B: {result.b.name}</th>
                  <th className="py-2 font-medium">Difference</th>
                </tr>
              </thead>
              <tbody>
                {rows.map((r, i) => (
                  <CompareTableRow key={i} row={r} rig={rig} result={result} />
                ))}
              </tbody>
            </table>
          </div>
        )}
      </Card>
    </>
  );
}

const rowTone: Partial<Record<CompareRow['kind'], string>> = {
  'answered-differently': 'bg-danger-soft/60',
  'outcome-differs': 'bg-danger-soft/60',
  slower: 'bg-flare-500/8',
};

function CompareTableRow({ row, rig, result }: { row: CompareRow; rig: RigDetail; result: CompareResult }) {
  const station = row.station.name ?? rig.stations.find((s) => s.address === row.station.address)?.name ?? formatAddress(row.station.address);
  const what = [row.call.name ?? (row.call.code === null ? '?' : `call ${row.call.code}`), row.fileName, row.recordNumber === null ? null : `rec ${row.recordNumber}`].filter(Boolean).join(' · ');
  return (
    <tr className={`border-b border-line/70 align-top last:border-0 ${rowTone[row.kind] ?? ''}`} data-testid="compare-row" data-kind={row.kind}>
      <td className="py-2 pr-3">
        <p className="font-mono text-xs font-medium">{what}</p>
        <p className="text-xs text-muted">{station}</p>
      </td>
      <td className="py-2 pr-3">
        <Side ex={row.a} href={row.a ? `${captureScope(rig.id, result.a.captureId).page}/schedule?station=${row.station.address}&ex=${row.a.id}` : null} differs={row.kind === 'answered-differently'} />
      </td>
      <td className="py-2 pr-3">
        <Side ex={row.b} href={row.b ? `${captureScope(rig.id, result.b.captureId).page}/schedule?station=${row.station.address}&ex=${row.b.id}` : null} differs={row.kind === 'answered-differently'} />
      </td>
      <td className="py-2 text-xs">
        <p className="font-medium">{kindText(row)}</p>
        {row.rttDeltaSeconds !== null ? <p className="font-mono tabular-nums text-muted">B {formatDelta(row.rttDeltaSeconds)}</p> : null}
      </td>
    </tr>
  );
}

function Side({ ex, href, differs }: { ex: ComparedExchange | null; href: string | null; differs: boolean }) {
  if (!ex) return <p className="text-xs text-muted">not asked in this capture</p>;
  return (
    <div className="space-y-0.5 text-xs">
      <p>
        <span className="font-mono tabular-nums">{ex.rttSeconds === null ? 'no answer' : `RTT ${formatDuration(ex.rttSeconds)}`}</span>
        <span className="text-muted"> · {ex.outcome}{ex.retries ? `, ${ex.retries}× again` : ''}</span>
      </p>
      {ex.status !== null ? (
        <p>
          status {formatAddress(ex.status)}
          {ex.statusMeaning ? ` ${ex.statusMeaning}` : ''}
        </p>
      ) : null}
      {differs && ex.answer ? <p className="font-mono break-all text-muted">{ex.answer}</p> : null}
      {href ? (
        <Link to={href} className="text-link hover:underline">
          t {formatSeconds(ex.tRequest)} s
        </Link>
      ) : null}
    </div>
  );
}
