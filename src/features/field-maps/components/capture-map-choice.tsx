import { useState } from 'react';
import { Link } from 'react-router';
import type { RigDetail } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { Card, CardTitle } from '../../../components/card';
import { SelectField } from '../../../components/field';
import { ErrorNotice } from '../../../components/notice';
import { canCapture } from '../../../lib/permissions';
import { useCallLayer } from '../../../lib/call-layer';
import { useChooseCaptureMap } from '../api/choose-capture-map';
import { useFieldMaps } from '../api/get-field-maps';

/** Which field map (and version) the capture's calls are decoded with; choosing another runs the call layer again. */
export function CaptureMapChoice({ rig, captureId }: { rig: RigDetail; captureId: number }) {
  const layer = useCallLayer(rig.id, captureId);
  const maps = useFieldMaps(rig.id);
  const choose = useChooseCaptureMap(rig.id, captureId);
  const [mapId, setMapId] = useState<string | null>(null);
  const [version, setVersion] = useState<string | null>(null);
  if (!layer.data || !maps.data) return null;
  const l = layer.data;
  const shownMap = mapId ?? String(l.mapId);
  const shownVersion = version ?? (mapId === null && l.mapVersion !== null ? String(l.mapVersion) : '');
  const summary = maps.data.find((m) => String(m.id) === shownMap);
  const versions = summary ? Array.from({ length: summary.version }, (_, i) => summary.version - i) : [];
  const changed = shownMap !== String(l.mapId) || shownVersion !== (l.mapVersion === null ? '' : String(l.mapVersion));
  const busy = l.pending && (l.pending.state === 'queued' || l.pending.state === 'running');
  const mayChoose = canCapture.decode(rig.myRole);
  return (
    <Card>
      <div id="field-map-choice" aria-label="Field map of this capture">
        <CardTitle>Field map</CardTitle>
        <p className="mb-3 text-sm text-muted">
          Calls are decoded with <strong className="text-text">{l.mapName}</strong>
          {l.mapVersion !== null ? `, version ${l.mapVersion}` : ', its latest version'}
          {l.current ? ` · ${l.current.exchanges} exchanges, ${l.current.files} files` : ''}
          {busy ? ' · decoding the calls again…' : ''}.{' '}
          <Link to={`/rigs/${rig.id}/field-maps/${l.mapId}?capture=${captureId}`} className="text-link hover:underline">
            Open it in the editor
          </Link>
        </p>
        {l.pending?.state === 'failed' ? <ErrorNotice>The call layer stopped: {l.pending.error}</ErrorNotice> : null}
        {mayChoose ? (
          <div className="flex flex-wrap items-end gap-3">
            <SelectField
              label="Map"
              value={shownMap}
              onChange={(e) => {
                setMapId(e.target.value);
                setVersion('');
              }}
              options={maps.data.map((m) => ({ value: String(m.id), label: `${m.name}${m.builtIn ? ' (built in)' : ''}` }))}
            />
            <SelectField
              label="Version"
              value={shownVersion}
              onChange={(e) => setVersion(e.target.value)}
              options={[{ value: '', label: 'Latest (follows new versions)' }, ...versions.map((v) => ({ value: String(v), label: `Version ${v}` }))]}
            />
            <Button
              disabled={!changed}
              busy={choose.isPending}
              onClick={() =>
                choose.mutate(
                  { mapId: Number(shownMap), version: shownVersion === '' ? null : Number(shownVersion) },
                  {
                    onSuccess: () => {
                      setMapId(null);
                      setVersion(null);
                    },
                  },
                )
              }
            >
              Decode the calls with this map
            </Button>
          </div>
        ) : null}
        {choose.error ? <ErrorNotice error={choose.error} /> : null}
      </div>
    </Card>
  );
}
