import { setTimeout as sleep } from 'node:timers/promises';
import { Router } from 'express';
import { signInSchema, type SessionInfo, type SignInResult, type SignOutResult } from '../../shared/schemas';
import type { Guard } from '../auth/guard';
import { signIn, signOut, verifyCredentials, type FlaglinePassport } from '../auth/passport';
import { csrfToken, freshCsrfToken, freshVisitorToken } from '../auth/csrf';
import type { SignInThrottle } from '../auth/sign-in-throttle';
import type { AppContext } from '../context';
import { HttpError, parseBody, unauthorized } from '../http/errors';
import { waitWords } from '../http/throttle';
import { demoInfo } from '../services/session';

export function sessionRoutes(ctx: AppContext, guard: Guard, passport: FlaglinePassport, limits: { signIn: SignInThrottle }): Router {
  const router = Router();

  router.get('/session', (req, res) => {
    const info: SessionInfo = {
      user: req.user ?? null,
      csrfToken: csrfToken(req, res),
      demo: demoInfo(ctx),
      devMailbox: ctx.mailer.mode === 'mailbox',
      mailOff: ctx.mailer.mode === 'off',
    };
    res.json(info);
  });

  router.post('/session', async (req, res) => {
    req.body = parseBody(signInSchema, req.body);
    const { email } = req.body as { email: string };
    const address = req.ip ?? 'unknown';
    const admission = limits.signIn.admit(email, address);
    if (admission.refused) {
      res.setHeader('Retry-After', String(Math.ceil(admission.retryAfterMs / 1000)));
      throw new HttpError(429, `Too many failed sign-in attempts; wait ${waitWords(admission.retryAfterMs)} and try again`);
    }
    if (admission.delayMs > 0) await sleep(admission.delayMs);
    const user = await verifyCredentials(passport, req);
    if (!user) {
      limits.signIn.failed(email, address);
      throw unauthorized('Wrong e-mail address or password');
    }
    limits.signIn.succeeded(email, address);
    await signIn(req, user);
    const body: SignInResult = { user, csrfToken: freshCsrfToken(req) };
    res.json(body);
  });

  router.delete('/session', guard.requireUser, async (req, res) => {
    await signOut(req);
    const body: SignOutResult = { csrfToken: freshVisitorToken(req, res) };
    res.json(body);
  });

  return router;
}
