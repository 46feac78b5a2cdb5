import { Router } from 'express';
import { faultQuerySchema } from '../../shared/schemas';
import { rigAccess, type Guard } from '../auth/guard';
import { parseBody, parseId } from '../http/errors';
import type { CaptureModule } from '../services/captures/module';
import { findCapture } from '../services/captures/rows';
import { faultDesk } from '../services/faults/fault-desk';

export function faultRoutes(m: CaptureModule, guard: Guard): Router {
  const router = Router();
  router.get('/rigs/:rigId/captures/:captureId/faults', guard.requireRigRole('viewer'), (req, res) => {
    const c = findCapture(m, rigAccess(res).rigId, parseId(req.params.captureId, 'capture'));
    res.json(faultDesk(m, c, parseBody(faultQuerySchema, req.query)));
  });
  return router;
}
