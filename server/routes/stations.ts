import { Router } from 'express';
import { stationInputSchema, stationPatchSchema } from '../../shared/schemas';
import { rigAccess, type Guard } from '../auth/guard';
import type { AppContext } from '../context';
import { parseBody, parseId } from '../http/errors';
import { createStation, deleteStation, updateStation } from '../services/stations';

export function stationRoutes(ctx: AppContext, guard: Guard): Router {
  const router = Router();

  router.post('/rigs/:rigId/stations', guard.requireRigRole('owner'), (req, res) => {
    const input = parseBody(stationInputSchema, req.body);
    res.status(201).json(createStation(ctx.db, rigAccess(res).rigId, input));
  });

  router.patch('/rigs/:rigId/stations/:stationId', guard.requireRigRole('owner'), (req, res) => {
    const patch = parseBody(stationPatchSchema, req.body);
    res.json(updateStation(ctx.db, rigAccess(res).rigId, parseId(req.params.stationId, 'station'), patch));
  });

  router.delete('/rigs/:rigId/stations/:stationId', guard.requireRigRole('owner'), (req, res) => {
    deleteStation(ctx.db, rigAccess(res).rigId, parseId(req.params.stationId, 'station'));
    res.status(204).end();
  });

  return router;
}
