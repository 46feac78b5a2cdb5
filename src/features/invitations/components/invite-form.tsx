import { useState, type FormEvent } from 'react';
import { invitationInputSchema } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { SelectField, TextField } from '../../../components/field';
import { ErrorNotice, SuccessNotice } from '../../../components/notice';
import { useFormEdits } from '../../../components/unsaved-changes';
import { parseWith, readForm, serverFieldErrors, type FieldErrors } from '../../../lib/form';
import { useSendInvitation } from '../api/pending-invitations';

const roleOptions = [
  { value: 'viewer', label: 'Viewer — reads, downloads, comments' },
  { value: 'analyst', label: 'Analyst — uploads, decodes, writes notes' },
  { value: 'owner', label: 'Owner — everything, manages people' },
];

export function InviteForm({ rigId }: { rigId: number }) {
  const send = useSendInvitation(rigId);
  const [clientErrors, setClientErrors] = useState<FieldErrors>({});
  const [sentTo, setSentTo] = useState<string | null>(null);
  const [formKey, setFormKey] = useState(0);
  const errors = { ...serverFieldErrors(send.error), ...clientErrors };
  const edits = useFormEdits('the invitation you are writing');

  function submit(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    send.reset();
    setSentTo(null);
    const parsed = parseWith(invitationInputSchema, readForm(event.currentTarget));
    if (!parsed.ok) return setClientErrors(parsed.errors);
    setClientErrors({});
    send.mutate(parsed.data, {
      onSuccess: (invitation) => {
        edits.saved();
        setSentTo(invitation.email);
        setFormKey((k) => k + 1);
      },
    });
  }

  return (
    <form key={formKey} aria-label="Invite someone" onSubmit={submit} onChange={edits.onChange} noValidate className="space-y-3">
      <div className="grid gap-3 sm:grid-cols-[1fr_18rem]">
        <TextField label="E-mail address" name="email" type="email" autoComplete="off" error={errors.email} />
        <SelectField label="Role" name="role" defaultValue="viewer" options={roleOptions} error={errors.role} />
      </div>
      {send.error ? <ErrorNotice error={send.error} /> : null}
      {sentTo ? <SuccessNotice>Invitation sent to {sentTo}. The link in the message works once.</SuccessNotice> : null}
      <Button type="submit" busy={send.isPending}>
        Send invitation
      </Button>
    </form>
  );
}
