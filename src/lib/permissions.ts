import type { Role } from '../../shared/schemas';

/** What the capture screens offer per role; the server refuses the same things on its own. */
export const canCapture = {
  upload: (role: Role) => role === 'owner' || role === 'analyst',
  decode: (role: Role) => role === 'owner' || role === 'analyst',
  remove: (role: Role) => role === 'owner',
};
