import { redirect, type LoaderFunctionArgs } from 'react-router';
import { sessionQueryOptions } from '../../features/session/api/get-session';
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

export async function signInLoader({ request }: LoaderFunctionArgs) {
  const session = await queryClient.ensureQueryData(sessionQueryOptions());
  if (session.user) {
    throw redirect(safeNext(new URL(request.url).searchParams.get('next')));
  }
  return null;
}
