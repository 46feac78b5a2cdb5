import { Fragment, type ReactNode } from 'react';
import { Link, useSearchParams } from 'react-router';
import type { LockConflictOutcome, RecoveredFileDetail, RecoveredFileSummary, RigDetail } from '../../../../shared/schemas';
import { buttonClass } from '../../../components/button';
import { Card, CardTitle } from '../../../components/card';
import { ErrorNotice } from '../../../components/notice';
import { formatBytes, formatCount } from '../../../components/units';
import { formatAddress } from '../../../lib/format';
import { fileDownloadUrl } from '../api/file-keys';
import { useRecoveredFile } from '../api/get-file';
import { useRecoveredFiles } from '../api/get-files';
import { coverageOf, coverageText } from './coverage';
import { CoverageBar, CoverageLegend } from './coverage-bar';
import { SizeSource } from './size-source';
import { captureScope } from '../../../lib/scope';
import { exchangeHref as exchangeHrefOf } from '../../../components/exchange-results';

interface RecoveredFileListProps {
  rig: RigDetail;
  captureId: number;
  /** the file's exchanges, drawn by the caller (the exchange list belongs to the round-trips feature) */
  renderExchanges: (fileId: number) => ReactNode;
}

function displayName(f: RecoveredFileSummary): string {
  return f.user !== null && f.user !== 0 ? `${f.user}:${f.name}` : f.name;
}

/** Screen 10: files rebuilt from the records that went over the wire, how much of each was seen, and the bytes. */
export function RecoveredFileList({ rig, captureId, renderExchanges }: RecoveredFileListProps) {
  const files = useRecoveredFiles(rig.id, captureId);
  const [params, setParams] = useSearchParams();
  const open = params.get('file') === null ? null : Number(params.get('file'));
  const toggle = (id: number) =>
    setParams(
      (prev) => {
        const next = new URLSearchParams(prev);
        if (open === id) next.delete('file');
        else next.set('file', String(id));
        return next;
      },
      { replace: true, preventScrollReset: true },
    );
  const stationName = (address: number) => rig.stations.find((s) => s.address === address)?.name ?? formatAddress(address);
  const exchangeHref = (id: number) => exchangeHrefOf(captureScope(rig.id, captureId).page, id);

  if (files.error) return <ErrorNotice error={files.error} />;
  if (files.isPending) return <p className="text-sm text-muted">Loading recovered files…</p>;
  return (
    <Card>
      <CardTitle aside={<CoverageLegend />}>Recovered files</CardTitle>
      {files.data.length === 0 ? (
        <p className="text-sm text-muted">No file records went over the wire in this capture (no open, read, write or boot-load calls the field map recognises).</p>
      ) : (
        <div className="overflow-x-auto">
          <table className="w-full text-sm">
            <thead>
              <tr className="border-b border-line text-left text-xs uppercase tracking-wide text-muted">
                <th className="py-2 pr-3 font-medium">File</th>
                <th className="py-2 pr-3 text-right font-medium">Size</th>
                <th className="py-2 pr-3 text-right font-medium">Records</th>
                <th className="w-[30%] py-2 pr-3 font-medium">Coverage</th>
                <th className="py-2 font-medium">
                  <span className="sr-only">Actions</span>
                </th>
              </tr>
            </thead>
            <tbody>
              {files.data.map((f) => {
                const coverage = coverageOf(f);
                return (
                  <Fragment key={f.id}>
                    <tr className="border-b border-line/70 align-top" data-testid="recovered-file" data-file={f.name}>
                      <td className="py-2.5 pr-3">
                        <span className="font-mono font-medium">{displayName(f)}</span>
                        {f.kind === 'boot-image' ? <span className="ml-2 rounded border border-line px-1.5 py-px text-[11px] text-muted">boot image</span> : null}
                        <span className={`ml-2 rounded px-1.5 py-px text-[11px] font-medium ${f.complete ? 'bg-ok-soft text-ok' : 'bg-flare-500/15 text-flare-700 dark:text-flare-300'}`}>
                          {f.complete ? 'complete' : 'incomplete'}
                        </span>
                        {f.lockConflicts ? (
                          <span className="ml-2 rounded bg-[#e0582f]/15 px-1.5 py-px text-[11px] font-medium text-[#c2410c] dark:text-[#f59e6b]" data-testid="file-lock-conflicts">
                            {f.lockConflicts} lock conflict{f.lockConflicts === 1 ? '' : 's'}
                          </span>
                        ) : null}
                        <p className="mt-0.5 text-xs text-muted">{f.stations.map(stationName).join(', ')}</p>
                      </td>
                      <td className="py-2.5 pr-3 text-right font-mono text-xs" title={`${formatCount(f.size)} octets`}>
                        {formatBytes(f.size)}
                      </td>
                      <td className="py-2.5 pr-3 text-right font-mono text-xs">
                        {formatCount(f.recordCount)}
                        <SizeSource file={f} exchangeHref={exchangeHref} />
                      </td>
                      <td className="py-2.5 pr-3">
                        <CoverageBar coverage={coverage} />
                        <p className="mt-1 text-xs text-muted">{coverageText(coverage)}</p>
                      </td>
                      <td className="py-2 text-right whitespace-nowrap">
                        <a href={fileDownloadUrl(rig.id, captureId, f.id)} download={f.name} className={buttonClass('secondary', 'text-xs')} aria-label={`Download ${f.name}`}>
                          Download
                        </a>{' '}
                        <button type="button" onClick={() => toggle(f.id)} aria-expanded={open === f.id} className={buttonClass('ghost', 'text-xs')}>
                          {open === f.id ? 'Hide' : 'Exchanges'} ({f.exchangeCount})
                        </button>
                      </td>
                    </tr>
                    {open === f.id ? (
                      <tr className="border-b border-line/70 bg-raised/40">
                        <td colSpan={5} className="px-3 py-3">
                          <FileDetail rigId={rig.id} captureId={captureId} fileId={f.id} exchangeHref={exchangeHref} />
                          {renderExchanges(f.id)}
                        </td>
                      </tr>
                    ) : null}
                  </Fragment>
                );
              })}
            </tbody>
          </table>
        </div>
      )}
      <p className="mt-3 text-xs text-muted">Missing records download as zeros; the coverage says which they are.</p>
    </Card>
  );
}

