import { Router } from 'express';
import { captureFieldMapSchema, fieldMapCreateSchema, fieldMapQuerySchema, fieldMapSaveSchema, previewFramesQuerySchema } from '../../shared/schemas';
import { currentUser, rigAccess, type Guard } from '../auth/guard';
import { parseBody, parseId } from '../http/errors';
import { findCapture } from '../services/captures/rows';
import { captureCallLayer, chooseCaptureMap } from '../services/calls/capture-layer';
import { previewFrames } from '../services/calls/field-map-preview';
import { createFieldMap, fieldMapDetail, fieldMapMarkdown, listFieldMaps, saveFieldMap } from '../services/calls/field-maps';
import type { CallsModule } from '../services/calls/module';
import { safeFileName } from '../services/calls/files';

export function fieldMapRoutes(m: CallsModule, guard: Guard): Router {
  const router = Router();
  const base = '/rigs/:rigId/field-maps';
  const mapId = (req: { params: unknown }) => parseId((req.params as Record<string, string>).mapId, 'field map');
  const capture = (req: { params: unknown }, rigId: number) => findCapture(m, rigId, parseId((req.params as Record<string, string>).captureId, 'capture'));

  router.get(base, guard.requireRigRole('viewer'), (_req, res) => {
    res.json(listFieldMaps(m, rigAccess(res).rigId));
  });

  router.post(base, guard.requireRigRole('analyst'), (req, res) => {
    res.status(201).json(createFieldMap(m, rigAccess(res).rigId, currentUser(req).id, parseBody(fieldMapCreateSchema, req.body)));
  });

  // before `/:mapId`, which would take "preview-frames" for a map id
  router.get(`${base}/preview-frames`, guard.requireRigRole('viewer'), (req, res) => {
    res.json(previewFrames(m, rigAccess(res).rigId, parseBody(previewFramesQuerySchema, req.query)));
  });

  router.get(`${base}/:mapId`, guard.requireRigRole('viewer'), (req, res) => {
    const { version } = parseBody(fieldMapQuerySchema, req.query);
    res.json(fieldMapDetail(m, rigAccess(res).rigId, mapId(req), version));
  });

  router.put(`${base}/:mapId`, guard.requireRigRole('analyst'), (req, res) => {
    res.json(saveFieldMap(m, rigAccess(res).rigId, mapId(req), currentUser(req).id, parseBody(fieldMapSaveSchema, req.body)));
  });

  router.get(`${base}/:mapId/export.md`, guard.requireRigRole('viewer'), (req, res) => {
    const { version } = parseBody(fieldMapQuerySchema, req.query);
    const { name, markdown } = fieldMapMarkdown(m, rigAccess(res).rigId, mapId(req), version);
    res.setHeader('Content-Type', 'text/markdown; charset=utf-8');
    res.setHeader('Content-Disposition', `attachment; filename="${safeFileName(name)}.md"`);
    res.send(markdown);
  });

  router.get('/rigs/:rigId/captures/:captureId/field-map', guard.requireRigRole('viewer'), (req, res) => {
    res.json(captureCallLayer(m, capture(req, rigAccess(res).rigId)));
  });

  router.put('/rigs/:rigId/captures/:captureId/field-map', guard.requireRigRole('analyst'), (req, res) => {
    const rigId = rigAccess(res).rigId;
    const c = capture(req, rigId);
    res.status(202).json(chooseCaptureMap(m, rigId, c, parseBody(captureFieldMapSchema, req.body)));
  });

  return router;
}
