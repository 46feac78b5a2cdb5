import { Router } from 'express';
import { scheduleQuerySchema } from '../../shared/schemas';
import { rigAccess, type Guard } from '../auth/guard';
import { parseBody, parseId } from '../http/errors';
import { findCapture } from '../services/captures/rows';
import type { CallsModule } from '../services/calls/module';
import { scheduleExchange, scheduleView, serviceView } from '../services/timing/timing-views';

/** Line timing of a capture: the service statistics and windows of the schedule view. */
export function timingRoutes(m: CallsModule, guard: Guard): Router {
  const router = Router();
  router.get('/rigs/:rigId/captures/:captureId/timing/service', guard.requireRigRole('viewer'), (req, res) => {
    const c = findCapture(m, rigAccess(res).rigId, parseId(req.params.captureId, 'capture'));
    res.json(serviceView(m, c));
  });
  router.get('/rigs/:rigId/captures/:captureId/timing/schedule', guard.requireRigRole('viewer'), (req, res) => {
    const c = findCapture(m, rigAccess(res).rigId, parseId(req.params.captureId, 'capture'));
    res.json(scheduleView(m, c, parseBody(scheduleQuerySchema, req.query)));
  });
  router.get('/rigs/:rigId/captures/:captureId/timing/exchanges/:exchangeId', guard.requireRigRole('viewer'), (req, res) => {
    const c = findCapture(m, rigAccess(res).rigId, parseId(req.params.captureId, 'capture'));
    res.json(scheduleExchange(m, c, parseId(req.params.exchangeId, 'exchange')));
  });
  return router;
}
