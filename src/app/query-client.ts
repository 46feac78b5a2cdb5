import { QueryClient } from '@tanstack/react-query';
import { ApiError, setCsrfTokenSource } from '../lib/api';
import { sessionQueryOptions } from '../lib/session';

export const queryClient = new QueryClient({
  defaultOptions: {
    queries: {
      staleTime: 30_000,
      // a 4xx answer will not change on retry; network and server errors might
      retry: (failures, error) => !(error instanceof ApiError && error.status >= 400 && error.status < 500) && failures < 2,
    },
  },
});

// The CSRF token lives in the session query; the api client reads it from there.
setCsrfTokenSource({
  get: async () => (await queryClient.ensureQueryData(sessionQueryOptions())).csrfToken,
  refresh: async () => (await queryClient.fetchQuery({ ...sessionQueryOptions(), staleTime: 0 })).csrfToken,
});
