// Notes on a capture: who may write, edit and delete them, byte ranges checked against the frame,
// pins that survive a re-decode (link + seq), and search by text.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Note, TimelinePage, TimelineFrame } from '../../shared/schemas';
import { buildWorld, clockedVcd, closeWorld, put, upload, waitForJob, type World } from './captures-helpers';
import { addMember, makeUser, signedIn, type Client } from './helpers';

let w: World;
let url: string;
let frame: TimelineFrame;
let viewer2: Client;
let stranger: Client;

beforeAll(async () => {
  w = await buildWorld();
  const cap = clockedVcd(12);
  const up = await upload(w.analyst, w.rigId, cap.file, 'bench.vcd');
  expect(up.status).toBe(201);
  url = `/api/rigs/${w.rigId}/captures/${up.body.id}`;
  const settings = { format: 'vcd', clock: 'clk', links: [{ channel: 'tx' }, { channel: 'rx' }], encoding: 'nrz', edge: 'rising' };
  expect((await put(w.analyst, `${url}/settings`, settings)).status).toBe(200);
  expect((await w.analyst.post(`${url}/decode`)).status).toBe(202);
  expect(await waitForJob(w.viewer, url)).toMatchObject({ state: 'done' });
  const page = (await w.viewer.get(`${url}/timeline?events=0&link=rx&limit=10`)).body as TimelinePage;
  frame = page.rows.find((r): r is TimelineFrame => r.type === 'frame' && r.status === 'ok' && r.infoLength > 0)!;
  expect(frame).toBeDefined();
  addMember(w.app, w.rigId, await makeUser(w.app, 'viewer2@example.test', 'Val Viewer'), 'viewer');
  viewer2 = await signedIn(w.app, 'viewer2@example.test');
  await makeUser(w.app, 'stranger@example.test');
  stranger = await signedIn(w.app, 'stranger@example.test');
}, 120_000);

afterAll(async () => {
  await closeWorld(w);
});

const frameBytes = (f: TimelineFrame) => f.hex.length / 2 + 2; // address..info plus the 16-bit FCS

