import { Router } from 'express';
import { rigInputSchema, rigPatchSchema } from '../../shared/schemas';
import { currentUser, rigAccess, type Guard } from '../auth/guard';
import type { AppContext } from '../context';
import { parseBody } from '../http/errors';
import { createRig, deleteRig, getRigDetail, listRigs, updateRig, type RigValues } from '../services/rigs';

/**
 * rigPatchSchema is rigInputSchema.partial(), and zod still fills in description's default ('') when
 * it is absent — so only keys the client actually sent are applied.
 */
function sentKeysOnly(raw: unknown, parsed: Partial<RigValues>): Partial<RigValues> {
  const sent = raw && typeof raw === 'object' ? (raw as Record<string, unknown>) : {};
  const out: Partial<RigValues> = {};
  for (const key of ['name', 'description', 'lineSettings', 'responseTimeoutMs', 'cpuClockMHz'] as const) {
    if (Object.hasOwn(sent, key) && parsed[key] !== undefined) Object.assign(out, { [key]: parsed[key] });
  }
  return out;
}

/** `beforeDelete` removes what hangs off a rig outside its database cascade (stored captures, decoded rows). */
export function rigRoutes(ctx: AppContext, guard: Guard, beforeDelete: (rigId: number) => Promise<void>): Router {
  const router = Router();

  router.get('/rigs', guard.requireUser, (req, res) => {
    res.json(listRigs(ctx.db, currentUser(req).id));
  });

  router.post('/rigs', guard.requireUser, (req, res) => {
    const input = parseBody(rigInputSchema, req.body);
    res.status(201).json(createRig(ctx.db, currentUser(req).id, input));
  });

  router.get('/rigs/:rigId', guard.requireRigRole('viewer'), (req, res) => {
    res.json(getRigDetail(ctx.db, rigAccess(res).rigId, currentUser(req).id));
  });

  router.patch('/rigs/:rigId', guard.requireRigRole('owner'), (req, res) => {
    const patch = sentKeysOnly(req.body, parseBody(rigPatchSchema, req.body));
    res.json(updateRig(ctx.db, rigAccess(res).rigId, currentUser(req).id, patch));
  });

  router.delete('/rigs/:rigId', guard.requireRigRole('owner'), async (_req, res) => {
    await beforeDelete(rigAccess(res).rigId);
    deleteRig(ctx.db, rigAccess(res).rigId);
    res.status(204).end();
  });

  return router;
}
