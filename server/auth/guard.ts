import type { Request, RequestHandler, Response } from 'express';
import type { Role } from '../../shared/schemas';
import type { AppContext } from '../context';
import { forbidden, notFound, parseId, unauthorized } from '../http/errors';
import { findMembership, rigExists } from '../services/rigs';
import './user';

const RANK: Record<Role, number> = { viewer: 0, analyst: 1, owner: 2 };
export const roleAtLeast = (role: Role, min: Role) => RANK[role] >= RANK[min];

export interface RigAccess {
  rigId: number;
  role: Role;
}

/** The signed-in user; only call behind requireUser. */
export function currentUser(req: Request): Express.User {
  if (!req.user) throw unauthorized();
  return req.user;
}

/** The caller's membership of :rigId; only call behind requireRigRole. */
export function rigAccess(res: Response): RigAccess {
  const access = res.locals.rigAccess as RigAccess | undefined;
  if (!access) throw new Error('rigAccess read on a route without requireRigRole');
  return access;
}

export const requireUser: RequestHandler = (req, _res, next) => {
  if (!req.user) return next(unauthorized());
  next();
};

/**
 * The one role check for rig routes. Policy (checked in this order):
 *   401 not signed in · 404 no rig with that id · 403 signed in but not a member of the rig ·
 *   403 a member whose role is below `min`.
 * Rig ids are sequential, so answering 404 to outsiders would hide nothing; 403 tells a person
 * following an old link that the rig exists but they are not (or no longer) in it.
 */
export function createGuard(ctx: Pick<AppContext, 'db'>) {
  const requireRigRole =
    (min: Role): RequestHandler =>
    (req, res, next) => {
      if (!req.user) return next(unauthorized());
      const rigId = parseId(req.params.rigId, 'rig');
      if (!rigExists(ctx.db, rigId)) return next(notFound(`No rig with id ${rigId}`));
      const role = findMembership(ctx.db, rigId, req.user.id);
      if (!role) return next(forbidden('You are not a member of this rig'));
      if (!roleAtLeast(role, min)) {
        return next(forbidden(`This needs the ${min} role on this rig; yours is ${role}`));
      }
      res.locals.rigAccess = { rigId, role } satisfies RigAccess;
      next();
    };
  return { requireUser, requireRigRole };
}

export type Guard = ReturnType<typeof createGuard>;
