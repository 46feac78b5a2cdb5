import { useMutation } from '@tanstack/react-query';
import type { AcceptInvitationInput, AcceptInvitationResult } from '../../../../shared/schemas';
import { api } from '../../../lib/api';

export type AcceptedInvitation = AcceptInvitationResult;

export function acceptInvitation(token: string, input: AcceptInvitationInput): Promise<AcceptedInvitation> {
  return api(`/api/invitations/${encodeURIComponent(token)}/accept`, { method: 'POST', body: input });
}

/** The caller decides what signing in means for the rest of the app (session cache, navigation). */
export function useAcceptInvitation(token: string) {
  return useMutation({ mutationFn: (input: AcceptInvitationInput) => acceptInvitation(token, input) });
}
