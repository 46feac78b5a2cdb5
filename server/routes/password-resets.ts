import { Router, type RequestHandler } from 'express';
import { newPasswordSchema, resetRequestSchema, type PasswordResetPreview, type SignInResult } from '../../shared/schemas';
import { signIn } from '../auth/passport';
import { freshCsrfToken } from '../auth/csrf';
import type { AppContext } from '../context';
import { parseBody } from '../http/errors';
import { completePasswordReset, previewPasswordReset, requestPasswordReset } from '../services/password-resets';

export function passwordResetRoutes(ctx: AppContext, limits: { reset: RequestHandler[] }): Router {
  const router = Router();

  router.post('/password-resets', ...limits.reset, (req, res) => {
    const { email } = parseBody(resetRequestSchema, req.body);
    requestPasswordReset(ctx, email);
    res.status(202).json({ message: 'If an account uses that address, a reset link is on its way' });
  });

  router.get('/password-resets/:token', (req, res) => {
    const body: PasswordResetPreview = previewPasswordReset(ctx.db, req.params.token);
    res.json(body);
  });

  router.post('/password-resets/:token', async (req, res) => {
    const { password } = parseBody(newPasswordSchema, req.body);
    const user = await completePasswordReset(ctx, req.params.token, password);
    await signIn(req, user);
    const body: SignInResult = { user, csrfToken: freshCsrfToken(req) };
    res.json(body);
  });

  return router;
}
