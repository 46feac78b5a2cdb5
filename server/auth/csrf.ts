import type { Request } from 'express';
import { csrfSync } from 'csrf-sync';

/**
 * Synchronizer token: stored in the session, sent back by the client in `x-csrf-token` on every
 * POST/PATCH/PUT/DELETE (sign-in included, so a forged cross-site sign-in fails too).
 */
const csrf = csrfSync({
  size: 32,
  getTokenFromRequest: (req) => req.get('x-csrf-token'),
});

export const csrfProtection = csrf.csrfSynchronisedProtection;

/** The session's token, created when it has none. */
export const csrfToken = (req: Request): string => csrf.generateToken(req);

/** A new token: after sign-in and sign-out the session is regenerated, and so is its token. */
export const freshCsrfToken = (req: Request): string => csrf.generateToken(req, true);
