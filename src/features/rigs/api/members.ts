import { queryOptions, useMutation, useQueryClient, useSuspenseQuery } from '@tanstack/react-query';
import type { Member, Role } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { rigKeys } from './rig-keys';

export function fetchMembers(rigId: number): Promise<Member[]> {
  return api(`/api/rigs/${rigId}/members`);
}

export function membersQueryOptions(rigId: number) {
  return queryOptions({ queryKey: rigKeys.members(rigId), queryFn: () => fetchMembers(rigId) });
}

export function useMembers(rigId: number) {
  return useSuspenseQuery(membersQueryOptions(rigId)).data;
}

export function changeMemberRole(rigId: number, userId: number, role: Role): Promise<Member> {
  return api(`/api/rigs/${rigId}/members/${userId}`, { method: 'PATCH', body: { role } });
}

export function removeMember(rigId: number, userId: number): Promise<void> {
  return api(`/api/rigs/${rigId}/members/${userId}`, { method: 'DELETE' });
}

function useInvalidateMembership(rigId: number) {
  const queryClient = useQueryClient();
  return () =>
    Promise.all([
      queryClient.invalidateQueries({ queryKey: rigKeys.members(rigId) }),
      queryClient.invalidateQueries({ queryKey: rigKeys.detail(rigId) }),
      queryClient.invalidateQueries({ queryKey: rigKeys.list() }),
    ]);
}

export function useChangeMemberRole(rigId: number) {
  const invalidate = useInvalidateMembership(rigId);
  return useMutation({
    mutationFn: ({ userId, role }: { userId: number; role: Role }) => changeMemberRole(rigId, userId, role),
    onSuccess: invalidate,
  });
}

export function useRemoveMember(rigId: number) {
  const invalidate = useInvalidateMembership(rigId);
  return useMutation({ mutationFn: (userId: number) => removeMember(rigId, userId), onSuccess: invalidate });
}
