import { useState, type FormEvent } from 'react';
import { useNavigate } from 'react-router';
import { rigInputSchema } from '../../../../shared/schemas';
import { Button, ButtonLink } from '../../../components/button';
import { Card } from '../../../components/card';
import { TextArea, TextField } from '../../../components/field';
import { ErrorNotice } from '../../../components/notice';
import { useFormEdits } from '../../../components/unsaved-changes';
import { parseWith, readForm, serverFieldErrors, type FieldErrors } from '../../../lib/form';
import { useCreateRig } from '../api/create-rig';
import { LineSettingsFields } from './line-settings-fields';

export function CreateRigForm() {
  const createRig = useCreateRig();
  const navigate = useNavigate();
  const [clientErrors, setClientErrors] = useState<FieldErrors>({});
  const errors = { ...serverFieldErrors(createRig.error), ...clientErrors };
  const edits = useFormEdits('the new rig');

  function submit(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    createRig.reset();
    const parsed = parseWith(rigInputSchema, readForm(event.currentTarget));
    if (!parsed.ok) return setClientErrors(parsed.errors);
    setClientErrors({});
    createRig.mutate(parsed.data, {
      onSuccess: (rig) => {
        edits.saved();
        void navigate(`/rigs/${rig.id}`);
      },
    });
  }

  return (
    <div className="mx-auto max-w-2xl space-y-4">
      <h1 className="text-xl font-semibold">New rig</h1>
      <Card>
        <form onSubmit={submit} onChange={edits.onChange} noValidate className="space-y-5">
          <TextField label="Rig name" name="name" error={errors.name} placeholder="e.g. Club network, bench 2" />
          <TextArea label="Description" name="description" rows={2} error={errors.description} hint="Optional: what the network is and where it lives." />
          <LineSettingsFields errors={errors} />
          {createRig.error ? <ErrorNotice error={createRig.error} /> : null}
          <div className="flex gap-2">
            <Button type="submit" busy={createRig.isPending}>
              Create rig
            </Button>
            <ButtonLink to="/" variant="secondary">
              Cancel
            </ButtonLink>
          </div>
          <p className="text-xs text-muted">You will be the rig's owner. Add stations and invite people next.</p>
        </form>
      </Card>
    </div>
  );
}
