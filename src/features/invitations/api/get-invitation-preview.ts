import { queryOptions, useQuery } from '@tanstack/react-query';
import type { InvitationPreview } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { invitationKeys } from './invitation-keys';

export function fetchInvitationPreview(token: string): Promise<InvitationPreview> {
  return api(`/api/invitations/${encodeURIComponent(token)}`);
}

export function invitationPreviewQueryOptions(token: string) {
  // a used or expired link stays that way: no retries, no refetch on focus
  return queryOptions({
    queryKey: invitationKeys.preview(token),
    queryFn: () => fetchInvitationPreview(token),
    retry: false,
    refetchOnWindowFocus: false,
  });
}

export function useInvitationPreview(token: string) {
  return useQuery(invitationPreviewQueryOptions(token));
}
