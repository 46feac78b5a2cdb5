import fs from 'node:fs';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import type { FlaglineApp } from '../../server/index';
import { hashToken } from '../../server/auth/tokens';
import { invitations, notes, passwordResets, rigs, stations } from '../../server/db/schema';
import { clockedVcd, seedDecodedCapture, tempDataDir } from './captures-helpers';
import { Client, addMember, anonymous, makeUser, rigBody, signedIn, testApp } from './helpers';
import { decodedFileOf, manifestCaptures, samplesDir } from './decoded-helpers';
import { listRoutes } from './route-list';
import { seedCallLayer } from './calls-helpers';
import { CPM_ENVELOPE_DOCUMENT } from '../../shared/decoder/calls';

/**
 * Every API route, with the status each kind of caller gets. The callers:
 *   anon     no sign-in (but a session and a CSRF token, so the guard is what answers)
 *   viewer   viewer of rig A · analyst: analyst of rig A · owner: owner of rig A
 *   stranger owner of another rig B, not a member of rig A
 * Route parameters point into rig A. A route that exists but is missing here fails the first test.
 */
type Caller = 'anon' | 'viewer' | 'analyst' | 'stranger' | 'owner';
const CALLERS: Caller[] = ['anon', 'viewer', 'analyst', 'stranger', 'owner'];
type Row = [anon: number, viewer: number, analyst: number, stranger: number, owner: number];

const EVERYONE = (s: number): Row => [s, s, s, s, s];
const SIGNED_IN = (s: number): Row => [401, s, s, s, s];
const MEMBER = (s: number): Row => [401, s, s, 403, s];
const OWNER = (s: number): Row => [401, 403, 403, 403, s];
const ANALYST = (s: number): Row => [401, 403, s, 403, s];

