import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { SignOutResult } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { replaceSession } from '../../../lib/session';

export function signOut(): Promise<SignOutResult> {
  return api('/api/session', { method: 'DELETE' });
}

export function useSignOut() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: signOut,
    onSuccess: ({ csrfToken }) => replaceSession(queryClient, { user: null, csrfToken }),
  });
}
