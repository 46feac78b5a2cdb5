import { useState, type FormEvent } from 'react';
import { Link, useNavigate, useParams } from 'react-router';
import { newPasswordSchema } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { CenteredPage } from '../../../components/centered-page';
import { TextField } from '../../../components/field';
import { ErrorNotice } from '../../../components/notice';
import { isApiError } from '../../../lib/api';
import { parseWith, readForm, serverFieldErrors, type FieldErrors } from '../../../lib/form';
import { useResetToken, useSetNewPassword } from '../api/password-reset';

export function ResetPasswordPage() {
  const { token = '' } = useParams();
  const tokenQuery = useResetToken(token);
  const setPassword = useSetNewPassword(token);
  const navigate = useNavigate();
  const [clientErrors, setClientErrors] = useState<FieldErrors>({});
  const errors = { ...serverFieldErrors(setPassword.error), ...clientErrors };

  function submit(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    setPassword.reset();
    const parsed = parseWith(newPasswordSchema, readForm(event.currentTarget));
    if (!parsed.ok) return setClientErrors(parsed.errors);
    setClientErrors({});
    setPassword.mutate(parsed.data, { onSuccess: () => navigate('/', { replace: true }) });
  }

  if (tokenQuery.isPending) {
    return (
      <CenteredPage title="Set a new password">
        <p className="text-sm text-muted">Checking the link…</p>
      </CenteredPage>
    );
  }
  if (tokenQuery.isError) {
    const gone = isApiError(tokenQuery.error, 410);
    const unknown = isApiError(tokenQuery.error, 404);
    return (
      <CenteredPage title={gone ? 'This reset link can no longer be used' : unknown ? 'Unknown reset link' : 'Set a new password'}>
        <ErrorNotice error={tokenQuery.error}>
          {unknown ? 'This link is not valid. Check that you copied all of it.' : undefined}
        </ErrorNotice>
        <p className="mt-4 text-sm">
          <Link to="/reset-password" className="text-link hover:underline">
            Ask for a new reset link
          </Link>
        </p>
      </CenteredPage>
    );
  }

  return (
    <CenteredPage title="Set a new password">
      <form onSubmit={submit} noValidate className="space-y-4">
        <p className="text-sm text-muted">
          For <span className="font-mono text-text">{tokenQuery.data.email}</span>
        </p>
        <TextField label="New password" name="password" type="password" autoComplete="new-password" error={errors.password} hint="At least 10 characters." />
        {setPassword.error && !errors.password ? <ErrorNotice error={setPassword.error} /> : null}
        <Button type="submit" busy={setPassword.isPending}>
          Set password and sign in
        </Button>
      </form>
    </CenteredPage>
  );
}
