import { Router } from 'express';
import { acceptInvitationSchema, invitationInputSchema, type AcceptInvitationResult } from '../../shared/schemas';
import { currentUser, rigAccess, type Guard } from '../auth/guard';
import { signIn } from '../auth/passport';
import { freshCsrfToken } from '../auth/csrf';
import type { AppContext } from '../context';
import { parseBody, parseId } from '../http/errors';
import {
  acceptInvitation,
  createInvitation,
  deleteInvitation,
  listPendingInvitations,
  previewInvitation,
} from '../services/invitations';

export function invitationRoutes(ctx: AppContext, guard: Guard): Router {
  const router = Router();

  router.get('/rigs/:rigId/invitations', guard.requireRigRole('owner'), (_req, res) => {
    res.json(listPendingInvitations(ctx.db, rigAccess(res).rigId));
  });

  router.post('/rigs/:rigId/invitations', guard.requireRigRole('owner'), async (req, res) => {
    const input = parseBody(invitationInputSchema, req.body);
    res.status(201).json(await createInvitation(ctx, rigAccess(res).rigId, currentUser(req), input));
  });

  router.delete('/rigs/:rigId/invitations/:invitationId', guard.requireRigRole('owner'), (req, res) => {
    deleteInvitation(ctx.db, rigAccess(res).rigId, parseId(req.params.invitationId, 'invitation'));
    res.status(204).end();
  });

  router.get('/invitations/:token', (req, res) => {
    res.json(previewInvitation(ctx.db, req.params.token));
  });

  router.post('/invitations/:token/accept', async (req, res) => {
    const input = parseBody(acceptInvitationSchema, req.body);
    const { user, rigId } = await acceptInvitation(ctx, req.params.token, input);
    await signIn(req, user);
    const body: AcceptInvitationResult = { user, csrfToken: freshCsrfToken(req), rigId };
    res.json(body);
  });

  return router;
}