function FileDetail({ rigId, captureId, fileId, exchangeHref }: { rigId: number; captureId: number; fileId: number; exchangeHref: (id: number) => string }) {
  const detail = useRecoveredFile(rigId, captureId, fileId);
  if (detail.error) return <ErrorNotice error={detail.error} />;
  if (!detail.data) return <p className="text-sm text-muted">Loading…</p>;
  const d = detail.data;
  return (
    <div className="mb-3 space-y-1 text-xs">
      <p>
        <span className="text-muted">SHA-256 </span>
        <span className="font-mono break-all">{d.sha256}</span>
      </p>
      {d.conflictDetail.length > 0 ? (
        <p className="text-flare-700 dark:text-flare-300">
          Records seen with different contents:{' '}
          {d.conflictDetail.map((c) => `record ${c.record} (${c.exchangeIds.length} transfers)`).join(', ')}; the first transfer's contents are kept.
        </p>
      ) : null}
      <LockConflictList conflicts={d.lockConflictDetail ?? []} exchangeHref={exchangeHref} />
    </div>
  );
}

const lockOutcome: Record<LockConflictOutcome, string> = {
  granted: 'granted: both held the record',
  refused: 'refused',
  unanswered: 'not answered',
};

/** Two stations holding or asking for a lock (calls 42/43) on the same record of this file. */
function LockConflictList({ conflicts, exchangeHref }: { conflicts: NonNullable<RecoveredFileDetail['lockConflictDetail']>; exchangeHref: (id: number) => string }) {
  if (conflicts.length === 0) return null;
  const who = (s: { address: number; name: string | null; exchangeId: number | null }) => (
    <>
      {s.name ?? `station ${formatAddress(s.address)}`}
      {s.exchangeId !== null ? (
        <>
          {' '}
          (
          <Link to={exchangeHref(s.exchangeId)} className="text-link hover:underline">
            exchange #{s.exchangeId}
          </Link>
          )
        </>
      ) : null}
    </>
  );
  return (
    <div>
      <p className="text-[#c2410c] dark:text-[#f59e6b]">Lock conflicts:</p>
      <ul className="ml-4 list-disc" aria-label="Lock conflicts">
        {conflicts.map((c, i) => (
          <li key={i} data-testid="file-lock-conflict">
            record {c.record}: {who(c.holder)} held the lock, {who(c.requester)} asked for it; {lockOutcome[c.outcome]}
          </li>
        ))}
      </ul>
    </div>
  );
}
