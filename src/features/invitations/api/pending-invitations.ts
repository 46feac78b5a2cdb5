import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { Invitation, InvitationInput } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { invitationKeys } from './invitation-keys';

export function fetchPendingInvitations(rigId: number): Promise<Invitation[]> {
  return api(`/api/rigs/${rigId}/invitations`);
}

export function pendingInvitationsQueryOptions(rigId: number) {
  return queryOptions({ queryKey: invitationKeys.pending(rigId), queryFn: () => fetchPendingInvitations(rigId) });
}

export function usePendingInvitations(rigId: number) {
  return useQuery(pendingInvitationsQueryOptions(rigId));
}

export function sendInvitation(rigId: number, input: InvitationInput): Promise<Invitation> {
  return api(`/api/rigs/${rigId}/invitations`, { method: 'POST', body: input });
}

export function useSendInvitation(rigId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: InvitationInput) => sendInvitation(rigId, input),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: invitationKeys.pending(rigId) }),
  });
}

export function revokeInvitation(rigId: number, invitationId: number): Promise<void> {
  return api(`/api/rigs/${rigId}/invitations/${invitationId}`, { method: 'DELETE' });
}

export function useRevokeInvitation(rigId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (invitationId: number) => revokeInvitation(rigId, invitationId),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: invitationKeys.pending(rigId) }),
  });
}
