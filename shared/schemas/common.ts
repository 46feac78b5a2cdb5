import { z } from 'zod';

/** a member's role in a rig (memberships and invitations store it: server/db/schema.ts) */
export const RIG_ROLES = ['owner', 'analyst', 'viewer'] as const;
export const roleSchema = z.enum(RIG_ROLES);
export type Role = z.infer<typeof roleSchema>;

/** Every error the API sends has this shape; `fields` maps a form field path to its message. */
export const apiErrorSchema = z.object({
  error: z.string(),
  fields: z.record(z.string(), z.string()).optional(),
});
export type ApiError = z.infer<typeof apiErrorSchema>;

export const idParam = z.coerce.number().int().positive();
