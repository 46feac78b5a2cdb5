import { useDeferredValue } from 'react';
import type { FieldMapVersionInfo } from '../../../../shared/schemas';
import { ErrorNotice } from '../../../components/notice';
import { formatDateTime } from '../../../lib/format';
import { useFieldMap, writeUpHref } from '../api/get-field-map';
import { diffVersions } from './kept-results';
import { describeValue, isEmptyDiff, type FieldChange, type PropertyChange } from './field-map-diff';

interface Props {
  rigId: number;
  mapId: number;
  versions: FieldMapVersionInfo[];
  from: number;
  to: number;
  onPick: (from: number, to: number) => void;
}

const control = 'rounded border border-line bg-surface px-2 py-1 text-sm';

function Changes({ changes }: { changes: PropertyChange[] }) {
  return (
    <ul className="ml-4 list-disc">
      {changes.map((c) => (
        <li key={c.property}>
          <span className="font-medium">{c.property}</span>: <del className="font-mono text-xs text-danger">{c.from}</del> → <ins className="font-mono text-xs text-ok no-underline">{c.to}</ins>
        </li>
      ))}
    </ul>
  );
}

function FieldLine({ change }: { change: FieldChange }) {
  if (change.kind === 'added')
    return (
      <li>
        <span className="font-medium text-ok">Field added</span> <span className="font-mono">{change.id}</span> at #{change.position} ({change.field.type}
        {change.field.name ? `, “${change.field.name}”` : ''}
        {change.field.length !== undefined ? `, length ${describeValue(change.field.length, 'length')}` : ''})
      </li>
    );
  if (change.kind === 'removed')
    return (
      <li>
        <span className="font-medium text-danger">Field removed</span> <span className="font-mono">{change.id}</span> (was #{change.position}, {change.field.type})
      </li>
    );
  return (
    <li>
      <span className="font-medium">Field changed</span> <span className="font-mono">{change.id}</span>
      <Changes changes={change.changes} />
    </li>
  );
}

/** Saved versions, newest first, and what changed between two of them. */
export function VersionDiff({ rigId, mapId, versions, from, to, onPick }: Props) {
  const a = useFieldMap(rigId, mapId, from);
  const b = useFieldMap(rigId, mapId, to);
  // the list sits below the editor: its diff (tens of milliseconds on a large map) is worked out
  // in a background render after the editor has painted
  const older = useDeferredValue(a.data, undefined);
  const newer = useDeferredValue(b.data, undefined);
  const diff = older && newer ? diffVersions(older.document, newer.document) : null;
  const options = versions.map((v) => (
    <option key={v.version} value={v.version}>
      version {v.version}
    </option>
  ));
  return (
    <div className="grid gap-5 lg:grid-cols-[16rem_minmax(0,1fr)]">
      <ol aria-label="Versions" className="space-y-1 text-sm">
        {versions.map((v) => (
          <li key={v.version} className="flex items-baseline justify-between gap-2">
            <span>
              <span className="font-medium">Version {v.version}</span>{' '}
              <span className="text-xs text-muted">
                {formatDateTime(v.createdAt)}
                {v.createdBy ? ` · ${v.createdBy}` : ''}
              </span>
            </span>
            <a className="text-xs text-link hover:underline" href={writeUpHref(rigId, mapId, v.version)} download>
              write-up
            </a>
          </li>
        ))}
      </ol>
      <div className="space-y-3">
        <div className="flex flex-wrap items-center gap-2 text-sm">
          Changes from
          <select aria-label="Diff from version" className={control} value={from} onChange={(e) => onPick(Number(e.target.value), to)}>
            {options}
          </select>
          to
          <select aria-label="Diff to version" className={control} value={to} onChange={(e) => onPick(from, Number(e.target.value))}>
            {options}
          </select>
        </div>
        {a.error ? <ErrorNotice error={a.error} /> : null}
        {b.error ? <ErrorNotice error={b.error} /> : null}
        {!diff ? (
          <p className="text-sm text-muted">Loading both versions…</p>
        ) : isEmptyDiff(diff) ? (
          <p className="text-sm text-muted">No differences between version {from} and version {to}.</p>
        ) : (
          <div aria-label="Differences" className="space-y-3 text-sm">
            {diff.map.length ? (
              <div>
                <h4 className="font-semibold">The map</h4>
                <Changes changes={diff.map} />
              </div>
            ) : null}
            {diff.layouts.map((l) => (
              <div key={`${l.kind}-${l.id}`}>
                <h4 className="font-semibold">
                  Layout <span className="font-mono">{l.id}</span>
                  {l.kind === 'added' ? <span className="ml-2 text-ok">added ({l.layout.fields.length} fields)</span> : null}
                  {l.kind === 'removed' ? <span className="ml-2 text-danger">removed</span> : null}
                </h4>
                {l.kind === 'changed' ? (
                  <>
                    {l.changes.length ? <Changes changes={l.changes} /> : null}
                    <ul className="ml-4 list-disc space-y-1">
                      {l.fields.map((f) => (
                        <FieldLine key={`${f.kind}-${f.id}`} change={f} />
                      ))}
                    </ul>
                  </>
                ) : null}
              </div>
            ))}
          </div>
        )}
      </div>
    </div>
  );
}
