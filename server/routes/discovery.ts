import { Router } from 'express';
import { fieldHintsQuerySchema } from '../../shared/schemas';
import { rigAccess, type Guard } from '../auth/guard';
import { parseBody, parseId } from '../http/errors';
import type { CaptureModule } from '../services/captures/module';
import { findCapture } from '../services/captures/rows';
import { captureFieldHints } from '../services/discovery-hints';
import { captureDiscovery } from '../services/discovery-runs';

/** What a capture reveals about itself: the settings finder's answer, and field hints. */
export function discoveryRoutes(m: CaptureModule, guard: Guard): Router {
  const router = Router();
  const base = '/rigs/:rigId/captures/:captureId';
  const capture = (req: { params: unknown }, rigId: number) => findCapture(m, rigId, parseId((req.params as Record<string, string>).captureId, 'capture'));

  // answers at once: 'running' with progress until the finder is done (it runs beside requests)
  router.get(`${base}/discovery`, guard.requireRigRole('viewer'), (req, res) => {
    res.json(captureDiscovery(m, capture(req, rigAccess(res).rigId)));
  });

  router.get(`${base}/field-hints`, guard.requireRigRole('viewer'), (req, res) => {
    const c = capture(req, rigAccess(res).rigId);
    res.json(captureFieldHints(m.db, c, parseBody(fieldHintsQuerySchema, req.query)));
  });

  return router;
}
