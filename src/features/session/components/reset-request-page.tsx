import { useState, type FormEvent } from 'react';
import { Link } from 'react-router';
import { resetRequestSchema } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { CenteredPage } from '../../../components/centered-page';
import { TextField } from '../../../components/field';
import { ErrorNotice, SuccessNotice } from '../../../components/notice';
import { parseWith, readForm, serverFieldErrors, type FieldErrors } from '../../../lib/form';
import { useSession } from '../../../lib/session';
import { useRequestPasswordReset } from '../api/password-reset';

export function ResetRequestPage() {
  const request = useRequestPasswordReset();
  const { mailOff } = useSession();
  const [clientErrors, setClientErrors] = useState<FieldErrors>({});
  const [sentTo, setSentTo] = useState<string | null>(null);
  const errors = { ...serverFieldErrors(request.error), ...clientErrors };

  function submit(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    request.reset();
    const parsed = parseWith(resetRequestSchema, readForm(event.currentTarget));
    if (!parsed.ok) return setClientErrors(parsed.errors);
    setClientErrors({});
    request.mutate(parsed.data, { onSuccess: () => setSentTo(parsed.data.email) });
  }

  return (
    <CenteredPage title="Reset your password">
      {mailOff ? (
        <p className="text-sm text-muted">
          This server sends no e-mail (no mail server is set up), so it cannot send reset links. Ask whoever runs it to set a new
          password for you, or to set up mail.
        </p>
      ) : sentTo ? (
        <SuccessNotice>
          If an account exists for <strong>{sentTo}</strong>, a message with a reset link is on its way. The link works once
          and expires after a while.
        </SuccessNotice>
      ) : (
        <form onSubmit={submit} noValidate className="space-y-4">
          <p className="text-sm text-muted">We will send a link to set a new password.</p>
          <TextField label="E-mail" name="email" type="email" autoComplete="email" error={errors.email} />
          {request.error ? <ErrorNotice error={request.error} /> : null}
          <Button type="submit" busy={request.isPending}>
            Send reset link
          </Button>
        </form>
      )}
      <p className="mt-5 text-sm">
        <Link to="/sign-in" className="text-link hover:underline">
          Back to sign in
        </Link>
      </p>
    </CenteredPage>
  );
}
