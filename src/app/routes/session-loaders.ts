import { redirect, type LoaderFunctionArgs } from 'react-router';
import { sessionQueryOptions } from '../../lib/session';
import { safeNext } from '../../lib/safe-next';
import { queryClient } from '../query-client';

export async function rootLoader() {
  await queryClient.ensureQueryData(sessionQueryOptions());
  return null;
}

/** Routes behind sign-in send the visitor to sign in, then back to where they were going. */
export async function requireUserLoader({ request }: LoaderFunctionArgs) {
  const session = await queryClient.ensureQueryData(sessionQueryOptions());
  if (!session.user) {
    const url = new URL(request.url);
    const next = url.pathname + url.search;
    throw redirect(next === '/' ? '/sign-in' : `/sign-in?next=${encodeURIComponent(next)}`);
  }
  return null;
}

/**
 * The router runs a route's loader beside its parents' loaders, not after them. Loaders of pages
 * behind sign-in wrap themselves in this, so a visitor who is not signed in (and is being sent to
 * the sign-in page by requireUserLoader) asks the API for nothing it would refuse with a 401.
 */
export function whenSignedIn<Args extends LoaderFunctionArgs>(load: (args: Args) => Promise<unknown>) {
  return async (args: Args) => {
    const session = await queryClient.ensureQueryData(sessionQueryOptions());
    if (session.user) await load(args);
    return null;
  };
}

export async function signInLoader({ request }: LoaderFunctionArgs) {
  const session = await queryClient.ensureQueryData(sessionQueryOptions());
  if (session.user) {
    throw redirect(safeNext(new URL(request.url).searchParams.get('next')));
  }
  return null;
}
