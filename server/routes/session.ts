import { Router, type RequestHandler } from 'express';
import { signInSchema, type SessionInfo, type SignInResult, type SignOutResult } from '../../shared/schemas';
import type { Guard } from '../auth/guard';
import { signIn, signOut, verifyCredentials, type FlaglinePassport } from '../auth/passport';
import { csrfToken, freshCsrfToken } from '../auth/csrf';
import type { AppContext } from '../context';
import { parseBody, unauthorized } from '../http/errors';
import { demoInfo } from '../services/session';

export function sessionRoutes(
  ctx: AppContext,
  guard: Guard,
  passport: FlaglinePassport,
  limits: { signIn: RequestHandler[] },
): Router {
  const router = Router();

  router.get('/session', (req, res) => {
    const info: SessionInfo = {
      user: req.user ?? null,
      csrfToken: csrfToken(req),
      demo: demoInfo(ctx),
      devMailbox: ctx.mailer.isFake,
    };
    res.json(info);
  });

  router.post('/session', ...limits.signIn, async (req, res) => {
    req.body = parseBody(signInSchema, req.body);
    const user = await verifyCredentials(passport, req);
    if (!user) throw unauthorized('Wrong e-mail address or password');
    await signIn(req, user);
    const body: SignInResult = { user, csrfToken: freshCsrfToken(req) };
    res.json(body);
  });

  router.delete('/session', guard.requireUser, async (req, res) => {
    await signOut(req);
    const body: SignOutResult = { csrfToken: freshCsrfToken(req) };
    res.json(body);
  });

  return router;
}
