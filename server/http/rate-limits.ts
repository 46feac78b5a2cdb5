import type { RequestHandler } from 'express';
import { rateLimit } from 'express-rate-limit';

export interface RateLimitOptions {
  /** failed sign-ins per 15 minutes, per client address and, separately, per e-mail address */
  signIn: number;
  /** reset requests per 15 minutes per client address */
  reset: number;
}

export const DEFAULT_RATE_LIMITS: RateLimitOptions = { signIn: 10, reset: 5 };
const WINDOW_MS = 15 * 60 * 1000;

const emailOf = (body: unknown): string | undefined => {
  const email = body && typeof body === 'object' ? (body as { email?: unknown }).email : undefined;
  return typeof email === 'string' && email.trim() ? email.trim().toLowerCase() : undefined;
};

function tooMany(message: string): RequestHandler {
  return (_req, res) => {
    res.status(429).json({ error: message });
  };
}

export function createRateLimits(opts: RateLimitOptions): { signIn: RequestHandler[]; reset: RequestHandler[] } {
  const signInMessage = 'Too many failed sign-in attempts; wait 15 minutes and try again';
  const common = { windowMs: WINDOW_MS, standardHeaders: 'draft-8' as const, legacyHeaders: false };
  return {
    signIn: [
      // only failures count, so a team behind one address can still sign in all day
      rateLimit({ ...common, limit: opts.signIn, skipSuccessfulRequests: true, handler: tooMany(signInMessage) }),
      // per account as well, so spreading guesses over many addresses does not help
      rateLimit({
        ...common,
        limit: opts.signIn,
        skipSuccessfulRequests: true,
        skip: (req) => emailOf(req.body) === undefined,
        keyGenerator: (req) => `email:${emailOf(req.body)}`,
        handler: tooMany(signInMessage),
      }),
    ],
    reset: [
      rateLimit({
        ...common,
        limit: opts.reset,
        handler: tooMany('Too many password reset requests; wait 15 minutes and try again'),
      }),
    ],
  };
}
