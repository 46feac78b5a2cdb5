import { queryOptions, useSuspenseQuery, type QueryClient } from '@tanstack/react-query';
import type { SessionInfo, User } from '../../shared/schemas';
import { api } from './api';
import { sessionKeys } from './session-keys';

export function fetchSession(): Promise<SessionInfo> {
  return api<SessionInfo>('/api/session');
}

export function sessionQueryOptions() {
  return queryOptions({ queryKey: sessionKeys.current(), queryFn: fetchSession, staleTime: 60_000 });
}

export function useSession() {
  return useSuspenseQuery(sessionQueryOptions()).data;
}

/**
 * After sign-in, sign-out, accepted invitation or password reset: everything cached belonged
 * to the previous user, so drop it and keep only the new session (with its new CSRF token).
 */
export function replaceSession(queryClient: QueryClient, next: { user: User | null; csrfToken: string }): void {
  const previous = queryClient.getQueryData<SessionInfo>(sessionKeys.current());
  queryClient.removeQueries({ predicate: (q) => q.queryKey[0] !== sessionKeys.all[0] });
  queryClient.setQueryData<SessionInfo>(sessionKeys.current(), {
    demo: previous?.demo ?? null,
    devMailbox: previous?.devMailbox ?? false,
    mailOff: previous?.mailOff ?? false,
    user: next.user,
    csrfToken: next.csrfToken,
  });
}
