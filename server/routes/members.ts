import { Router } from 'express';
import { memberPatchSchema } from '../../shared/schemas';
import { currentUser, rigAccess, roleAtLeast, type Guard } from '../auth/guard';
import type { AppContext } from '../context';
import { forbidden, parseBody, parseId } from '../http/errors';
import { changeMemberRole, listMembers, removeMember } from '../services/members';

export function memberRoutes(ctx: AppContext, guard: Guard): Router {
  const router = Router();

  router.get('/rigs/:rigId/members', guard.requireRigRole('viewer'), (_req, res) => {
    res.json(listMembers(ctx.db, rigAccess(res).rigId));
  });

  router.patch('/rigs/:rigId/members/:userId', guard.requireRigRole('owner'), (req, res) => {
    const { role } = parseBody(memberPatchSchema, req.body);
    res.json(changeMemberRole(ctx.db, rigAccess(res).rigId, parseId(req.params.userId, 'member'), role));
  });

  // any member may leave; removing someone else takes the owner role
  router.delete('/rigs/:rigId/members/:userId', guard.requireRigRole('viewer'), (req, res) => {
    const access = rigAccess(res);
    const userId = parseId(req.params.userId, 'member');
    if (userId !== currentUser(req).id && !roleAtLeast(access.role, 'owner')) {
      throw forbidden('Only an owner can remove other members; you can only leave the rig yourself');
    }
    removeMember(ctx.db, access.rigId, userId);
    res.status(204).end();
  });

  return router;
}
