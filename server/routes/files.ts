import { Router } from 'express';
import { rigAccess, type Guard } from '../auth/guard';
import { parseId } from '../http/errors';
import { findCapture } from '../services/captures/rows';
import { fileDetail, fileDownload, listFiles } from '../services/calls/files';
import type { CallsModule } from '../services/calls/module';

export function fileRoutes(m: CallsModule, guard: Guard): Router {
  const router = Router();
  const base = '/rigs/:rigId/captures/:captureId/files';
  const capture = (req: { params: unknown }, rigId: number) => findCapture(m, rigId, parseId((req.params as Record<string, string>).captureId, 'capture'));
  const fileId = (req: { params: unknown }) => parseId((req.params as Record<string, string>).fileId, 'recovered file');

  router.get(base, guard.requireRigRole('viewer'), (req, res) => {
    res.json(listFiles(m, capture(req, rigAccess(res).rigId).id));
  });

  router.get(`${base}/:fileId`, guard.requireRigRole('viewer'), (req, res) => {
    res.json(fileDetail(m, capture(req, rigAccess(res).rigId).id, fileId(req)));
  });

  router.get(`${base}/:fileId/download`, guard.requireRigRole('viewer'), (req, res) => {
    const { name, bytes } = fileDownload(m, capture(req, rigAccess(res).rigId).id, fileId(req));
    res.setHeader('Content-Type', 'application/octet-stream');
    res.setHeader('Content-Disposition', `attachment; filename="${name}"`);
    res.setHeader('Content-Length', String(bytes.length));
    res.end(bytes);
  });

  return router;
}
