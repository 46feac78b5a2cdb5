import { Router } from 'express';
import { compareQuerySchema } from '../../shared/schemas';
import { rigAccess, type Guard } from '../auth/guard';
import { parseBody } from '../http/errors';
import { compareCaptures } from '../services/calls/compare';
import type { CallsModule } from '../services/calls/module';

export function compareRoutes(m: CallsModule, guard: Guard): Router {
  const router = Router();
  router.get('/rigs/:rigId/compare', guard.requireRigRole('viewer'), (req, res) => {
    res.json(compareCaptures(m, rigAccess(res).rigId, parseBody(compareQuerySchema, req.query)));
  });
  return router;
}
