export const rigKeys = {
  all: ['rigs'] as const,
  list: () => [...rigKeys.all, 'list'] as const,
  detail: (rigId: number) => [...rigKeys.all, 'detail', rigId] as const,
  members: (rigId: number) => [...rigKeys.all, 'members', rigId] as const,
};
