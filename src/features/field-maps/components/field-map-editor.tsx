import { useDeferredValue, useEffect, useMemo, useRef, useState, type ReactNode } from 'react';
import { type FieldMapInput, type FieldMap, validateFieldMap } from '../../../../shared/decoder/calls';
import type { RigDetail } from '../../../../shared/schemas';
import { Button, ButtonLink } from '../../../components/button';
import { Card, CardTitle } from '../../../components/card';
import { ErrorNotice, SuccessNotice } from '../../../components/notice';
import { isApiError } from '../../../lib/api';
import { useUnsavedChanges } from '../../../components/unsaved-changes';
import { fetchFieldMap, useFieldMap, writeUpHref } from '../api/get-field-map';
import { useSaveFieldMap } from '../api/save-field-map';
import { errorsByPath, errorsUnder, serverFieldErrors, type ErrorsByPath } from './draft-errors';
import { addLayout, looksLikeFieldMap, moveLayout, removeLayout } from './draft-ops';
import { FramePreview } from './frame-preview';
import { LayoutEditor } from './layout-editor';
import { LayoutTable } from './layout-table';
import { CallsEditor } from './calls-editor';
import { FieldHintsPanel } from '../../../components/discovery/field-hints-panel';
import { MapSettings } from './map-settings';
import { VersionDiff } from './version-diff';
import { checkDraft, isChecked } from './kept-results';

export interface EditorViewState {
  layout: number;
  captureId: number | null;
  frameId: number | null;
  diffFrom: number | null;
  diffTo: number | null;
}

interface Props {
  rig: RigDetail;
  mapId: number;
  view: EditorViewState;
  onView: (patch: Partial<EditorViewState>) => void;
  /** a field's notes, given its "layout id.field id"; handed in by the route so this feature needs no other */
  renderFieldNotes?: (fieldPath: string) => ReactNode;
}

function download(name: string, text: string, type: string) {
  const url = URL.createObjectURL(new Blob([text], { type }));
  const a = document.createElement('a');
  a.href = url;
  a.download = name;
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 1000);
}

const slug = (s: string) => s.toLowerCase().replace(/[^a-z0-9]+/g, '-').replace(/^-|-$/g, '') || 'field-map';

