import { ButtonLink } from './button';

export function NotFound({ what = 'page', message }: { what?: string; message?: string }) {
  return (
    <div className="mx-auto max-w-lg py-16 text-center">
      <p className="font-mono text-sm text-flare-600 dark:text-flare-400">404</p>
      <h1 className="mt-2 text-xl font-semibold">No such {what}</h1>
      <p className="mt-2 text-muted">{message ?? `The ${what} you asked for does not exist, or you are not a member of it.`}</p>
      <ButtonLink to="/" variant="secondary" className="mt-6">
        Back to your rigs
      </ButtonLink>
    </div>
  );
}
