import { z } from 'zod';

export const emailSchema = z.string().trim().toLowerCase().email('Enter a valid e-mail address').max(254);
export const passwordSchema = z
  .string()
  .min(10, 'Use at least 10 characters')
  .max(200, 'Use at most 200 characters');
export const displayNameSchema = z.string().trim().min(1, 'Enter a name').max(80, 'Use at most 80 characters');

export const signInSchema = z.object({
  email: emailSchema,
  password: z.string().min(1, 'Enter your password').max(200),
});
export type SignInInput = z.infer<typeof signInSchema>;

export const resetRequestSchema = z.object({ email: emailSchema });
export type ResetRequestInput = z.infer<typeof resetRequestSchema>;

export const newPasswordSchema = z.object({ password: passwordSchema });
export type NewPasswordInput = z.infer<typeof newPasswordSchema>;

export const acceptInvitationSchema = z.object({
  /** required when the invited address has no account yet */
  name: displayNameSchema.optional(),
  password: passwordSchema,
});
export type AcceptInvitationInput = z.infer<typeof acceptInvitationSchema>;

export const userSchema = z.object({ id: z.number(), email: z.string(), name: z.string() });
export type User = z.infer<typeof userSchema>;

export interface SessionInfo {
  user: User | null;
  csrfToken: string;
  /** present only in demo mode: the accounts shown on the sign-in page */
  demo: { password: string; accounts: { email: string; role: string }[] } | null;
  /** development mailbox available (demo or development mode without SMTP): each person reads their own mail there */
  devMailbox: boolean;
  /** this server sends no mail at all (no SMTP outside demo and development mode): no invitations or reset links */
  mailOff: boolean;
}

/** POST /api/session and POST /api/password-resets/:token answer this (the user is signed in) */
export interface SignInResult {
  user: User;
  csrfToken: string;
}

/** DELETE /api/session */
export interface SignOutResult {
  csrfToken: string;
}

/** POST /api/invitations/:token/accept */
export interface AcceptInvitationResult extends SignInResult {
  rigId: number;
}

/** GET /api/password-resets/:token */
export interface PasswordResetPreview {
  email: string;
}
