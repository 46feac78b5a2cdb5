import { useState, type FormEvent } from 'react';
import { rigInputSchema } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { Card, CardTitle } from '../../../components/card';
import { TextArea, TextField } from '../../../components/field';
import { ErrorNotice, SuccessNotice } from '../../../components/notice';
import { useFormEdits } from '../../../components/unsaved-changes';
import { parseWith, readForm, serverFieldErrors, type FieldErrors } from '../../../lib/form';
import { bitOrderLabels, clockEdgeLabels, encodingLabels, formatBitRate } from '../../../lib/format';
import { useRig } from '../api/get-rig';
import { useUpdateRig } from '../api/update-rig';
import { LineSettingsFields } from './line-settings-fields';
import { can } from './permissions';

export function RigSettings({ rigId }: { rigId: number }) {
  const rig = useRig(rigId);
  return can.editRig(rig.myRole) ? <RigSettingsForm rigId={rigId} /> : <RigSettingsReadOnly rigId={rigId} />;
}

function RigSettingsReadOnly({ rigId }: { rigId: number }) {
  const rig = useRig(rigId);
  const s = rig.lineSettings;
  const rows: [string, string][] = [
    ['Bit rate', formatBitRate(s.bitRate)],
    ['Encoding', encodingLabels[s.encoding]],
    ['Clock edge', clockEdgeLabels[s.clockEdge]],
    ['Bit order', bitOrderLabels[s.bitOrder]],
    ['Answer timeout', `${rig.responseTimeoutMs} ms`],
    ['CPU clock', `${rig.cpuClockMHz} MHz`],
  ];
  return (
    <Card>
      <CardTitle>Line settings</CardTitle>
      <dl className="grid max-w-lg grid-cols-[auto_1fr] gap-x-6 gap-y-2 text-sm">
        {rows.map(([term, value]) => (
          <div key={term} className="contents">
            <dt className="text-muted">{term}</dt>
            <dd className="font-mono">{value}</dd>
          </div>
        ))}
      </dl>
      <p className="mt-4 text-xs text-muted">Only the rig's owner can change these.</p>
    </Card>
  );
}

function RigSettingsForm({ rigId }: { rigId: number }) {
  const rig = useRig(rigId);
  const update = useUpdateRig(rigId);
  const [clientErrors, setClientErrors] = useState<FieldErrors>({});
  const [saved, setSaved] = useState(false);
  const errors = { ...serverFieldErrors(update.error), ...clientErrors };
  const edits = useFormEdits('the rig settings');

  function submit(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    update.reset();
    setSaved(false);
    const parsed = parseWith(rigInputSchema, readForm(event.currentTarget));
    if (!parsed.ok) return setClientErrors(parsed.errors);
    setClientErrors({});
    update.mutate(parsed.data, {
      onSuccess: () => {
        edits.saved();
        setSaved(true);
      },
    });
  }

  return (
    <Card>
      <CardTitle>Rig and line settings</CardTitle>
      {/* keyed by the saved values so the form shows what the server stored */}
      <form key={JSON.stringify([rig.name, rig.description, rig.lineSettings, rig.responseTimeoutMs, rig.cpuClockMHz])} onSubmit={submit} onChange={edits.onChange} noValidate className="max-w-2xl space-y-5">
        <TextField label="Rig name" name="name" defaultValue={rig.name} error={errors.name} />
        <TextArea label="Description" name="description" rows={2} defaultValue={rig.description} error={errors.description} />
        <LineSettingsFields defaults={rig.lineSettings} errors={errors} />
        <TextField
          label="Answer timeout (ms)"
          name="responseTimeoutMs"
          inputMode="numeric"
          defaultValue={rig.responseTimeoutMs}
          error={errors.responseTimeoutMs}
          hint="A request with no answer within this time counts as unanswered in round trips. Decode a capture again to apply a change."
          className="max-w-40 font-mono"
        />
        <TextField
          label="CPU clock (MHz)"
          name="cpuClockMHz"
          inputMode="decimal"
          defaultValue={rig.cpuClockMHz}
          error={errors.cpuClockMHz}
          hint="The clock of the CPU that feeds the serial controller. The fault desk's budget line counts CPU cycles per octet at this rate. Decode a capture again to apply a change."
          className="max-w-40 font-mono"
        />
        {update.error ? <ErrorNotice error={update.error} /> : null}
        {saved ? <SuccessNotice>Settings saved.</SuccessNotice> : null}
        <Button type="submit" busy={update.isPending}>
          Save settings
        </Button>
      </form>
    </Card>
  );
}
