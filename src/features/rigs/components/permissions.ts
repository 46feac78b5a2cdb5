import type { Role } from '../../../../shared/schemas';

/** What the UI offers per role; the server refuses the same things on its own. */
export const can = {
  editRig: (role: Role) => role === 'owner',
  editStations: (role: Role) => role === 'owner',
  manageMembers: (role: Role) => role === 'owner',
};