const MATRIX: Record<string, Row> = {
  'GET /api/session': EVERYONE(200),
  'POST /api/session': EVERYONE(200),
  'DELETE /api/session': SIGNED_IN(200),
  'POST /api/password-resets': EVERYONE(202),
  'GET /api/password-resets/:token': EVERYONE(200),
  'POST /api/password-resets/:token': EVERYONE(200),
  'GET /api/invitations/:token': EVERYONE(200),
  'POST /api/invitations/:token/accept': EVERYONE(200),
  'GET /api/rigs': SIGNED_IN(200),
  'POST /api/rigs': SIGNED_IN(201),
  'GET /api/rigs/:rigId': MEMBER(200),
  'PATCH /api/rigs/:rigId': OWNER(200),
  'DELETE /api/rigs/:rigId': OWNER(204),
  'POST /api/rigs/:rigId/stations': OWNER(201),
  'PATCH /api/rigs/:rigId/stations/:stationId': OWNER(200),
  'DELETE /api/rigs/:rigId/stations/:stationId': OWNER(204),
  'GET /api/rigs/:rigId/members': MEMBER(200),
  // the target is another member; leaving the rig oneself is in rigs.test.ts
  'PATCH /api/rigs/:rigId/members/:userId': OWNER(200),
  'DELETE /api/rigs/:rigId/members/:userId': OWNER(204),
  'GET /api/rigs/:rigId/invitations': OWNER(200),
  'POST /api/rigs/:rigId/invitations': OWNER(201),
  'DELETE /api/rigs/:rigId/invitations/:invitationId': OWNER(204),
  // everyone signed in reads the mail addressed to them (mailbox.test.ts: and nobody else's)
  'GET /api/dev/mailbox': SIGNED_IN(200),
  'GET /api/rigs/:rigId/captures': MEMBER(200),
  'POST /api/rigs/:rigId/captures': ANALYST(201),
  'POST /api/rigs/:rigId/captures/decoded': ANALYST(201),
  'GET /api/rigs/:rigId/captures/:captureId': MEMBER(200),
  'DELETE /api/rigs/:rigId/captures/:captureId': OWNER(204),
  'GET /api/rigs/:rigId/captures/:captureId/detection': MEMBER(200),
  'GET /api/rigs/:rigId/captures/:captureId/discovery': MEMBER(200),
  'GET /api/rigs/:rigId/captures/:captureId/field-hints': MEMBER(200),
  'PUT /api/rigs/:rigId/captures/:captureId/settings': ANALYST(200),
  'POST /api/rigs/:rigId/captures/:captureId/decode': ANALYST(202),
  'GET /api/rigs/:rigId/captures/:captureId/job': MEMBER(200),
  // aimed at a second capture whose run waits in the queue
  'POST /api/rigs/:rigId/captures/:captureId/job/cancel': ANALYST(200),
  'GET /api/rigs/:rigId/captures/:captureId/overview': MEMBER(200),
  'GET /api/rigs/:rigId/captures/:captureId/timeline': MEMBER(200),
  'GET /api/rigs/:rigId/captures/:captureId/timeline/count': MEMBER(200),
  'GET /api/rigs/:rigId/captures/:captureId/timeline/at': MEMBER(200),
  'GET /api/rigs/:rigId/captures/:captureId/frames/:frameId': MEMBER(200),
  'GET /api/rigs/:rigId/captures/:captureId/frames/:frameId/damaged': MEMBER(200),
  'GET /api/rigs/:rigId/captures/:captureId/frames/:frameId/waveform': MEMBER(200),
  'GET /api/rigs/:rigId/captures/:captureId/export.csv': MEMBER(200),
  'GET /api/rigs/:rigId/captures/:captureId/export.json': MEMBER(200),
  'GET /api/rigs/:rigId/field-maps': MEMBER(200),
  'POST /api/rigs/:rigId/field-maps': ANALYST(201),
  'GET /api/rigs/:rigId/field-maps/preview-frames': MEMBER(200),
  'GET /api/rigs/:rigId/field-maps/:mapId': MEMBER(200),
  'PUT /api/rigs/:rigId/field-maps/:mapId': ANALYST(200),
  'GET /api/rigs/:rigId/field-maps/:mapId/export.md': MEMBER(200),
  'GET /api/rigs/:rigId/captures/:captureId/field-map': MEMBER(200),
  'PUT /api/rigs/:rigId/captures/:captureId/field-map': ANALYST(202),
  'GET /api/rigs/:rigId/captures/:captureId/faults': MEMBER(200),
  'GET /api/rigs/:rigId/captures/:captureId/timing/service': MEMBER(200),
  'GET /api/rigs/:rigId/captures/:captureId/timing/schedule': MEMBER(200),
  'GET /api/rigs/:rigId/captures/:captureId/timing/exchanges/:exchangeId': MEMBER(200),
  'GET /api/rigs/:rigId/captures/:captureId/exchanges': MEMBER(200),
  'GET /api/rigs/:rigId/captures/:captureId/exchanges/stats': MEMBER(200),
  'GET /api/rigs/:rigId/captures/:captureId/exchanges/export.csv': MEMBER(200),
  'GET /api/rigs/:rigId/captures/:captureId/exchanges/export.json': MEMBER(200),
  'GET /api/rigs/:rigId/captures/:captureId/files': MEMBER(200),
  'GET /api/rigs/:rigId/captures/:captureId/files/:fileId': MEMBER(200),
  'GET /api/rigs/:rigId/captures/:captureId/files/:fileId/download': MEMBER(200),
  'GET /api/rigs/:rigId/captures/:captureId/frames/:frameId/call': MEMBER(200),
  'GET /api/rigs/:rigId/compare': MEMBER(200),
  // viewers may comment: every member reads and writes notes
  'GET /api/rigs/:rigId/captures/:captureId/notes': MEMBER(200),
  'POST /api/rigs/:rigId/captures/:captureId/notes': MEMBER(201),
  // the world's note is the analyst's: only its author edits it; its author or an owner deletes it
  'PATCH /api/rigs/:rigId/captures/:captureId/notes/:noteId': [401, 403, 200, 403, 403],
  'DELETE /api/rigs/:rigId/captures/:captureId/notes/:noteId': [401, 403, 204, 403, 204],
  // notes on a field-map field: the same rules at rig level (the world's field note is the analyst's)
  'GET /api/rigs/:rigId/field-maps/:mapId/notes': MEMBER(200),
  'POST /api/rigs/:rigId/field-maps/:mapId/notes': MEMBER(201),
  'PATCH /api/rigs/:rigId/field-maps/:mapId/notes/:noteId': [401, 403, 200, 403, 403],
  'DELETE /api/rigs/:rigId/field-maps/:mapId/notes/:noteId': [401, 403, 204, 403, 204],
};