/** A field map: its layouts and fields in a form, a live preview on a frame, saving, versions and their differences. */
export function FieldMapEditor({ rig, mapId, view, onView, renderFieldNotes }: Props) {
  const latest = useFieldMap(rig.id, mapId);
  const save = useSaveFieldMap(rig.id, mapId);
  // the route's loader has the map in the cache: the form starts from it in its first render
  const [draft, setDraft] = useState<FieldMapInput | null>(() => latest.data?.document ?? null);
  const [baseVersion, setBaseVersion] = useState(() => latest.data?.version ?? 0);
  const [dirty, setDirty] = useState(false);
  const [generation, setGeneration] = useState(0);
  const [serverErrors, setServerErrors] = useState<ErrorsByPath | null>(null);
  const [conflict, setConflict] = useState<number | null>(null);
  const [notice, setNotice] = useState<string | null>(null);
  const [importError, setImportError] = useState<string | null>(null);
  const fileInput = useRef<HTMLInputElement>(null);
  const lastValid = useRef<FieldMap | null>(null);

  useEffect(() => {
    if (draft === null && latest.data) {
      setDraft(latest.data.document);
      setBaseVersion(latest.data.version);
    }
  }, [draft, latest.data]);

  // Checking a whole map takes tens of milliseconds on a large one: the form paints (and each
  // keystroke shows) first, the check follows in a background render. Null: not checked yet. The
  // map as loaded was checked by the route's loader while the page's other requests were out.
  const deferred = useDeferredValue(draft, null);
  const checked = draft && isChecked(draft) ? draft : deferred;
  const validation = checked ? checkDraft(checked) : null;
  if (validation?.ok) lastValid.current = validation.map;
  const errors: ErrorsByPath = useMemo(
    () => ({ ...(validation && !validation.ok ? errorsByPath(validation.errors) : {}), ...(serverErrors ?? {}) }),
    [validation, serverErrors],
  );

  useUnsavedChanges(dirty, `the field map “${draft?.name ?? ''}”`);

  if (latest.error) return <ErrorNotice error={latest.error} />;
  if (!latest.data || !draft) return <p className="text-sm text-muted">Loading the field map…</p>;
  const detail = latest.data;
  const editable = !detail.builtIn && rig.myRole !== 'viewer';
  const li = Math.min(Math.max(view.layout, 0), draft.layouts.length - 1);
  const problemCount = Object.keys(errors).length;
  const generalErrors = Object.entries(errors).filter(([p]) => !/^(layouts\[\d+\]|description|callCode)/.test(p));

  const edit = (doc: FieldMapInput, structural = false) => {
    setDraft(doc);
    setDirty(true);
    setServerErrors(null);
    setNotice(null);
    if (structural) setGeneration((g) => g + 1);
  };

  const loadSaved = async (version?: number) => {
    const fresh = version === undefined ? (await latest.refetch()).data : await fetchFieldMap(rig.id, mapId, version);
    if (!fresh) return;
    setDraft(fresh.document);
    setBaseVersion(fresh.version);
    setDirty(false);
    setConflict(null);
    setServerErrors(null);
    setGeneration((g) => g + 1);
    setNotice(`Loaded version ${fresh.version}.`);
  };

  const onSave = () => {
    // a click can land before the background check of the newest edit: check it here then
    if (!checkDraft(draft).ok) return;
    setNotice(null);
    save.mutate(
      { document: draft, baseVersion, name: draft.name },
      {
        onSuccess: (saved) => {
          setDraft(saved.document);
          setBaseVersion(saved.version);
          setDirty(false);
          setConflict(null);
          setServerErrors(null);
          setNotice(`Saved version ${saved.version}.`);
          onView({ diffFrom: Math.max(1, saved.version - 1), diffTo: saved.version });
        },
        onError: async (error) => {
          if (isApiError(error, 409)) {
            const now = await fetchFieldMap(rig.id, mapId).catch(() => null);
            setConflict(now ? now.version : -1);
          } else if (isApiError(error, 400) && Object.keys(error.fields).length) {
            setServerErrors(serverFieldErrors(error.fields));
          }
        },
      },
    );
  };

  const onImport = async (file: File) => {
    setImportError(null);
    let parsed: unknown;
    try {
      parsed = JSON.parse(await file.text());
    } catch (cause) {
      setImportError(`${file.name} is not JSON: ${(cause as Error).message}`);
      return;
    }
    if (!looksLikeFieldMap(parsed)) {
      setImportError(`${file.name} is not a field map: it needs a "layouts" list whose layouts each have a "fields" list.`);
      return;
    }
    const check = validateFieldMap(parsed);
    edit(parsed, true);
    onView({ layout: 0 });
    setNotice(check.ok ? `Imported ${file.name}; save to keep it as a new version.` : `Imported ${file.name} with ${check.errors.length} problem(s) marked below.`);
  };

  const diffTo = view.diffTo ?? detail.latestVersion;
  const diffFrom = view.diffFrom ?? Math.max(1, diffTo - 1);

  return (
    <div className="space-y-5">
      <div className="flex flex-wrap items-start justify-between gap-3">
        <div>
          <p className="text-sm">
            <ButtonLink variant="ghost" className="px-0" to={`/rigs/${rig.id}/field-maps`}>
              ← Field maps
            </ButtonLink>
          </p>
          {editable ? (
            <label className="block text-sm font-medium">
              Map name
              <input
                className={`mt-1 block w-80 rounded border bg-surface px-2 py-1 text-lg font-semibold ${errors.name ? 'border-danger' : 'border-line'}`}
                value={draft.name}
                onChange={(e) => edit({ ...draft, name: e.target.value })}
              />
            </label>
          ) : (
            <h2 className="text-lg font-semibold">{draft.name}</h2>
          )}
          <p className="text-sm text-muted">
            {dirty ? `Unsaved changes to version ${baseVersion}` : `Version ${baseVersion}`}
            {detail.builtIn ? ' · built-in, read-only: copy it from the list to change it' : ''}
            {!detail.builtIn && rig.myRole === 'viewer' ? ' · viewers read field maps; analysts and owners change them' : ''}
          </p>
        </div>
        <div className="flex flex-wrap gap-2">
          {editable ? (
            <>
              <Button onClick={onSave} busy={save.isPending} disabled={!dirty || (validation !== null && !validation.ok)}>
                Save version {detail.latestVersion + 1}
              </Button>
              <Button variant="secondary" onClick={() => fileInput.current?.click()}>
                Import JSON
              </Button>
              <input
                ref={fileInput}
                type="file"
                accept="application/json,.json"
                aria-label="Import a field map JSON file"
                className="hidden"
                onChange={(e) => {
                  const file = e.target.files?.[0];
                  e.target.value = '';
                  if (file) void onImport(file);
                }}
              />
            </>
          ) : null}
          <Button variant="secondary" onClick={() => download(`${slug(draft.name)}.json`, `${JSON.stringify(draft, null, 2)}\n`, 'application/json')}>
            Export JSON
          </Button>
          <a className="inline-flex items-center rounded-md border border-line bg-surface px-3 py-1.5 text-sm font-medium hover:bg-raised" href={writeUpHref(rig.id, mapId)} download>
            Protocol write-up
          </a>
        </div>
      </div>

      {conflict !== null ? (
        <ErrorNotice>
          <p>
            {conflict > 0 ? `Someone saved version ${conflict} since you opened it` : 'Someone saved a later version since you opened it'} (you started from version {baseVersion}). Your changes are not saved.
          </p>
          <div className="mt-2 flex gap-2">
            <Button variant="danger" onClick={() => void loadSaved()}>
              Reload version {conflict > 0 ? conflict : 'latest'} (drop my changes)
            </Button>
            <Button variant="secondary" onClick={() => setConflict(null)}>
              Keep editing
            </Button>
          </div>
        </ErrorNotice>
      ) : null}
      {save.error && !isApiError(save.error, 409) && !(isApiError(save.error, 400) && serverErrors) ? <ErrorNotice error={save.error} /> : null}
      {serverErrors ? <ErrorNotice>The server refused the map: {Object.keys(serverErrors).length} problem(s), marked below.</ErrorNotice> : null}
      {importError ? <ErrorNotice>{importError}</ErrorNotice> : null}
      {notice ? <SuccessNotice>{notice}</SuccessNotice> : null}
      {editable && problemCount ? (
        <p role="status" className="text-sm text-danger">
          {problemCount} problem(s) to fix before saving.
        </p>
      ) : null}
      {generalErrors.length ? (
        <ul className="text-sm text-danger" aria-label="Problems of the map">
          {generalErrors.map(([p, m]) => (
            <li key={p}>
              {p ? <span className="font-mono text-xs">{p}: </span> : null}
              {m}
            </li>
          ))}
        </ul>
      ) : null}

      <Card>
        <CardTitle>The map</CardTitle>
        <MapSettings key={generation} doc={draft} errors={errors} editable={editable} onChange={(doc) => edit(doc)} />
      </Card>

      <Card>
        <CardTitle>Field hints</CardTitle>
        <FieldHintsPanel rig={rig} captureId={view.captureId} />
      </Card>

      <Card>
        <CardTitle>Calls</CardTitle>
        <CallsEditor doc={draft} errors={errors} editable={editable} onChange={(doc) => edit(doc)} />
      </Card>

      <Card>
        <CardTitle>Preview on a frame</CardTitle>
        <FramePreview
          rigId={rig.id}
          map={validation?.ok ? validation.map : lastValid.current}
          draftValid={validation?.ok ?? true}
          captureId={view.captureId}
          frameId={view.frameId}
          onPick={(captureId, frameId) => onView({ captureId, frameId })}
          onShowLayout={(layout) => onView({ layout })}
        />
      </Card>

      <Card>
        <CardTitle>Layouts</CardTitle>
        <div className="space-y-4">
          <div className="space-y-2">
            <ul aria-label="Layouts" className="grid max-h-52 gap-1 overflow-y-auto rounded border border-line p-1 sm:grid-cols-2 lg:grid-cols-4">
              {draft.layouts.map((l, i) => {
                const bad = errorsUnder(errors, `layouts[${i}]`).length;
                return (
                  <li key={`${generation}-${i}`} className="flex items-center gap-1">
                    <button
                      type="button"
                      aria-current={i === li ? 'true' : undefined}
                      className={`flex-1 rounded px-2 py-1 text-left text-sm ${i === li ? 'bg-raised font-medium' : 'hover:bg-raised'}`}
                      onClick={() => onView({ layout: i })}
                    >
                      {l.name ?? l.id}
                      <span className="block text-xs text-muted">
                        {l.when?.direction ?? 'either way'}
                        {l.when?.calls ? ` · calls ${l.when.calls.join(', ')}` : ''} · {l.fields.length} fields
                        {bad ? <span className="text-danger"> · {bad} problem(s)</span> : null}
                      </span>
                    </button>
                    {editable ? (
                      <span className="flex flex-col">
                        <button type="button" aria-label={`Move layout ${l.id} up`} className="px-1 text-xs disabled:opacity-40" disabled={i === 0} onClick={() => { edit(moveLayout(draft, i, -1), true); onView({ layout: i - 1 }); }}>
                          ↑
                        </button>
                        <button type="button" aria-label={`Move layout ${l.id} down`} className="px-1 text-xs disabled:opacity-40" disabled={i === draft.layouts.length - 1} onClick={() => { edit(moveLayout(draft, i, 1), true); onView({ layout: i + 1 }); }}>
                          ↓
                        </button>
                      </span>
                    ) : null}
                  </li>
                );
              })}
            </ul>
            {editable ? (
              <div className="flex flex-wrap gap-2">
                <Button variant="secondary" onClick={() => { edit(addLayout(draft), true); onView({ layout: draft.layouts.length }); }}>
                  Add a layout
                </Button>
                <Button variant="dangerGhost" disabled={draft.layouts.length < 2} onClick={() => { edit(removeLayout(draft, li), true); onView({ layout: Math.max(0, li - 1) }); }}>
                  Delete this layout
                </Button>
              </div>
            ) : null}
            <p className="text-xs text-muted">The first layout that matches a frame's direction and call code decodes it; order matters.</p>
          </div>
          <div className="min-w-0">
            {editable ? (
              <LayoutEditor key={`${generation}-${li}`} doc={draft} li={li} errors={errors} generation={generation} onChange={edit} renderFieldNotes={renderFieldNotes} />
            ) : (
              <LayoutTable doc={draft} li={li} renderFieldNotes={renderFieldNotes} />
            )}
          </div>
        </div>
      </Card>

      <Card>
        <CardTitle>Versions</CardTitle>
        <VersionDiff rigId={rig.id} mapId={mapId} versions={detail.versions} from={diffFrom} to={diffTo} onPick={(from, to) => onView({ diffFrom: from, diffTo: to })} />
      </Card>
    </div>
  );
}
