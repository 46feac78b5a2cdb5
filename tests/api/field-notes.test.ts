// Notes on a field of a field map: rig-level, checked against the map's latest version, the
// same authorship rules as capture notes, and listed under their layout in the Markdown write-up.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { FieldMapDetail, Note } from '../../shared/schemas';
import { CPM_ENVELOPE_DOCUMENT } from '../../shared/decoder/calls';
import { buildWorld, closeWorld, type World } from './captures-helpers';

let w: World;
let mapUrl: string;
const layouts = CPM_ENVELOPE_DOCUMENT.layouts;
const first = `${layouts[0].id}.${layouts[0].fields[0].id}`;
const last = layouts.at(-1)!;
const lastPath = `${last.id}.${last.fields.at(-1)!.id}`;

beforeAll(async () => {
  w = await buildWorld();
  const res = await w.analyst.post(`/api/rigs/${w.rigId}/field-maps`, { name: 'Field notes map', document: CPM_ENVELOPE_DOCUMENT });
  expect(res.status).toBe(201);
  mapUrl = `/api/rigs/${w.rigId}/field-maps/${(res.body as FieldMapDetail).id}`;
}, 120_000);

afterAll(async () => {
  await closeWorld(w);
});

describe('field notes', () => {
  it('lets a viewer pin a note to a field and every member read it by field', async () => {
    const res = await w.viewer.post(`${mapUrl}/notes`, { target: { kind: 'field', fieldPath: lastPath }, body: 'Seen zero on every bench run' });
    expect(res.status).toBe(201);
    expect(res.body as Note).toMatchObject({ captureId: null, target: { kind: 'field', fieldPath: lastPath, frameId: null }, author: { name: 'Vic Viewer' }, canEdit: true });
    // one instant for both stamps: a new note does not read as edited
    expect((res.body as Note).updatedAt).toBe((res.body as Note).createdAt);
    const seen = (await w.analyst.get(`${mapUrl}/notes?fieldPath=${encodeURIComponent(lastPath)}`)).body as Note[];
    expect(seen.map((n) => n.body)).toEqual(['Seen zero on every bench run']);
    expect(seen[0]).toMatchObject({ canEdit: false, canDelete: false });
    expect((await w.analyst.get(`${mapUrl}/notes?fieldPath=${encodeURIComponent(first)}`)).body).toEqual([]);
  });

  it('refuses a field path the latest version does not have, naming the part that is wrong', async () => {
    const noLayout = await w.viewer.post(`${mapUrl}/notes`, { target: { kind: 'field', fieldPath: 'no-such-layout.x' }, body: 'where?' });
    expect(noLayout.status).toBe(400);
    expect(noLayout.body.fields['target.fieldPath']).toBe('Version 1 has no layout "no-such-layout"');
    const noField = await w.viewer.post(`${mapUrl}/notes`, { target: { kind: 'field', fieldPath: `${layouts[0].id}.nothing` }, body: 'where?' });
    expect(noField.body.fields['target.fieldPath']).toBe(`Layout "${layouts[0].id}" of version 1 has no field "nothing"`);
    const flat = await w.viewer.post(`${mapUrl}/notes`, { target: { kind: 'field', fieldPath: layouts[0].id }, body: 'where?' });
    expect(flat.body.fields['target.fieldPath']).toContain('layout id.field id');
    const otherMap = await w.viewer.post(`${mapUrl}/notes`, { target: { kind: 'field', fieldMapId: 987654, fieldPath: first }, body: 'where?' });
    expect(otherMap.body.fields['target.fieldMapId']).toBeDefined();
    expect((await w.viewer.post(`/api/rigs/${w.rigId}/field-maps/987654/notes`, { target: { kind: 'field', fieldPath: first }, body: 'x' })).status).toBe(404);
  });

  it('lets only the author edit a field note, and the author or an owner delete it', async () => {
    const note = (await w.viewer.post(`${mapUrl}/notes`, { target: { kind: 'field', fieldPath: first }, body: 'draft' })).body as Note;
    const at = `${mapUrl}/notes/${note.id}`;
    expect((await w.owner.patch(at, { body: 'not mine' })).status).toBe(403);
    expect((await w.viewer.patch(at, { body: 'second draft' })).body).toMatchObject({ body: 'second draft' });
    expect((await w.analyst.delete(at)).status).toBe(403);
    expect((await w.owner.delete(at)).status).toBe(204);
    expect((await w.viewer.patch(at, { body: 'gone' })).status).toBe(404);
  });

  it('lists each note under its layout in the Markdown write-up, with author and date', async () => {
    await w.analyst.post(`${mapUrl}/notes`, { target: { kind: 'field', fieldPath: first }, body: 'Station address,\nnot the server' });
    const md = (await w.viewer.get(`${mapUrl}/export.md`)).text as string;
    const sections = md.split('\n### ');
    const firstSection = sections[1];
    const lastSection = sections.at(-1)!;
    const today = new Date().toISOString().slice(0, 10);
    expect(firstSection).toContain(`#### Notes`);
    expect(firstSection).toContain(`— Ann Analyst, ${today}: Station address, not the server`);
    expect(firstSection).not.toContain('Seen zero on every bench run');
    expect(lastSection).toContain(`— Vic Viewer, ${today}: Seen zero on every bench run`);
  });
});
