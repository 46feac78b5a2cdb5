import { isRouteErrorResponse, useRouteError } from 'react-router';
import { ButtonLink } from '../../components/button';
import { NotFound } from '../../components/not-found';
import { isApiError } from '../../lib/api';
import { errorText } from '../../lib/error-text';

export function RigRouteError() {
  const error = useRouteError();
  if (isApiError(error, 404) || (isRouteErrorResponse(error) && error.status === 404)) return <NotFound what="rig" />;
  if (isApiError(error, 403)) {
    return <NotFound what="rig" message="You are not a member of this rig. Ask its owner for an invitation." />;
  }
  return <ErrorPage error={error} />;
}

export function AppRouteError() {
  const error = useRouteError();
  if (isRouteErrorResponse(error) && error.status === 404) return <NotFound />;
  return <ErrorPage error={error} />;
}

function ErrorPage({ error }: { error: unknown }) {
  return (
    <div className="mx-auto max-w-lg py-16 text-center">
      <h1 className="text-xl font-semibold">This page could not be shown</h1>
      <p className="mt-2 text-muted">{errorText(error)}</p>
      <div className="mt-6 flex justify-center gap-2">
        <button type="button" className="text-link hover:underline" onClick={() => window.location.reload()}>
          Reload
        </button>
        <ButtonLink to="/" variant="secondary">
          Back to your rigs
        </ButtonLink>
      </div>
    </div>
  );
}
