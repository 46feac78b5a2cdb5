import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { NewPasswordInput, PasswordResetPreview, ResetRequestInput, SignInResult } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { replaceSession } from '../../../lib/session';
import { sessionKeys } from '../../../lib/session-keys';

export function requestPasswordReset(input: ResetRequestInput): Promise<void> {
  return api('/api/password-resets', { method: 'POST', body: input });
}

export function useRequestPasswordReset() {
  return useMutation({ mutationFn: requestPasswordReset });
}

export function fetchResetToken(token: string): Promise<PasswordResetPreview> {
  return api(`/api/password-resets/${encodeURIComponent(token)}`);
}

export function resetTokenQueryOptions(token: string) {
  return queryOptions({ queryKey: sessionKeys.resetToken(token), queryFn: () => fetchResetToken(token), retry: false });
}

export function useResetToken(token: string) {
  return useQuery(resetTokenQueryOptions(token));
}

export function setNewPassword(token: string, input: NewPasswordInput): Promise<SignInResult> {
  return api(`/api/password-resets/${encodeURIComponent(token)}`, { method: 'POST', body: input });
}

export function useSetNewPassword(token: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: NewPasswordInput) => setNewPassword(token, input),
    onSuccess: (result) => replaceSession(queryClient, result),
  });
}
