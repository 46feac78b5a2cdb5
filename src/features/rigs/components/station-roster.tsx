import { useState } from 'react';
import type { Station } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { Card, CardTitle } from '../../../components/card';
import { ErrorNotice } from '../../../components/notice';
import { formatAddress } from '../../../lib/format';
import { useRig } from '../api/get-rig';
import { useDeleteStation } from '../api/stations';
import { can } from './permissions';
import { StationForm } from './station-form';

export function StationRoster({ rigId }: { rigId: number }) {
  const rig = useRig(rigId);
  const editable = can.editStations(rig.myRole);
  const [editing, setEditing] = useState<Station | null>(null);
  const stations = [...rig.stations].sort((a, b) => a.address - b.address);

  return (
    <Card>
      <CardTitle>Stations</CardTitle>
      {stations.length === 0 ? (
        <p className="mb-4 text-sm text-muted">
          No stations yet.{editable ? ' Add the file server and each desktop station with its link address.' : ''}
        </p>
      ) : (
        <table className="mb-5 w-full text-sm">
          <thead>
            <tr className="border-b border-line text-left text-xs uppercase tracking-wide text-muted">
              <th className="py-2 pr-4 font-medium">Address</th>
              <th className="py-2 pr-4 font-medium">Name</th>
              <th className="py-2 pr-4 font-medium">Kind</th>
              {editable ? <th className="py-2 text-right font-medium">Actions</th> : null}
            </tr>
          </thead>
          <tbody>
            {stations.map((station) => (
              <StationRow key={station.id} rigId={rigId} station={station} editable={editable} onEdit={() => setEditing(station)} />
            ))}
          </tbody>
        </table>
      )}
      {editable ? (
        <div className="rounded-md bg-raised p-4">
          {editing ? (
            <StationForm key={editing.id} rigId={rigId} station={editing} onDone={() => setEditing(null)} />
          ) : (
            <StationForm rigId={rigId} />
          )}
        </div>
      ) : null}
    </Card>
  );
}

function StationRow({ rigId, station, editable, onEdit }: { rigId: number; station: Station; editable: boolean; onEdit: () => void }) {
  const remove = useDeleteStation(rigId);
  const [confirming, setConfirming] = useState(false);
  return (
    <>
      <tr className="border-b border-line/70 last:border-0">
        <td className="py-2 pr-4 font-mono">
          {formatAddress(station.address)} <span className="text-xs text-muted">({station.address})</span>
        </td>
        <td className="py-2 pr-4">{station.name}</td>
        <td className="py-2 pr-4">
          {station.role === 'server' ? (
            <span className="rounded bg-tide-100 px-1.5 py-0.5 text-xs font-medium text-tide-700 dark:bg-tide-500/15 dark:text-tide-300">Server</span>
          ) : (
            <span className="text-muted">Station</span>
          )}
        </td>
        {editable ? (
          <td className="py-1.5 text-right">
            {confirming ? (
              <span className="inline-flex items-center gap-1">
                <span className="mr-1 text-xs text-muted">Delete {station.name}?</span>
                <Button variant="danger" className="py-0.5" busy={remove.isPending} onClick={() => remove.mutate(station.id)}>
                  Delete
                </Button>
                <Button variant="secondary" className="py-0.5" onClick={() => setConfirming(false)}>
                  Keep
                </Button>
              </span>
            ) : (
              <span className="inline-flex gap-1">
                <Button variant="ghost" className="py-0.5" aria-label={`Edit ${station.name}`} onClick={onEdit}>
                  Edit
                </Button>
                <Button variant="dangerGhost" className="py-0.5" aria-label={`Delete ${station.name}`} onClick={() => setConfirming(true)}>
                  Delete
                </Button>
              </span>
            )}
          </td>
        ) : null}
      </tr>
      {remove.error ? (
        <tr>
          <td colSpan={4} className="pb-2">
            <ErrorNotice error={remove.error} />
          </td>
        </tr>
      ) : null}
    </>
  );
}
