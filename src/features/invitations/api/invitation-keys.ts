export const invitationKeys = {
  all: ['invitations'] as const,
  pending: (rigId: number) => [...invitationKeys.all, 'pending', rigId] as const,
  preview: (token: string) => [...invitationKeys.all, 'preview', token] as const,
};
