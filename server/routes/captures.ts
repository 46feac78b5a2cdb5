import { randomUUID } from 'node:crypto';
import { Router, type RequestHandler, type Response } from 'express';
import multer from 'multer';
import { z } from 'zod';
import { captureSettingsSchema, timelineQuerySchema, waveformQuerySchema } from '../../shared/schemas';
import { currentUser, rigAccess, type Guard } from '../auth/guard';
import { badRequest, HttpError, parseBody, parseId } from '../http/errors';
import { multipartError } from '../http/multipart';
import { deleteCapture } from '../services/captures/delete';
import { detectCapture } from '../services/captures/detection';
import { exportFrames } from '../services/captures/export';
import { findFrame, frameDetail } from '../services/captures/frame-detail';
import { cancelJob, getJob, startDecode } from '../services/captures/jobs';
import type { CaptureModule } from '../services/captures/module';
import { captureOverview } from '../services/captures/overview';
import { currentJob, findCapture, listCaptures, parseSettings, toSummary } from '../services/captures/rows';
import { saveSettings } from '../services/captures/settings';
import { defaultMaxDecodedBytes, storeDecodedUpload } from '../services/captures/decoded-upload';
import { requireSamples } from '../services/captures/samples-kept';
import { storeUpload } from '../services/captures/upload';
import { DECODED_MEDIA_TYPE } from '../../shared/schemas/decoded-upload';
import { waveformWindow } from '../services/captures/waveform';
import type { JsonAnswer } from '../services/captures/timeline-reads';

const atQuerySchema = z.object({ t: z.coerce.number({ error: 'Give the time in seconds' }).min(0, 'The time cannot be negative') });
const damagedQuerySchema = z.object({ dir: z.enum(['next', 'prev']).default('next') });

/**
 * A JSON answer a read built (server/services/captures/timeline-reads.ts): sent with the headers
 * res.json gives the same text. Its ETag is set only where the app makes them (Express then
 * checks freshness with it as with its own).
 */
function sendJson(res: Response, answer: JsonAnswer): void {
  res.set('Content-Type', 'application/json; charset=utf-8');
  if (res.req.app.get('etag fn')) res.set('ETag', answer.etag);
  res.send(Buffer.from(answer.body.buffer, answer.body.byteOffset, answer.body.byteLength));
}

const megabytes = (n: number) => (n >= 1024 ** 3 ? `${(n / 1024 ** 3).toFixed(1)} GB` : `${Math.round(n / 1024 ** 2)} MB`);

