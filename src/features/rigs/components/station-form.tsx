import { useRef, useState, type FormEvent } from 'react';
import { stationInputSchema, type Station } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { SelectField, TextField } from '../../../components/field';
import { ErrorNotice } from '../../../components/notice';
import { useFormEdits } from '../../../components/unsaved-changes';
import { parseWith, readForm, serverFieldErrors, type FieldErrors } from '../../../lib/form';
import { formatAddress } from '../../../lib/format';
import { useCreateStation, useUpdateStation } from '../api/stations';

const roleOptions = [
  { value: 'station', label: 'Station' },
  { value: 'server', label: 'Server' },
];

/** Adds a station, or edits one when `station` is given. */
export function StationForm({ rigId, station, onDone }: { rigId: number; station?: Station; onDone?: () => void }) {
  const create = useCreateStation(rigId);
  const update = useUpdateStation(rigId);
  const mutation = station ? update : create;
  const [clientErrors, setClientErrors] = useState<FieldErrors>({});
  const [formKey, setFormKey] = useState(0);
  const addressRef = useRef<HTMLInputElement>(null);
  const errors = { ...serverFieldErrors(mutation.error), ...clientErrors };
  const edits = useFormEdits(station ? `station ${formatAddress(station.address)}` : 'the new station');

  function submit(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    create.reset();
    update.reset();
    const parsed = parseWith(stationInputSchema, readForm(event.currentTarget));
    if (!parsed.ok) return setClientErrors(parsed.errors);
    setClientErrors({});
    if (station) {
      update.mutate(
        { stationId: station.id, patch: parsed.data },
        {
          onSuccess: () => {
            edits.saved();
            onDone?.();
          },
        },
      );
    } else {
      create.mutate(parsed.data, {
        onSuccess: () => {
          edits.saved();
          setFormKey((k) => k + 1);
          requestAnimationFrame(() => addressRef.current?.focus());
          onDone?.();
        },
      });
    }
  }

  const title = station ? `Edit station ${formatAddress(station.address)}` : 'Add a station';
  return (
    <form key={formKey} aria-label={title} onSubmit={submit} onChange={edits.onChange} noValidate className="space-y-3">
      <h3 className="text-sm font-semibold">{title}</h3>
      <div className="grid gap-3 sm:grid-cols-[8rem_1fr_9rem]">
        <TextField
          ref={addressRef}
          label="Address"
          name="address"
          defaultValue={station ? formatAddress(station.address) : ''}
          placeholder="0x10 or 16"
          className="font-mono"
          error={errors.address}
        />
        <TextField label="Name" name="name" defaultValue={station?.name ?? ''} placeholder="e.g. Desk 3" error={errors.name} />
        <SelectField label="Kind" name="role" defaultValue={station?.role ?? 'station'} options={roleOptions} error={errors.role} />
      </div>
      {mutation.error ? <ErrorNotice error={mutation.error} /> : null}
      <div className="flex gap-2">
        <Button type="submit" busy={mutation.isPending}>
          {station ? 'Save station' : 'Add station'}
        </Button>
        {station ? (
          <Button variant="secondary" onClick={onDone}>
            Cancel
          </Button>
        ) : null}
      </div>
    </form>
  );
}
