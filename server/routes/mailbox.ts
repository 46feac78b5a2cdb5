import { Router } from 'express';
import { currentUser, type Guard } from '../auth/guard';
import type { AppContext } from '../context';
import { notFound } from '../http/errors';
import { listMailFor } from '../services/mailbox';

/**
 * Development mailbox: what the database transport kept instead of sending, each person seeing the
 * messages addressed to them. It exists only in demo or development mode without SMTP (404 otherwise).
 */
export function mailboxRoutes(ctx: AppContext, guard: Guard): Router {
  const router = Router();

  router.get('/dev/mailbox', guard.requireUser, (req, res) => {
    if (ctx.mailer.mode !== 'mailbox') {
      throw notFound('There is no development mailbox here: it exists only in demo or development mode without FLAGLINE_SMTP_URL');
    }
    res.json(listMailFor(ctx.db, currentUser(req).email));
  });

  return router;
}