/** valid bodies, so a caller the guard lets through gets the route's success status */
const BODIES: Record<string, object> = {
  'POST /api/session': { email: 'extra@example.test', password: 'correct horse battery' },
  'POST /api/password-resets': { email: 'extra@example.test' },
  'POST /api/password-resets/:token': { password: 'a brand new password' },
  'POST /api/invitations/:token/accept': { name: 'Ivy Invitee', password: 'a brand new password' },
  'POST /api/rigs': rigBody('Another rig'),
  'PATCH /api/rigs/:rigId': { name: 'Renamed' },
  'POST /api/rigs/:rigId/stations': { address: 0x30, name: 'New desk', role: 'station' },
  'PATCH /api/rigs/:rigId/stations/:stationId': { name: 'Renamed desk' },
  'PATCH /api/rigs/:rigId/members/:userId': { role: 'analyst' },
  'POST /api/rigs/:rigId/invitations': { email: 'someone.new@example.test', role: 'viewer' },
  'PUT /api/rigs/:rigId/captures/:captureId/settings': { format: 'vcd', clock: 'clk', links: [{ channel: 'tx' }], encoding: 'nrz', edge: 'rising' },
  'POST /api/rigs/:rigId/field-maps': { name: 'My envelope', document: CPM_ENVELOPE_DOCUMENT },
  'PUT /api/rigs/:rigId/field-maps/:mapId': { document: CPM_ENVELOPE_DOCUMENT, baseVersion: 1 },
  // ids are filled in like path parameters (see fillPath)
  'PUT /api/rigs/:rigId/captures/:captureId/field-map': { mapId: ':mapId' },
  'POST /api/rigs/:rigId/captures/:captureId/notes': { target: { kind: 'capture' }, body: 'Cable swapped before this run' },
  'PATCH /api/rigs/:rigId/captures/:captureId/notes/:noteId': { body: 'Reworded' },
  'POST /api/rigs/:rigId/field-maps/:mapId/notes': { target: { kind: 'field', fieldPath: `${CPM_ENVELOPE_DOCUMENT.layouts[0].id}.${CPM_ENVELOPE_DOCUMENT.layouts[0].fields[0].id}` }, body: 'Counts from 0' },
  'PATCH /api/rigs/:rigId/field-maps/:mapId/notes/:noteId': { body: 'Reworded' },
};

/** query strings some routes need to succeed */
const QUERIES: Record<string, string> = {
  'GET /api/rigs/:rigId/captures/:captureId/timeline/at': '?t=0',
  'GET /api/rigs/:rigId/compare': '?a=:captureId&b=:captureId',
  'GET /api/rigs/:rigId/captures/:captureId/timing/schedule': '?from=0&to=1&width=400',
};

/** the upload is multipart, not JSON */
const UPLOADS: Record<string, () => Buffer> = {
  'POST /api/rigs/:rigId/captures': () => clockedVcd(3).file,
};

/** a capture decoded in the browser goes up as NDJSON */
const NDJSON_BODIES: Record<string, () => string> = {
  'POST /api/rigs/:rigId/captures/decoded': () => {
    const c = manifestCaptures().find((m) => m.file === 'wrenfield-registry-rxd.octets')!;
    return decodedFileOf(fs.readFileSync(path.join(samplesDir, c.file)), c.file, c.settings);
  },
};

const INVITE_TOKEN = 'role-matrix-invitation-token';
const RESET_TOKEN = 'role-matrix-reset-token';

interface World {
  app: FlaglineApp;
  params: Record<string, number | string>;
  /** the capture with a queued run, for the cancel route */
  busyCaptureId: number;
  cleanup(): void;
}

async function buildWorld(): Promise<World> {
  const data = tempDataDir();
  const app = await testApp({ dataDir: data.dir });
  const db = app.db.db;
  const ownerId = await makeUser(app, 'owner@example.test');
  const viewerId = await makeUser(app, 'viewer@example.test');
  const analystId = await makeUser(app, 'analyst@example.test');
  const strangerId = await makeUser(app, 'stranger@example.test');
  const extraId = await makeUser(app, 'extra@example.test');
  const rigA = db.insert(rigs).values({ name: 'Rig A', bitRate: 800000, encoding: 'nrzi', clockEdge: 'rising', bitOrder: 'lsb-first' }).returning().get().id;
  const rigB = db.insert(rigs).values({ name: 'Rig B', bitRate: 9600, encoding: 'nrz', clockEdge: 'falling', bitOrder: 'msb-first' }).returning().get().id;
  addMember(app, rigA, ownerId, 'owner');
  addMember(app, rigA, viewerId, 'viewer');
  addMember(app, rigA, analystId, 'analyst');
  addMember(app, rigA, extraId, 'viewer');
  addMember(app, rigB, strangerId, 'owner');
  const stationId = db.insert(stations).values({ rigId: rigA, address: 0x10, name: 'Server', role: 'server' }).returning().get().id;
  const hour = 3600_000;
  const invitationId = db
    .insert(invitations)
    .values({ rigId: rigA, email: 'invitee@example.test', role: 'viewer', tokenHash: hashToken(INVITE_TOKEN), invitedBy: ownerId, expiresAt: new Date(Date.now() + hour) })
    .returning()
    .get().id;
  db.insert(passwordResets).values({ userId: extraId, tokenHash: hashToken(RESET_TOKEN), expiresAt: new Date(Date.now() + hour) }).run();
  const { captureId, frameId, busyCaptureId } = seedDecodedCapture(app, rigA, data.dir, ownerId);
  const { mapId, fileId } = seedCallLayer(app, rigA, captureId, ownerId);
  const callRunId = app.db.sqlite.prepare('select current_run_id from capture_call_layers where capture_id = ?').pluck().get(captureId) as number;
  const exchangeId = Number(
    app.db.sqlite
      .prepare("insert into exchanges (run_id, capture_id, station, request_frame_id, retry_frame_ids, response_frame_ids, t_request, t_request_end, outcome, retries) values (?, ?, 33, ?, '[]', '[]', 0, 0.001, 'unanswered', 0)")
      .run(callRunId, captureId, frameId).lastInsertRowid,
  );
  const noteId = db.insert(notes).values({ rigId: rigA, captureId, target: 'capture', body: "The analyst's note", authorId: analystId }).returning().get().id;
  const layout = CPM_ENVELOPE_DOCUMENT.layouts[0];
  const fieldPath = `${layout.id}.${layout.fields[0].id}`;
  const fieldNoteId = db.insert(notes).values({ rigId: rigA, target: 'field', fieldMapId: mapId, fieldPath, body: "The analyst's field note", authorId: analystId }).returning().get().id;
  return { app, params: { rigId: rigA, stationId, userId: extraId, invitationId, captureId, frameId, mapId, fileId, noteId, fieldNoteId, fieldPath, exchangeId }, busyCaptureId, cleanup: data.cleanup };
}

