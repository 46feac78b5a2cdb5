import type { RequestHandler } from 'express';
import { rateLimit } from 'express-rate-limit';
import { SignInThrottle } from '../auth/sign-in-throttle';
import { MailLimits } from '../mail/limits';

export interface RateLimitOptions {
  /** wrong passwords per 15 minutes for one account from one client address */
  signIn: number;
  /** wrong passwords per 15 minutes from one client address over all accounts */
  signInPerAddress: number;
  /** longest delay the per-account back-off adds to a sign-in attempt */
  signInBackoffMaxMs: number;
  /** reset requests per 15 minutes per client address */
  reset: number;
  /** reset mails per hour to one address (whether or not it has an account) */
  resetPerRecipient: number;
  /** invitations per hour one user sends */
  invitationsPerUser: number;
  /** invitations per hour to one address */
  invitationsPerRecipient: number;
  /** clock of the in-memory limits (tests move it) */
  now?: () => number;
}

export const DEFAULT_RATE_LIMITS: RateLimitOptions = {
  signIn: 10,
  signInPerAddress: 50,
  signInBackoffMaxMs: 2000,
  reset: 5,
  resetPerRecipient: 3,
  invitationsPerUser: 30,
  invitationsPerRecipient: 3,
};
const WINDOW_MS = 15 * 60 * 1000;
const MAIL_WINDOW_MS = 60 * 60 * 1000;

export interface RateLimits {
  signIn: SignInThrottle;
  reset: RequestHandler[];
  mail: MailLimits;
}

export function createRateLimits(opts: RateLimitOptions): RateLimits {
  return {
    signIn: new SignInThrottle({
      perPair: opts.signIn,
      perAddress: opts.signInPerAddress,
      // the account as a whole is slowed after as many wrong passwords as one pair may make
      backoffAfter: opts.signIn,
      backoffBaseMs: Math.min(250, opts.signInBackoffMaxMs),
      backoffMaxMs: opts.signInBackoffMaxMs,
      windowMs: WINDOW_MS,
      now: opts.now,
    }),
    reset: [
      rateLimit({
        windowMs: WINDOW_MS,
        standardHeaders: 'draft-8',
        legacyHeaders: false,
        limit: opts.reset,
        handler: (_req, res) => {
          res.status(429).json({ error: 'Too many password reset requests; wait 15 minutes and try again' });
        },
      }),
    ],
    mail: new MailLimits({
      windowMs: MAIL_WINDOW_MS,
      resetPerRecipient: opts.resetPerRecipient,
      invitationsPerUser: opts.invitationsPerUser,
      invitationsPerRecipient: opts.invitationsPerRecipient,
      now: opts.now,
    }),
  };
}
