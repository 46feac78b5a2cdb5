import { Router } from 'express';
import { exchangeQuerySchema, exchangeStatsQuerySchema } from '../../shared/schemas';
import { rigAccess, type Guard } from '../auth/guard';
import { parseBody, parseId } from '../http/errors';
import { findCapture } from '../services/captures/rows';
import { exchangePage, exchangeStats } from '../services/calls/exchanges';
import { exportExchanges } from '../services/calls/export';
import { frameCall } from '../services/calls/frame-call';
import type { CallsModule } from '../services/calls/module';

export function exchangeRoutes(m: CallsModule, guard: Guard): Router {
  const router = Router();
  const base = '/rigs/:rigId/captures/:captureId';
  const capture = (req: { params: unknown }, rigId: number) => findCapture(m, rigId, parseId((req.params as Record<string, string>).captureId, 'capture'));

  router.get(`${base}/exchanges`, guard.requireRigRole('viewer'), (req, res) => {
    const c = capture(req, rigAccess(res).rigId);
    res.json(exchangePage(m, c.id, parseBody(exchangeQuerySchema, req.query)));
  });

  router.get(`${base}/exchanges/stats`, guard.requireRigRole('viewer'), (req, res) => {
    const c = capture(req, rigAccess(res).rigId);
    res.json(exchangeStats(m, c.id, parseBody(exchangeStatsQuerySchema, req.query)));
  });

  for (const format of ['csv', 'json'] as const) {
    router.get(`${base}/exchanges/export.${format}`, guard.requireRigRole('viewer'), async (req, res) => {
      const c = capture(req, rigAccess(res).rigId);
      await exportExchanges(m, res, { captureId: c.id, captureName: c.name, q: parseBody(exchangeQuerySchema, req.query), format });
    });
  }

  router.get(`${base}/frames/:frameId/call`, guard.requireRigRole('viewer'), (req, res) => {
    const c = capture(req, rigAccess(res).rigId);
    res.json(frameCall(m, c, parseId(req.params.frameId, 'frame')));
  });

  return router;
}
