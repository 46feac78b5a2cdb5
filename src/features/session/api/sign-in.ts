import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { SignInInput, SignInResult } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { replaceSession } from '../../../lib/session';

export function signIn(input: SignInInput): Promise<SignInResult> {
  return api('/api/session', { method: 'POST', body: input });
}

export function useSignIn() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: signIn,
    onSuccess: (result) => replaceSession(queryClient, result),
  });
}
