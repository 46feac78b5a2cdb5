import { Router, type Request, type Response } from 'express';
import { fieldNoteInputSchema, fieldNoteQuerySchema, noteInputSchema, notePatchSchema, noteQuerySchema } from '../../shared/schemas';
import { currentUser, rigAccess, type Guard } from '../auth/guard';
import { parseBody, parseId } from '../http/errors';
import type { CaptureModule } from '../services/captures/module';
import { findCapture } from '../services/captures/rows';
import { createFieldNote, deleteFieldNote, listFieldNotes, updateFieldNote } from '../services/field-notes';
import { createNote, deleteNote, listNotes, updateNote, type NoteCaller } from '../services/notes';

/** Notes on a capture: any member reads and writes them (viewers comment); authorship rules live in the service. */
export function noteRoutes(m: CaptureModule, guard: Guard): Router {
  const router = Router();
  const base = '/rigs/:rigId/captures/:captureId/notes';
  const capture = (req: Request, res: Response) => findCapture(m, rigAccess(res).rigId, parseId(req.params.captureId, 'capture'));
  const caller = (req: Request, res: Response): NoteCaller => ({ userId: currentUser(req).id, role: rigAccess(res).role });
  const noteId = (req: Request) => parseId(req.params.noteId, 'note');

  router.get(base, guard.requireRigRole('viewer'), (req, res) => {
    res.json(listNotes(m, capture(req, res), parseBody(noteQuerySchema, req.query), caller(req, res)));
  });

  router.post(base, guard.requireRigRole('viewer'), (req, res) => {
    const c = capture(req, res);
    res.status(201).json(createNote(m, c, parseBody(noteInputSchema, req.body), caller(req, res)));
  });

  router.patch(`${base}/:noteId`, guard.requireRigRole('viewer'), (req, res) => {
    const c = capture(req, res);
    res.json(updateNote(m, c, noteId(req), parseBody(notePatchSchema, req.body), caller(req, res)));
  });

  router.delete(`${base}/:noteId`, guard.requireRigRole('viewer'), (req, res) => {
    deleteNote(m, capture(req, res), noteId(req), caller(req, res));
    res.status(204).end();
  });

  // notes on a field of a field map belong to the rig; the same authorship rules apply
  const fieldBase = '/rigs/:rigId/field-maps/:mapId/notes';
  const mapId = (req: Request) => parseId(req.params.mapId, 'field map');
  const rigId = (res: Response) => rigAccess(res).rigId;

  router.get(fieldBase, guard.requireRigRole('viewer'), (req, res) => {
    res.json(listFieldNotes(m, rigId(res), mapId(req), parseBody(fieldNoteQuerySchema, req.query), caller(req, res)));
  });

  router.post(fieldBase, guard.requireRigRole('viewer'), (req, res) => {
    res.status(201).json(createFieldNote(m, rigId(res), mapId(req), parseBody(fieldNoteInputSchema, req.body), caller(req, res)));
  });

  router.patch(`${fieldBase}/:noteId`, guard.requireRigRole('viewer'), (req, res) => {
    res.json(updateFieldNote(m, rigId(res), mapId(req), noteId(req), parseBody(notePatchSchema, req.body), caller(req, res)));
  });

  router.delete(`${fieldBase}/:noteId`, guard.requireRigRole('viewer'), (req, res) => {
    deleteFieldNote(m, rigId(res), mapId(req), noteId(req), caller(req, res));
    res.status(204).end();
  });

  return router;
}
