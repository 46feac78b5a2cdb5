import { createHmac, randomBytes } from 'node:crypto';
import type { Request, RequestHandler, Response } from 'express';
import { csrfSync } from 'csrf-sync';

/**
 * CSRF tokens, sent back by the client in `x-csrf-token` on every POST/PATCH/PUT/DELETE (sign-in
 * included, so a forged cross-site sign-in fails too).
 *  - A stored session (a signed-in user) keeps a synchronizer token in the session.
 *  - A visitor without one gets a signed double-submit cookie instead (OWASP CSRF Prevention Cheat
 *    Sheet, "Signed Double-Submit Cookie"): an httpOnly cookie holds a random nonce and the token is
 *    its HMAC under the server's secret. So reading GET /api/session anonymously stores nothing on
 *    the server: no session row per visit.
 */
const csrf = csrfSync({
  size: 32,
  getTokenFromRequest: (req) => req.get('x-csrf-token'),
  getTokenFromState: (req) => req.session.csrfToken ?? visitorToken(req),
});

const VISITOR_COOKIE = 'flagline.csrf';
const SECRET = Symbol('csrf secret');
type WithSecret = Request & { [SECRET]?: string };

function secretOf(req: Request): string {
  const secret = (req as WithSecret)[SECRET];
  if (!secret) throw new Error('CSRF helpers used on a route without csrfProtection');
  return secret;
}

const sign = (secret: string, nonce: string) => createHmac('sha256', secret).update(`csrf:${nonce}`).digest('hex');

function cookieNonce(req: Request): string | undefined {
  for (const part of (req.headers.cookie ?? '').split(';')) {
    const [name, value] = part.trim().split('=');
    if (name === VISITOR_COOKIE && value && /^[0-9a-f]{32}$/.test(value)) return value;
  }
  return undefined;
}

/** the token the visitor cookie of this request stands for, if it carries one */
function visitorToken(req: Request): string | undefined {
  const nonce = cookieNonce(req);
  return nonce ? sign(secretOf(req), nonce) : undefined;
}

function issueVisitorToken(req: Request, res: Response): string {
  const nonce = randomBytes(16).toString('hex');
  res.cookie(VISITOR_COOKIE, nonce, { httpOnly: true, sameSite: 'strict', secure: req.secure, path: '/api' });
  return sign(secretOf(req), nonce);
}

/** Checks the token on state-changing requests; `secret` signs the visitor cookies. */
export function csrfProtection(secret: string): RequestHandler {
  return (req, res, next) => {
    (req as WithSecret)[SECRET] = secret;
    csrf.csrfSynchronisedProtection(req, res, next);
  };
}

/** The caller's token: the session's when there is a stored session, else the visitor cookie's (made when missing). */
export function csrfToken(req: Request, res: Response): string {
  if (req.session.csrfToken) return req.session.csrfToken;
  if (req.user) return csrf.generateToken(req);
  return visitorToken(req) ?? issueVisitorToken(req, res);
}

/** After sign-in the session was regenerated: a new token, kept in it. */
export const freshCsrfToken = (req: Request): string => csrf.generateToken(req, true);

/** After sign-out: a new visitor token (new cookie), nothing stored. */
export const freshVisitorToken = (req: Request, res: Response): string => issueVisitorToken(req, res);