function fillPath(route: string, params: World['params']): string {
  const token = route.includes('/invitations/:token') ? INVITE_TOKEN : RESET_TOKEN;
  return route.replace(/:(\w+)/g, (_, name: string) => String(name === 'token' ? token : params[name]));
}

/** a body value ':name' becomes the world's id of that name */
function fillBody(body: object | undefined, params: World['params']): object | undefined {
  if (!body) return body;
  return Object.fromEntries(Object.entries(body).map(([k, v]) => [k, typeof v === 'string' && /^:\w+$/.test(v) ? params[v.slice(1)] : v]));
}

async function callerClient(app: FlaglineApp, caller: Caller): Promise<Client> {
  return caller === 'anon' ? anonymous(app) : signedIn(app, `${caller}@example.test`);
}

const apps: FlaglineApp[] = [];
const cleanups: (() => void)[] = [];
afterAll(() => {
  apps.forEach((a) => a.close());
  cleanups.forEach((c) => c());
});

describe('role matrix', () => {
  it('lists every mounted API route, and only those', async () => {
    const app = await testApp();
    apps.push(app);
    const mounted = listRoutes(app.app).filter((r) => r.split(' ')[1].startsWith('/api'));
    expect(mounted).toEqual(Object.keys(MATRIX).sort());
  });

  for (const [key, expected] of Object.entries(MATRIX)) {
    const [method, route] = key.split(' ');
    it(`${key} answers ${CALLERS.map((c, i) => `${c} ${expected[i]}`).join(', ')}`, async () => {
      const got: Record<string, number> = {};
      for (const caller of CALLERS) {
        // a fresh world per caller: a successful DELETE must not change what the next caller sees
        const world = await buildWorld();
        apps.push(world.app);
        const client = await callerClient(world.app, caller);
        let params = key.endsWith('/job/cancel') ? { ...world.params, captureId: world.busyCaptureId } : world.params;
        if (key.includes('/field-maps/:mapId/notes/')) params = { ...params, noteId: world.params.fieldNoteId };
        const url = fillPath(route + (QUERIES[key] ?? ''), params);
        const res = UPLOADS[key]
          ? await client.agent.post(url).set('x-csrf-token', client.csrf).attach('file', UPLOADS[key](), 'matrix.vcd')
          : NDJSON_BODIES[key]
            ? await client.agent.post(url).set('x-csrf-token', client.csrf).set('content-type', 'application/x-ndjson').send(NDJSON_BODIES[key]())
            : await client.send(method, url, fillBody(BODIES[key], params));
        got[caller] = res.status;
        await world.app.jobs.idle();
        world.app.close();
        world.cleanup();
        apps.pop();
      }
      expect(got).toEqual(Object.fromEntries(CALLERS.map((c, i) => [c, expected[i]])));
    });
  }

  it('answers 404 to a signed-in caller for every rig route with an unknown rig id', async () => {
    const world = await buildWorld();
    apps.push(world.app);
    cleanups.push(world.cleanup);
    const owner = await signedIn(world.app, 'owner@example.test');
    for (const key of Object.keys(MATRIX).filter((k) => k.includes(':rigId'))) {
      const [method, route] = key.split(' ');
      const res = await owner.send(method, fillPath(route, { ...world.params, rigId: 987654 }), BODIES[key]);
      expect([key, res.status]).toEqual([key, 404]);
    }
  });
});

describe('route listing', () => {
  it('sees a route added after the app was built', async () => {
    const app = await testApp();
    apps.push(app);
    app.app.get('/api/not-in-the-matrix', (_req, res) => res.json({}));
    expect(listRoutes(app.app)).toContain('GET /api/not-in-the-matrix');
  });
});
