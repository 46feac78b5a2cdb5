import { z } from 'zod';

export const roleSchema = z.enum(['owner', 'analyst', 'viewer']);
export type Role = z.infer<typeof roleSchema>;

/** Every error the API sends has this shape; `fields` maps a form field path to its message. */
export const apiErrorSchema = z.object({
  error: z.string(),
  fields: z.record(z.string(), z.string()).optional(),
});
export type ApiError = z.infer<typeof apiErrorSchema>;

export const idParam = z.coerce.number().int().positive();
