export const sessionKeys = {
  all: ['session'] as const,
  current: () => [...sessionKeys.all, 'current'] as const,
  resetToken: (token: string) => [...sessionKeys.all, 'reset-token', token] as const,
};
