import { Router } from 'express';
import { currentUser, type Guard } from '../auth/guard';
import type { AppContext } from '../context';
import { forbidden, notFound } from '../http/errors';
import { listMail, ownsAnyRig } from '../services/mailbox';

/** Development mailbox: what the fake transport "sent". Real SMTP → 404 (there is nothing to show). */
export function mailboxRoutes(ctx: AppContext, guard: Guard): Router {
  const router = Router();

  router.get('/dev/mailbox', guard.requireUser, (req, res) => {
    if (!ctx.mailer.isFake) throw notFound('The development mailbox exists only without FLAGLINE_SMTP_URL');
    if (!ownsAnyRig(ctx.db, currentUser(req).id)) throw forbidden('The development mailbox is for rig owners');
    res.json(listMail(ctx.db));
  });

  return router;
}