export function captureRoutes(m: CaptureModule, guard: Guard): Router {
  const router = Router();
  const base = '/rigs/:rigId/captures/:captureId';
  const capture = (req: { params: unknown }, rigId: number) => findCapture(m, rigId, parseId((req.params as Record<string, string>).captureId, 'capture'));

  const upload = multer({
    storage: multer.diskStorage({ destination: m.store.tmpDir, filename: (_req, _file, cb) => cb(null, `upload-${randomUUID()}`) }),
    limits: { fileSize: m.maxUploadBytes, files: 1, fields: 10 },
    // browsers send a file name's UTF-8 bytes as they are; busboy would read them as latin1 ("StÃ¶rung")
    defParamCharset: 'utf8',
  }).single('file');
  // multer removes its partial file itself when it stops with an error
  const receiveFile: RequestHandler = (req, res, next) =>
    upload(req, res, (err: unknown) => {
      if (!err) return next();
      if (err instanceof multer.MulterError) {
        if (err.code === 'LIMIT_FILE_SIZE') return next(new HttpError(413, `The file is larger than the upload limit of ${megabytes(m.maxUploadBytes)}`));
        return next(badRequest(`The upload was refused: ${err.message}. Send one file in the multipart field "file"`));
      }
      next(multipartError(err) ?? err);
    });

  router.get('/rigs/:rigId/captures', guard.requireRigRole('viewer'), (_req, res) => {
    res.json(listCaptures(m, rigAccess(res).rigId));
  });

  router.post('/rigs/:rigId/captures', guard.requireRigRole('analyst'), receiveFile, async (req, res) => {
    const file = req.file;
    if (!file) throw badRequest('Some fields need attention', { file: 'Attach the capture file in the multipart field "file"' });
    res.status(201).json(await storeUpload(m, rigAccess(res).rigId, currentUser(req).id, file));
  });

  // a capture decoded in the browser: its frames, not its samples (shared/schemas/decoded-upload.ts)
  router.post('/rigs/:rigId/captures/decoded', guard.requireRigRole('analyst'), async (req, res) => {
    if (!req.is(DECODED_MEDIA_TYPE)) throw new HttpError(415, `Send the decoded capture as ${DECODED_MEDIA_TYPE}, one JSON object per line`);
    const limit = Math.min(m.maxUploadBytes, defaultMaxDecodedBytes());
    const declared = Number(req.headers['content-length']);
    if (Number.isFinite(declared) && declared > limit) throw new HttpError(413, `The decoded capture is larger than the limit of ${megabytes(limit)}`);
    res.status(201).json(await storeDecodedUpload(m, rigAccess(res).rigId, currentUser(req).id, req, limit));
  });

  router.get(base, guard.requireRigRole('viewer'), (req, res) => {
    res.json(toSummary(m, capture(req, rigAccess(res).rigId)));
  });

  router.delete(base, guard.requireRigRole('owner'), async (req, res) => {
    await deleteCapture(m, capture(req, rigAccess(res).rigId));
    res.status(204).end();
  });

  router.get(`${base}/detection`, guard.requireRigRole('viewer'), (req, res) => {
    const c = capture(req, rigAccess(res).rigId);
    requireSamples(c, 'detecting its channels');
    res.json(detectCapture(m, c));
  });

  router.put(`${base}/settings`, guard.requireRigRole('analyst'), (req, res) => {
    const c = capture(req, rigAccess(res).rigId);
    requireSamples(c, 'changing its channel roles');
    res.json(saveSettings(m, c, parseBody(captureSettingsSchema, req.body)));
  });

  router.post(`${base}/decode`, guard.requireRigRole('analyst'), (req, res) => {
    const c = capture(req, rigAccess(res).rigId);
    requireSamples(c, 'decoding it again');
    res.status(202).json(startDecode(m, c));
  });

  router.get(`${base}/job`, guard.requireRigRole('viewer'), (req, res) => {
    res.json(getJob(m, capture(req, rigAccess(res).rigId)));
  });

  router.post(`${base}/job/cancel`, guard.requireRigRole('analyst'), (req, res) => {
    res.json(cancelJob(m, capture(req, rigAccess(res).rigId)));
  });

  router.get(`${base}/overview`, guard.requireRigRole('viewer'), (req, res) => {
    res.json(captureOverview(m, m.timeline, capture(req, rigAccess(res).rigId)));
  });

  // the long reads run in the read pool and come back as their JSON text (server/db/read-pool.ts)
  router.get(`${base}/timeline`, guard.requireRigRole('viewer'), async (req, res) => {
    const { rigId } = rigAccess(res);
    const c = capture(req, rigId);
    const q = parseBody(timelineQuerySchema, req.query);
    sendJson(res, await m.reads.page({ rigId, captureId: c.id, q }));
  });

  router.get(`${base}/timeline/count`, guard.requireRigRole('viewer'), async (req, res) => {
    const c = capture(req, rigAccess(res).rigId);
    const q = parseBody(timelineQuerySchema, req.query);
    sendJson(res, await m.reads.count({ captureId: c.id, q }));
  });

  router.get(`${base}/timeline/at`, guard.requireRigRole('viewer'), (req, res) => {
    capture(req, rigAccess(res).rigId);
    const { t } = parseBody(atQuerySchema, req.query);
    res.json({ cursor: m.timeline.at(t) });
  });

  router.get(`${base}/frames/:frameId`, guard.requireRigRole('viewer'), (req, res) => {
    const { rigId } = rigAccess(res);
    const c = capture(req, rigId);
    const f = findFrame(m, c.currentJobId, parseId(req.params.frameId, 'frame'));
    res.json(frameDetail(m, m.timeline, rigId, f));
  });

  router.get(`${base}/frames/:frameId/damaged`, guard.requireRigRole('viewer'), (req, res) => {
    const c = capture(req, rigAccess(res).rigId);
    const f = findFrame(m, c.currentJobId, parseId(req.params.frameId, 'frame'));
    const { dir } = parseBody(damagedQuerySchema, req.query);
    // "none" is an answer, not an error: the timeline says so in place
    const id = m.timeline.damaged(f.jobId, f, dir);
    res.json({ id, t: id === null ? null : findFrame(m, f.jobId, id).t });
  });

  router.get(`${base}/frames/:frameId/waveform`, guard.requireRigRole('viewer'), async (req, res) => {
    const c = capture(req, rigAccess(res).rigId);
    const f = findFrame(m, c.currentJobId, parseId(req.params.frameId, 'frame'));
    requireSamples(c, 'drawing the waveform');
    const job = currentJob(m, c)!;
    const settings = parseSettings(job.settings)!;
    const { bits, points } = parseBody(waveformQuerySchema, req.query);
    res.json(await waveformWindow(m, c.sha256, settings, job.samplePeriod ?? 1, f, bits, points));
  });

  for (const format of ['csv', 'json'] as const) {
    router.get(`${base}/export.${format}`, guard.requireRigRole('viewer'), async (req, res) => {
      const { rigId } = rigAccess(res);
      const c = capture(req, rigId);
      const q = parseBody(timelineQuerySchema, req.query);
      await exportFrames(res, { rigId, jobId: c.currentJobId, q, fileName: c.name, format, next: (a) => m.reads.exportChunk(a) });
    });
  }

  return router;
}
