import { useState, type FormEvent } from 'react';
import { Link, useNavigate, useSearchParams } from 'react-router';
import { signInSchema } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { CenteredPage } from '../../../components/centered-page';
import { TextField } from '../../../components/field';
import { ErrorNotice } from '../../../components/notice';
import { RoleBadge } from '../../../components/role-badge';
import { isApiError } from '../../../lib/api';
import { parseWith, serverFieldErrors, type FieldErrors } from '../../../lib/form';
import { useSession } from '../../../lib/session';
import { useSignIn } from '../api/sign-in';
import { safeNext } from '../../../lib/safe-next';

export function SignInPage() {
  const session = useSession();
  const signIn = useSignIn();
  const navigate = useNavigate();
  const [params] = useSearchParams();
  const [email, setEmail] = useState('');
  const [password, setPassword] = useState('');
  const [clientErrors, setClientErrors] = useState<FieldErrors>({});
  const errors = { ...serverFieldErrors(signIn.error), ...clientErrors };

  function submit(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    signIn.reset();
    const parsed = parseWith(signInSchema, { email, password });
    if (!parsed.ok) return setClientErrors(parsed.errors);
    setClientErrors({});
    signIn.mutate(parsed.data, { onSuccess: () => navigate(safeNext(params.get('next')), { replace: true }) });
  }

  function fill(account: string) {
    setEmail(account);
    setPassword(session.demo?.password ?? '');
    setClientErrors({});
    signIn.reset();
  }

  return (
    <CenteredPage title="Sign in">
      <form onSubmit={submit} noValidate className="space-y-4">
        <TextField label="E-mail" name="email" type="email" autoComplete="username" value={email} onChange={(e) => setEmail(e.target.value)} error={errors.email} />
        <TextField
          label="Password"
          name="password"
          type="password"
          autoComplete="current-password"
          value={password}
          onChange={(e) => setPassword(e.target.value)}
          error={errors.password}
        />
        {signIn.error && !Object.keys(serverFieldErrors(signIn.error)).length ? (
          <ErrorNotice error={signIn.error}>
            {isApiError(signIn.error, 401) ? 'That e-mail and password do not match an account. Check both and try again.' : undefined}
          </ErrorNotice>
        ) : null}
        <div className="flex items-center justify-between">
          <Button type="submit" busy={signIn.isPending}>
            Sign in
          </Button>
          {session.mailOff ? (
            <span className="max-w-56 text-right text-xs text-muted">This server sends no e-mail: to reset a password, ask whoever runs it.</span>
          ) : (
            <Link to="/reset-password" className="text-sm text-link hover:underline">
              Forgot your password?
            </Link>
          )}
        </div>
      </form>
      {session.demo ? (
        <div className="mt-6 border-t border-line pt-4">
          <h2 className="text-sm font-semibold">Demo accounts</h2>
          <p className="mt-1 text-xs text-muted">
            This server runs in demo mode. Every demo account uses the password{' '}
            <code className="font-mono text-text">{session.demo.password}</code>.
          </p>
          <ul className="mt-3 space-y-1.5">
            {session.demo.accounts.map((account) => (
              <li key={account.email} className="flex items-center justify-between gap-2 rounded-md bg-raised px-2.5 py-1.5">
                <span className="flex items-center gap-2 text-sm">
                  <span className="font-mono">{account.email}</span>
                  <RoleBadge role={account.role as 'owner' | 'analyst' | 'viewer'} />
                </span>
                <Button variant="ghost" className="shrink-0 py-0.5" aria-label={`Use ${account.email}`} onClick={() => fill(account.email)}>
                  Fill in
                </Button>
              </li>
            ))}
          </ul>
        </div>
      ) : null}
    </CenteredPage>
  );
}
