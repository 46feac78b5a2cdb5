import { useState, type FormEvent } from 'react';
import { Link, useParams } from 'react-router';
import { acceptInvitationSchema, displayNameSchema } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { CenteredPage } from '../../../components/centered-page';
import { TextField } from '../../../components/field';
import { ErrorNotice } from '../../../components/notice';
import { RoleBadge } from '../../../components/role-badge';
import { isApiError } from '../../../lib/api';
import { parseWith, readForm, serverFieldErrors, type FieldErrors } from '../../../lib/form';
import { useAcceptInvitation, type AcceptedInvitation } from '../api/accept-invitation';
import { useInvitationPreview } from '../api/get-invitation-preview';

// A new account must give a name; an existing one only proves its password.
const newAccountSchema = acceptInvitationSchema.extend({ name: displayNameSchema });

const roleMeaning = {
  owner: 'change everything on the rig and manage its people',
  analyst: 'upload and decode captures, write notes and field maps',
  viewer: 'read captures and notes, download recovered files and comment',
} as const;

export function AcceptInvitationPage({ onAccepted }: { onAccepted: (result: AcceptedInvitation) => void }) {
  const { token = '' } = useParams();
  const accept = useAcceptInvitation(token);
  const preview = useInvitationPreview(token, !accept.isSuccess);
  const [clientErrors, setClientErrors] = useState<FieldErrors>({});
  const errors = { ...serverFieldErrors(accept.error), ...clientErrors };

  if (accept.isSuccess) {
    return (
      <CenteredPage title="Invitation">
        <p role="status" className="text-sm text-muted">
          You joined the rig. Opening it…
        </p>
      </CenteredPage>
    );
  }

  if (preview.isPending) {
    return (
      <CenteredPage title="Invitation">
        <p className="text-sm text-muted">Opening the invitation…</p>
      </CenteredPage>
    );
  }

  if (preview.isError || isApiError(accept.error, 410)) {
    const error = preview.error ?? accept.error;
    const gone = isApiError(error, 410);
    const unknown = isApiError(error, 404);
    return (
      <CenteredPage title={gone ? 'This invitation can no longer be used' : unknown ? 'Unknown invitation' : 'Invitation'}>
        <ErrorNotice error={error}>{unknown ? 'This invitation link is not valid. Check that you copied all of it.' : undefined}</ErrorNotice>
        {/* a used or expired link: the server's message already says what to do */}
        {!gone ? (
          <p className="mt-4 text-sm text-muted">
            {unknown ? 'Ask the rig owner to send you a new invitation. If you already joined, sign in instead.' : 'Reload the page to try again.'}
          </p>
        ) : null}
        <p className="mt-4 text-sm">
          <Link to="/sign-in" className="text-link hover:underline">
            Go to sign in
          </Link>
        </p>
      </CenteredPage>
    );
  }

  const invitation = preview.data;

  function submit(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    accept.reset();
    const schema = invitation.accountExists ? acceptInvitationSchema : newAccountSchema;
    const parsed = parseWith(schema, readForm(event.currentTarget));
    if (!parsed.ok) return setClientErrors(parsed.errors);
    setClientErrors({});
    accept.mutate(parsed.data, { onSuccess: onAccepted });
  }

  return (
    <CenteredPage title={`Join “${invitation.rigName}”`}>
      <p className="text-sm">
        <strong>{invitation.invitedBy}</strong> invites <span className="font-mono">{invitation.email}</span> to the rig{' '}
        <strong>{invitation.rigName}</strong> as <RoleBadge role={invitation.role} />.
      </p>
      <p className="mt-1 text-xs text-muted">
        As {invitation.role === 'analyst' ? 'an' : 'a'} {invitation.role} you can {roleMeaning[invitation.role]}.
      </p>
      <form onSubmit={submit} noValidate className="mt-5 space-y-4">
        {invitation.accountExists ? (
          <>
            <p className="text-sm text-muted">You already have a Flagline account. Enter its password to join the rig.</p>
            <TextField label="Password" name="password" type="password" autoComplete="current-password" error={errors.password} />
          </>
        ) : (
          <>
            <TextField label="Your name" name="name" autoComplete="name" error={errors.name} hint="Shown to the other members of the rig." />
            <TextField
              label="Choose a password"
              name="password"
              type="password"
              autoComplete="new-password"
              error={errors.password}
              hint="At least 10 characters."
            />
          </>
        )}
        {accept.error ? <ErrorNotice error={accept.error} /> : null}
        <Button type="submit" busy={accept.isPending}>
          {invitation.accountExists ? 'Join the rig' : 'Create account and join'}
        </Button>
      </form>
    </CenteredPage>
  );
}
