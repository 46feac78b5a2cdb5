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

/** `enabled: false` once the invitation is accepted: the link is used up, asking again would only get a 410. */
export function useInvitationPreview(token: string, enabled = true) {
  return useQuery({ ...invitationPreviewQueryOptions(token), enabled });
}