describe('notes', () => {
  it('lets a viewer pin a note to a byte range and shows its author and time to every member', async () => {
    const res = await w.viewer.post(`${url}/notes`, { target: { kind: 'bytes', frameId: frame.id, byteStart: 2, byteEnd: 3 }, body: '  Looks like the record number  ' });
    expect(res.status).toBe(201);
    const note = res.body as Note;
    expect(note).toMatchObject({
      body: 'Looks like the record number',
      target: { kind: 'bytes', link: 'rx', seq: frame.seq, byteStart: 2, byteEnd: 3, frameId: frame.id },
      author: { name: 'Vic Viewer' },
      canEdit: true,
      canDelete: true,
    });
    expect(Date.parse(note.createdAt)).toBeGreaterThan(Date.now() - 60_000);
    // one instant for both stamps: a new note does not read as edited
    expect(note.updatedAt).toBe(note.createdAt);
    const seen = (await w.analyst.get(`${url}/notes?frameId=${frame.id}`)).body as Note[];
    expect(seen.map((n) => n.id)).toContain(note.id);
    expect(seen.find((n) => n.id === note.id)).toMatchObject({ canEdit: false, canDelete: false });
    expect((await w.owner.get(`${url}/notes?frameId=${frame.id}`)).body.find((n: Note) => n.id === note.id)).toMatchObject({ canEdit: false, canDelete: true });
  });

  it('refuses a byte range outside the frame with a message on the offending field', async () => {
    const size = frameBytes(frame);
    const past = await w.analyst.post(`${url}/notes`, { target: { kind: 'bytes', frameId: frame.id, byteStart: 1, byteEnd: size }, body: 'too far' });
    expect(past.status).toBe(400);
    expect(past.body.fields['target.byteEnd']).toBe(`The frame has ${size} bytes (0–${size - 1})`);
    const start = await w.analyst.post(`${url}/notes`, { target: { kind: 'bytes', frameId: frame.id, byteStart: size + 4, byteEnd: size + 5 }, body: 'too far' });
    expect(start.body.fields['target.byteStart']).toBe(`The frame has ${size} bytes (0–${size - 1})`);
    const reversed = await w.analyst.post(`${url}/notes`, { target: { kind: 'bytes', frameId: frame.id, byteStart: 3, byteEnd: 1 }, body: 'backwards' });
    expect(reversed.status).toBe(400);
    expect(reversed.body.fields['target.byteEnd']).toBe('The last byte comes before the first');
    const negative = await w.analyst.post(`${url}/notes`, { target: { kind: 'bytes', frameId: frame.id, byteStart: -1, byteEnd: 1 }, body: 'negative' });
    expect(negative.body.fields['target.byteStart']).toBe('Byte offsets start at 0');
    const last = await w.analyst.post(`${url}/notes`, { target: { kind: 'bytes', frameId: frame.id, byteStart: size - 2, byteEnd: size - 1 }, body: 'the FCS octets' });
    expect(last.status).toBe(201);
  });

  it('refuses an empty or overlong body, an unknown frame and an unknown target kind', async () => {
    const empty = await w.analyst.post(`${url}/notes`, { target: { kind: 'capture' }, body: '   ' });
    expect(empty.body.fields.body).toBe('Write something in the note');
    const long = await w.analyst.post(`${url}/notes`, { target: { kind: 'capture' }, body: 'x'.repeat(4001) });
    expect(long.body.fields.body).toBe('A note holds at most 4000 characters');
    const unknown = await w.analyst.post(`${url}/notes`, { target: { kind: 'frame', frameId: 99999999 }, body: 'where?' });
    expect(unknown.status).toBe(404);
    const kind = await w.analyst.post(`${url}/notes`, { target: { kind: 'page' }, body: 'where?' });
    expect(kind.status).toBe(400);
    expect(kind.body.fields['target.kind']).toBeDefined();
  });

  it('lets only the author edit a note, and the author or an owner delete it', async () => {
    const note = (await w.viewer.post(`${url}/notes`, { target: { kind: 'frame', frameId: frame.id }, body: 'first draft' })).body as Note;
    const notes = `${url}/notes/${note.id}`;
    expect((await viewer2.patch(notes, { body: 'not mine' })).status).toBe(403);
    expect((await w.analyst.patch(notes, { body: 'not mine' })).status).toBe(403);
    const ownerEdit = await w.owner.patch(notes, { body: 'not mine either' });
    expect(ownerEdit.status).toBe(403);
    expect(ownerEdit.body.error).toBe('Only the author of a note can edit it');
    const edited = await w.viewer.patch(notes, { body: 'second draft' });
    expect(edited.status).toBe(200);
    expect(edited.body).toMatchObject({ body: 'second draft', target: { kind: 'frame', frameId: frame.id } });
    expect(Date.parse(edited.body.updatedAt)).toBeGreaterThanOrEqual(Date.parse(edited.body.createdAt));
    expect((await viewer2.delete(notes)).status).toBe(403);
    expect((await w.analyst.delete(notes)).status).toBe(403);
    expect((await stranger.delete(notes)).status).toBe(403);
    expect((await w.owner.delete(notes)).status).toBe(204);
    expect((await w.viewer.patch(notes, { body: 'gone' })).status).toBe(404);

    const own = (await w.analyst.post(`${url}/notes`, { target: { kind: 'capture' }, body: 'mine to remove' })).body as Note;
    expect((await w.analyst.delete(`${url}/notes/${own.id}`)).status).toBe(204);
    const left = (await w.viewer.get(`${url}/notes`)).body as Note[];
    expect(left.map((n) => n.id)).not.toContain(own.id);
    expect(left.map((n) => n.id)).not.toContain(note.id);
  });

  it('finds notes by text in their body, case-insensitive, with % taken literally', async () => {
    await w.analyst.post(`${url}/notes`, { target: { kind: 'capture' }, body: 'Warm board after 20 minutes' });
    await w.analyst.post(`${url}/notes`, { target: { kind: 'capture' }, body: 'Load at 100% on the server' });
    const warm = (await w.viewer.get(`${url}/notes?q=WARM%20board`)).body as Note[];
    expect(warm.map((n) => n.body)).toEqual(['Warm board after 20 minutes']);
    const percent = (await w.viewer.get(`${url}/notes?q=${encodeURIComponent('100%')}`)).body as Note[];
    expect(percent.map((n) => n.body)).toEqual(['Load at 100% on the server']);
    expect((await w.viewer.get(`${url}/notes?q=${encodeURIComponent('%')}`)).body).toHaveLength(1);
    expect((await w.viewer.get(`${url}/notes?q=nothing-like-this`)).body).toEqual([]);
  });

  it('filters by link and seq, and asks for both', async () => {
    const byPin = (await w.viewer.get(`${url}/notes?link=rx&seq=${frame.seq}`)).body as Note[];
    expect(byPin.length).toBeGreaterThan(0);
    expect(byPin.every((n) => n.target.link === 'rx' && n.target.seq === frame.seq)).toBe(true);
    const half = await w.viewer.get(`${url}/notes?link=rx`);
    expect(half.status).toBe(400);
    expect(half.body.fields.seq).toBeDefined();
  });

  it('keeps a frame note on its frame after a re-decode gives the frames new ids', async () => {
    const note = (await w.analyst.post(`${url}/notes`, { target: { kind: 'bytes', frameId: frame.id, byteStart: 0, byteEnd: 1 }, body: 'survives re-decode' })).body as Note;
    expect((await w.analyst.post(`${url}/decode`)).status).toBe(202);
    expect(await waitForJob(w.viewer, url)).toMatchObject({ state: 'done' });
    await w.app.jobs.idle();
    const page = (await w.viewer.get(`${url}/timeline?events=0&link=rx&limit=10`)).body as TimelinePage;
    const again = page.rows.find((r): r is TimelineFrame => r.type === 'frame' && r.seq === frame.seq)!;
    expect(again.id).not.toBe(frame.id);
    const onFrame = (await w.viewer.get(`${url}/notes?frameId=${again.id}`)).body as Note[];
    expect(onFrame.find((n) => n.id === note.id)?.target).toMatchObject({ frameId: again.id, link: 'rx', seq: frame.seq, byteStart: 0, byteEnd: 1 });
    expect((await w.viewer.get(`${url}/notes?frameId=${frame.id}`)).status).toBe(404);
  }, 120_000);

  it('counts the notes on each frame in the timeline rows, and leaves frames without notes unmarked', async () => {
    const page = (await w.viewer.get(`${url}/timeline?events=0&link=rx&limit=10`)).body as TimelinePage;
    const frames = page.rows.filter((r): r is TimelineFrame => r.type === 'frame');
    const pinned = (await w.viewer.get(`${url}/notes?link=rx&seq=${frame.seq}`)).body as Note[];
    expect(frames.find((f) => f.seq === frame.seq)?.notes).toBe(pinned.length);
    const other = frames.find((f) => f.seq !== frame.seq)!;
    expect(other.notes).toBeUndefined();
    await w.viewer.post(`${url}/notes`, { target: { kind: 'frame', frameId: other.id }, body: 'a second frame' });
    const after = (await w.viewer.get(`${url}/timeline?events=0&link=rx&limit=10`)).body as TimelinePage;
    expect(after.rows.find((r) => r.type === 'frame' && r.id === other.id)).toMatchObject({ notes: 1 });
  });

  it('finds frames from the timeline text search by the text of their notes', async () => {
    const page = (await w.viewer.get(`${url}/timeline?events=0&link=rx&limit=10`)).body as TimelinePage;
    const target = page.rows.filter((r): r is TimelineFrame => r.type === 'frame').at(-1)!;
    await w.viewer.post(`${url}/notes`, { target: { kind: 'frame', frameId: target.id }, body: 'Qzx striped burst, 50% worse on the long cable' });
    for (const text of ['QZX STRIPED', '50% worse', 'qz']) {
      const found = (await w.viewer.get(`${url}/timeline?events=0&text=${encodeURIComponent(text)}`)).body as TimelinePage;
      expect(found.rows.map((r) => r.id)).toEqual([target.id]);
    }
    const none = (await w.viewer.get(`${url}/timeline?events=0&text=${encodeURIComponent('qzx-absent')}`)).body as TimelinePage;
    expect(none.rows).toEqual([]);
  });

  it('answers 404 for a capture of another rig and keeps notes to their capture', async () => {
    const other = await w.analyst.get(`/api/rigs/${w.rigId}/captures/987654/notes`);
    expect(other.status).toBe(404);
    expect((await stranger.get(`${url}/notes`)).status).toBe(403);
  });
});
