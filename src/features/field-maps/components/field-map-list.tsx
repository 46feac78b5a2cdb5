import { useState } from 'react';
import { Link, useNavigate } from 'react-router';
import type { FieldMapSummary, RigDetail } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { Card, CardTitle } from '../../../components/card';
import { ErrorNotice } from '../../../components/notice';
import { formatDateTime } from '../../../lib/format';
import { useCopyFieldMap } from '../api/copy-field-map';
import { writeUpHref } from '../api/get-field-map';
import { useFieldMaps } from '../api/get-field-maps';

export const canEditFieldMaps = (role: RigDetail['myRole']) => role === 'owner' || role === 'analyst';

function CopyForm({ rig, source, onDone }: { rig: RigDetail; source: FieldMapSummary; onDone: () => void }) {
  const [name, setName] = useState(`${source.name} (copy)`);
  const copy = useCopyFieldMap(rig.id);
  const navigate = useNavigate();
  return (
    <form
      aria-label={`Copy ${source.name}`}
      className="mt-2 flex flex-wrap items-start gap-2"
      onSubmit={(e) => {
        e.preventDefault();
        copy.mutate({ copyOf: source.id, name }, { onSuccess: (made) => navigate(`/rigs/${rig.id}/field-maps/${made.id}`) });
      }}
    >
      <label className="text-sm">
        Name of the copy{' '}
        <input className="rounded border border-line bg-surface px-2 py-1 text-sm" value={name} onChange={(e) => setName(e.target.value)} />
      </label>
      <Button type="submit" busy={copy.isPending}>
        Create the copy
      </Button>
      <Button variant="ghost" onClick={onDone}>
        Cancel
      </Button>
      {copy.error ? (
        <div className="w-full">
          <ErrorNotice error={copy.error} />
        </div>
      ) : null}
    </form>
  );
}

/** The rig's field maps: the built-in first (read-only), then the team's own with their latest version. */
export function FieldMapList({ rig }: { rig: RigDetail }) {
  const maps = useFieldMaps(rig.id);
  const [copying, setCopying] = useState<number | null>(null);
  const editor = canEditFieldMaps(rig.myRole);
  return (
    <Card>
      <CardTitle>Field maps</CardTitle>
      <p className="mb-4 max-w-3xl text-sm text-muted">
        A field map says where each field of a call sits in a frame's information field. Captures use the built-in “CP/M call envelope” until an analyst chooses
        another map; {editor ? 'copy a map to change it.' : 'analysts and owners copy and change maps.'}
      </p>
      {maps.error ? <ErrorNotice error={maps.error} /> : null}
      {!maps.data ? (
        <p className="text-sm text-muted">Loading field maps…</p>
      ) : (
        <ul aria-label="Field maps" className="divide-y divide-line">
          {maps.data.map((m) => (
            <li key={m.id} className="py-3" data-testid="field-map-row">
              <div className="flex flex-wrap items-center justify-between gap-3">
                <div>
                  <Link className="font-medium text-link hover:underline" to={`/rigs/${rig.id}/field-maps/${m.id}`}>
                    {m.name}
                  </Link>
                  <p className="text-xs text-muted">
                    {m.builtIn ? 'built-in, read-only' : `version ${m.version} · updated ${formatDateTime(m.updatedAt)}${m.updatedBy ? ` by ${m.updatedBy}` : ''}`}
                  </p>
                </div>
                <div className="flex gap-2">
                  <a className="text-sm text-link hover:underline" href={writeUpHref(rig.id, m.id)} download>
                    Protocol write-up
                  </a>
                  {editor ? (
                    <Button variant="secondary" aria-label={`Copy ${m.name}`} onClick={() => setCopying(m.id)}>
                      Copy
                    </Button>
                  ) : null}
                </div>
              </div>
              {copying === m.id ? <CopyForm rig={rig} source={m} onDone={() => setCopying(null)} /> : null}
            </li>
          ))}
        </ul>
      )}
    </Card>
  );
}
