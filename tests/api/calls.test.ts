// The call layer over the demo captures: exchanges and recovered files as the encoder that made
// each sample recorded them in samples/manifest.json, downloads, the inspector's call decode,
// compare, and field maps (validation paths, concurrent saves, roles, re-running a capture's map).
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CPM_ENVELOPE_DOCUMENT } from '../../shared/decoder/calls';
import type {
  CaptureCallLayer,
  CaptureSummaryRow,
  CompareResult,
  ExchangePage,
  ExchangeStats,
  FieldMapDetail,
  FieldMapSummary,
  FrameCall,
  RecoveredFileDetail,
  RecoveredFileSummary,
  TimelineFrame,
  TimelinePage,
} from '../../shared/schemas';
import { openDb, type DbHandle } from '../../server/db/client';
import { createApp } from '../../server/index';
import { DEMO_PASSWORD } from '../../server/seed/demo';
import { samplesDir } from '../../server/seed/demo-captures';
import { createCallRun } from '../../server/runs/call-runs';
import { runCallStage } from '../../server/runs/call-stage';
import { loadMapVersion, type RunInputs } from '../../server/runs/inputs';
import { clearCallRunRows } from '../../server/runs/sweep';
import { tempDataDir, waitForJob } from './captures-helpers';
import { TEST_BCRYPT_COST, signedIn, type Client } from './helpers';

interface ExpectedFile {
  key: string;
  recordCount: number;
  missing: number[];
  sha256: string;
}
interface Entry {
  file: string;
  expected: { exchanges: { total: number; answered: number; retried: number; unanswered: number }; files: ExpectedFile[] };
}
const manifest = JSON.parse(fs.readFileSync(path.join(samplesDir(), 'manifest.json'), 'utf8')) as { captures: Entry[] };

const sha = (b: Buffer) => createHash('sha256').update(b).digest('hex');
/** binary bodies through supertest */
const binary = (res: NodeJS.ReadableStream, cb: (err: Error | null, body: unknown) => void) => {
  const chunks: Buffer[] = [];
  res.on('data', (c: Buffer) => chunks.push(c));
  res.on('end', () => cb(null, Buffer.concat(chunks)));
};

/** a call run's rows without their own ids: exchanges named by their place in the run */
function callRunRows(sqlite: DbHandle['sqlite'], runId: number) {
  const exchanges = sqlite.prepare('select * from exchanges where run_id = ? order by id').all(runId) as Record<string, unknown>[];
  const place = new Map(exchanges.map((e, i) => [e.id as number, i]));
  const named = (json: unknown) => (JSON.parse(String(json)) as number[]).map((id) => place.get(id));
  return {
    exchanges: exchanges.map(({ id: _id, run_id: _run, lock_conflicts: _locks, ...rest }) => rest),
    frames: (sqlite.prepare('select exchange_id, frame_id from exchange_frames where run_id = ? order by exchange_id, frame_id').all(runId) as { exchange_id: number; frame_id: number }[]).map(
      (r) => [place.get(r.exchange_id), r.frame_id],
    ),
    files: (sqlite.prepare('select * from recovered_files where run_id = ? order by id').all(runId) as Record<string, unknown>[]).map(
      ({ id: _id, run_id: _run, conflicts: _c, lock_conflicts: _l, size_exchange_id: size, exchange_ids: exchangeIds, ...rest }) => ({
        ...rest,
        size: size === null ? null : place.get(size as number),
        exchanges: named(exchangeIds),
      }),
    ),
  };
}

describe('call layer over the demo captures', () => {
  const env = tempDataDir();
  let handle: DbHandle;
  let app: Awaited<ReturnType<typeof createApp>>;
  let viewer: Client;
  let analyst: Client;
  let rigId = 0;
  const ids = new Map<string, number>();
  const url = (file: string) => `/api/rigs/${rigId}/captures/${ids.get(file)}`;

  beforeAll(async () => {
    handle = openDb(env.dbPath);
    app = await createApp({ db: handle, demo: true, bcryptCost: TEST_BCRYPT_COST, smtpUrl: '', dataDir: env.dir });
    viewer = await signedIn(app, 'viewer@demo.test', DEMO_PASSWORD);
    analyst = await signedIn(app, 'analyst@demo.test', DEMO_PASSWORD);
    rigId = (await viewer.get('/api/rigs').expect(200)).body[0].id;
    const list = (await viewer.get(`/api/rigs/${rigId}/captures`).expect(200)).body as CaptureSummaryRow[];
    for (const c of list) ids.set(c.name, c.id);
    for (const entry of manifest.captures) {
      const job = await waitForJob(viewer, url(entry.file), undefined, 120_000);
      expect(job.state, `${entry.file}: ${job.error}`).toBe('done');
    }
  }, 300_000);
  afterAll(async () => {
    await app.jobs.close();
    app.close();
    handle.close();
    env.cleanup();
  });

  it('pairs the exchanges of every sample as its manifest lists them, by outcome', async () => {
    for (const entry of manifest.captures) {
      const total = async (q: string) => ((await viewer.get(`${url(entry.file)}/exchanges?limit=1${q}`).expect(200)).body as ExchangePage).total;
      const got = { total: await total(''), answered: await total('&outcome=answered'), retried: await total('&outcome=retried'), unanswered: await total('&outcome=unanswered') };
      expect(got, entry.file).toEqual(entry.expected.exchanges);
    }
  });

  it('writes from the decoder\'s frames exactly what the call stage writes from the stored run', async () => {
    // the decode worker runs the call layer beside the decoder; a call-only run reads the stored frames back
    const sqlite = handle.sqlite;
    for (const entry of manifest.captures) {
      const captureId = ids.get(entry.file)!;
      const visible = sqlite
        .prepare('select c.current_job_id as jobId, l.current_run_id as runId, j.inputs, j.sample_period as period from captures c join capture_call_layers l on l.capture_id = c.id join decode_jobs j on j.id = c.current_job_id where c.id = ?')
        .get(captureId) as { jobId: number; runId: number; inputs: string; period: number };
      const inputs = JSON.parse(visible.inputs) as RunInputs;
      const runId = createCallRun(sqlite, captureId, visible.jobId, inputs, 'running');
      const { map } = loadMapVersion(sqlite, inputs.fieldMap.mapId, inputs.fieldMap.version);
      await runCallStage(sqlite, { captureId, decodeJobId: visible.jobId, runId, map, inputs, samplePeriod: visible.period });
      const inStream = callRunRows(sqlite, visible.runId);
      expect(inStream.exchanges, entry.file).toHaveLength(entry.expected.exchanges.total);
      expect(callRunRows(sqlite, runId), entry.file).toEqual(inStream);
      clearCallRunRows(sqlite, runId);
    }
  });

  it('recovers every file of every sample with its record count, missing records and contents', async () => {
    for (const entry of manifest.captures) {
      const files = (await viewer.get(`${url(entry.file)}/files`).expect(200)).body as RecoveredFileSummary[];
      const got = files
        .map((f) => ({
          key: f.kind === 'boot-image' ? `boot:${f.name}` : `${f.user}:${f.name}`,
          recordCount: f.recordCount,
          missing: f.missing.flatMap(([a, b]) => Array.from({ length: b - a + 1 }, (_, i) => a + i)),
          sha256: f.sha256,
        }))
        .sort((a, b) => a.key.localeCompare(b.key));
      expect(got, entry.file).toEqual(entry.expected.files);
    }
  });

  it('downloads the recovered boot program byte-identical to the image the encoder sent', async () => {
    const file = 'wrenfield-registry-boot.vcd';
    const boot = ((await viewer.get(`${url(file)}/files`).expect(200)).body as RecoveredFileSummary[]).find((f) => f.name === 'WRENBOOT.SYS')!;
    const want = manifest.captures.find((c) => c.file === file)!.expected.files.find((f) => f.key === 'boot:WRENBOOT.SYS')!;
    expect(boot.complete).toBe(true);
    const res = await viewer.agent.get(`${url(file)}/files/${boot.id}/download`).buffer(true).parse(binary as never).expect(200);
    expect(res.headers['content-type']).toBe('application/octet-stream');
    expect(res.headers['content-disposition']).toBe('attachment; filename="WRENBOOT.SYS"');
    expect((res.body as Buffer).length).toBe(8 * 128);
    expect(sha(res.body as Buffer)).toBe(want.sha256);
  });

  it('shows the records no exchange carried as missing, zero-filled in the download', async () => {
    const file = 'wrenfield-treasurer-update.raw';
    const accounts = ((await viewer.get(`${url(file)}/files`).expect(200)).body as RecoveredFileSummary[]).find((f) => f.name === 'ACCOUNTS.DAT')!;
    const detail = (await viewer.get(`${url(file)}/files/${accounts.id}`).expect(200)).body as RecoveredFileDetail;
    expect(detail.coverage).toEqual(['missing', 'missing', 'missing', 'missing', 'seen']);
    expect(detail.missing).toEqual([[0, 3]]);
    expect(detail.complete).toBe(false);
    // open, lock, read, write, unlock, close of the one file
    expect(detail.exchangeIds.length).toBeGreaterThanOrEqual(4);
    const res = await viewer.agent.get(`${url(file)}/files/${accounts.id}/download`).buffer(true).parse(binary as never).expect(200);
    const bytes = res.body as Buffer;
    expect(bytes.subarray(0, 4 * 128).every((b) => b === 0)).toBe(true);
    const byFile = (await viewer.get(`${url(file)}/exchanges?file=${accounts.id}`).expect(200)).body as ExchangePage;
    expect(byFile.rows.map((r) => r.id).sort()).toEqual([...detail.exchangeIds].sort());
    await viewer.get(`${url(file)}/files/999999`).expect(404);
  });

  it('lists exchanges with frame ids, times and round trips, slowest first on request', async () => {
    const file = 'wrenfield-session-clocked.raw';
    const page = (await viewer.get(`${url(file)}/exchanges?limit=10`).expect(200)).body as ExchangePage;
    expect(page.rows).toHaveLength(10);
    expect(page.total).toBe(38);
    for (let i = 1; i < page.rows.length; i++) expect(page.rows[i].tRequest).toBeGreaterThanOrEqual(page.rows[i - 1].tRequest);
    const first = page.rows[0];
    expect(first.requestFrameId).not.toBeNull();
    expect(first.station.name).not.toBeNull();
    // the round trip is response start minus the end of the answered send
    for (const r of page.rows.filter((x) => x.outcome !== 'unanswered')) expect(r.rttSeconds!).toBeCloseTo(r.tResponse! - r.tRequestEnd, 9);
    const next = (await viewer.get(`${url(file)}/exchanges?limit=10&cursor=${page.nextCursor}`).expect(200)).body as ExchangePage;
    expect(next.rows[0].id).not.toBe(first.id);
    const slow = (await viewer.get(`${url(file)}/exchanges?sort=rtt-desc&limit=50`).expect(200)).body as ExchangePage;
    const rtts = slow.rows.filter((r) => r.rttSeconds !== null).map((r) => r.rttSeconds!);
    expect(rtts).toEqual([...rtts].sort((a, b) => b - a));
    expect(slow.rows.at(-1)!.outcome).toBe('unanswered');
    const unanswered = (await viewer.get(`${url(file)}/exchanges?outcome=unanswered`).expect(200)).body as ExchangePage;
    expect(unanswered.rows).toHaveLength(1);
    expect(unanswered.rows[0].tResponse).toBeNull();
    const res = await viewer.get(`${url(file)}/exchanges?cursor=not-a-cursor`);
    expect(res.status).toBe(400);
  });

  it('marks timeline frames with their exchange: id, call, role and round trip, as the exchange list has them', async () => {
    const file = 'wrenfield-session-clocked.raw';
    const exchanges = ((await viewer.get(`${url(file)}/exchanges?limit=1000`).expect(200)).body as ExchangePage).rows;
    const expected = new Map<number, { exchangeId: number; role: string; callName: string | null; rttSeconds: number | null }>();
    for (const e of exchanges) {
      const base = { exchangeId: e.id, callName: e.call.name, rttSeconds: e.rttSeconds };
      if (e.requestFrameId !== null) expected.set(e.requestFrameId, { ...base, role: 'request' });
      for (const id of e.retryFrameIds) expected.set(id, { ...base, role: 'retry' });
      for (const id of e.responseFrameIds) expected.set(id, { ...base, role: 'response' });
      // a damaged answer the station answered with a retry is marked as that exchange's
      for (const id of e.damagedResponseFrameIds ?? []) expected.set(id, { ...base, role: 'damaged-response' });
    }
    const page = (await viewer.get(`${url(file)}/timeline?limit=1000&events=0`).expect(200)).body as TimelinePage;
    const frames = page.rows.filter((r): r is TimelineFrame => r.type === 'frame');
    const marked = frames.filter((f) => f.call);
    expect(marked.length).toBeGreaterThan(10);
    expect(marked.some((f) => f.call!.role === 'response')).toBe(true);
    for (const f of frames) {
      const want = expected.get(f.id);
      if (!want) expect(f.call).toBeUndefined();
      else expect(f.call).toMatchObject(want);
    }
  });

  it('exports the filtered exchanges as CSV and JSON, every row in time order', async () => {
    const file = 'wrenfield-session-clocked.raw';
    const json = await viewer.get(`${url(file)}/exchanges/export.json?station=34`).expect(200);
    expect(json.headers['content-disposition']).toBe('attachment; filename="wrenfield-session-clocked-exchanges.json"');
    const rows = JSON.parse(json.text) as ExchangePage['rows'];
    const page = (await viewer.get(`${url(file)}/exchanges?station=34&limit=1000`).expect(200)).body as ExchangePage;
    expect(rows).toEqual(page.rows);
    expect(rows.length).toBeGreaterThan(0);
    const csv = await viewer.get(`${url(file)}/exchanges/export.csv`).expect(200);
    const lines = csv.text.trim().split('\n');
    expect(lines[0].split(',').slice(0, 5)).toEqual(['id', 'station', 'stationName', 'callCode', 'callName']);
    expect(lines).toHaveLength(38 + 1);
  });

  it('gives per-station round-trip statistics and a histogram of every answered exchange', async () => {
    const file = 'wrenfield-session-clocked.raw';
    const stats = (await viewer.get(`${url(file)}/exchanges/stats`).expect(200)).body as ExchangeStats;
    expect(stats.stations.map((s) => s.address)).toEqual([0x21, 0x22, 0x23]);
    const sum = (k: 'count' | 'answered' | 'retried' | 'unanswered') => stats.stations.reduce((n, s) => n + s[k], 0);
    expect({ total: sum('count'), answered: sum('answered'), retried: sum('retried'), unanswered: sum('unanswered') }).toEqual({
      total: 38,
      answered: 35,
      retried: 2,
      unanswered: 1,
    });
    for (const s of stats.stations) {
      expect(s.rtt!.min).toBeLessThanOrEqual(s.rtt!.median);
      expect(s.rtt!.median).toBeLessThanOrEqual(s.rtt!.p95);
      expect(s.rtt!.p95).toBeLessThanOrEqual(s.rtt!.max);
    }
    expect(stats.histogram.counts.reduce((a, b) => a + b, 0)).toBe(37);
    // the capture has each station's RTS line
    expect(stats.stations.some((s) => s.serviceDelay !== null)).toBe(true);
  });

  it('decodes the call of a request frame with field spans counted from the address octet', async () => {
    const file = 'wrenfield-registry-boot.vcd';
    const ex = ((await viewer.get(`${url(file)}/exchanges?limit=1`).expect(200)).body as ExchangePage).rows[0];
    const fc = (await viewer.get(`${url(file)}/frames/${ex.requestFrameId}/call`).expect(200)).body as FrameCall;
    expect(fc.exchangeId).toBe(ex.id);
    // the exchange comes whole, as the exchange list gives it, so the inspector can link its other frames
    expect(fc.exchange).toEqual(ex);
    expect(fc.call!.direction).toBe('request');
    expect(fc.call!.callCode).toBe(ex.call.code);
    // address and control come first (modulo-8 control: one octet each)
    expect(fc.call!.infoOffset).toBe(2);
    expect(fc.call!.fields[0].frameOffset).toBe(2);
    expect(fc.call!.fields.find((f) => f.role === 'tag')!.value).toBe(ex.tag);
  });

  it('compares the original and the replacement server: answered differently, slower', async () => {
    const a = ids.get('wrenfield-session-clocked.raw');
    const b = ids.get('wrenfield-session-replacement.raw');
    const cmp = (await viewer.get(`/api/rigs/${rigId}/compare?a=${a}&b=${b}`).expect(200)).body as CompareResult;
    expect(cmp.a.name).toBe('wrenfield-session-clocked.raw');
    // the replacement hides system files from directory searches: one search is answered differently
    expect(cmp.summary.answeredDifferently).toBeGreaterThanOrEqual(1);
    expect(cmp.rows.some((r) => r.kind === 'answered-differently' && (r.call.name ?? '').toLowerCase().includes('search'))).toBe(true);
    expect(cmp.summary.slower).toBeGreaterThanOrEqual(1);
    expect(cmp.summary.meanRttB!).toBeGreaterThan(cmp.summary.meanRttA!);
    const slower = (await viewer.get(`/api/rigs/${rigId}/compare?a=${a}&b=${b}&kind=slower`).expect(200)).body as CompareResult;
    expect(slower.rows.every((r) => r.kind === 'slower' && r.rttDeltaSeconds! > 0)).toBe(true);
    await viewer.get(`/api/rigs/${rigId}/compare?a=${a}&b=999999`).expect(404);
  });

  it('lists the built-in map on the rig, read-only', async () => {
    const maps = (await viewer.get(`/api/rigs/${rigId}/field-maps`).expect(200)).body as FieldMapSummary[];
    const builtIn = maps.find((x) => x.builtIn)!;
    expect(builtIn.name).toBe('CP/M call envelope');
    const detail = (await viewer.get(`/api/rigs/${rigId}/field-maps/${builtIn.id}`).expect(200)).body as FieldMapDetail;
    expect(detail.document.layouts.length).toBe(CPM_ENVELOPE_DOCUMENT.layouts.length);
    const res = await analyst.send('PUT', `/api/rigs/${rigId}/field-maps/${builtIn.id}`, { document: detail.document, baseVersion: detail.version });
    expect(res.status).toBe(409);
    const md = await viewer.get(`/api/rigs/${rigId}/field-maps/${builtIn.id}/export.md`).expect(200);
    expect(md.text).toContain('# CP/M call envelope');
  });

  it('refuses a map that does not validate, naming the path of the offending field', async () => {
    const doc = structuredClone(CPM_ENVELOPE_DOCUMENT) as { layouts: { fields: Record<string, unknown>[] }[] };
    const at = doc.layouts[0].fields.findIndex((f) => f.type === 'u8');
    doc.layouts[0].fields[at].length = 2;
    const res = await analyst.send('POST', `/api/rigs/${rigId}/field-maps`, { name: 'Broken', document: doc });
    expect(res.status).toBe(400);
    expect(Object.keys(res.body.fields)).toContain(`document.layouts[0].fields[${at}].length`);
    expect(res.body.error).toContain(`layouts[0].fields[${at}].length`);
    const none = await analyst.send('POST', `/api/rigs/${rigId}/field-maps`, { name: 'Neither' });
    expect(none.status).toBe(400);
  });

  it('saves versions and refuses a save based on a version someone else replaced', async () => {
    const builtIn = ((await viewer.get(`/api/rigs/${rigId}/field-maps`).expect(200)).body as FieldMapSummary[]).find((x) => x.builtIn)!;
    const copy = (await analyst.send('POST', `/api/rigs/${rigId}/field-maps`, { name: 'Vestry envelope', copyOf: builtIn.id }).expect(201)).body as FieldMapDetail;
    expect(copy.version).toBe(1);
    expect(copy.builtIn).toBe(false);
    const mine = { ...copy.document, description: 'first edit' };
    const saved = (await analyst.send('PUT', `/api/rigs/${rigId}/field-maps/${copy.id}`, { document: mine, baseVersion: 1 }).expect(200)).body as FieldMapDetail;
    expect(saved.version).toBe(2);
    expect(saved.versions.map((v) => v.version)).toEqual([2, 1]);
    const stale = await analyst.send('PUT', `/api/rigs/${rigId}/field-maps/${copy.id}`, { document: { ...copy.document, description: 'late edit' }, baseVersion: 1 });
    expect(stale.status).toBe(409);
    expect(stale.body.error).toContain('saved version 2');
    const v1 = (await viewer.get(`/api/rigs/${rigId}/field-maps/${copy.id}?version=1`).expect(200)).body as FieldMapDetail;
    expect(v1.document.description).not.toBe('first edit');
  });

  it('accepts a map document larger than an ordinary form body', async () => {
    const doc = structuredClone(CPM_ENVELOPE_DOCUMENT) as { layouts: { id: string }[] };
    doc.layouts = [...doc.layouts, ...doc.layouts.map((l) => ({ ...l, id: `${l.id}-alt` })), ...doc.layouts.map((l) => ({ ...l, id: `${l.id}-b` }))];
    expect(JSON.stringify(doc).length).toBeGreaterThan(100 * 1024);
    const made = (await analyst.send('POST', `/api/rigs/${rigId}/field-maps`, { name: 'Doubled', document: doc }).expect(201)).body as FieldMapDetail;
    expect(made.document.layouts).toHaveLength(doc.layouts.length);
  });

  it('lets only analysts and owners change maps', async () => {
    const builtIn = ((await viewer.get(`/api/rigs/${rigId}/field-maps`).expect(200)).body as FieldMapSummary[]).find((x) => x.builtIn)!;
    expect((await viewer.send('POST', `/api/rigs/${rigId}/field-maps`, { name: 'Viewer copy', copyOf: builtIn.id })).status).toBe(403);
    const file = 'wrenfield-registry-boot.vcd';
    expect((await viewer.send('PUT', `${url(file)}/field-map`, { mapId: builtIn.id })).status).toBe(403);
  });

  it('re-runs the call layer when a capture gets another map, keeping the old results until the new run is done', async () => {
    const file = 'wrenfield-registry-boot.vcd';
    const builtIn = ((await viewer.get(`/api/rigs/${rigId}/field-maps`).expect(200)).body as FieldMapSummary[]).find((x) => x.builtIn)!;
    const doc = structuredClone(CPM_ENVELOPE_DOCUMENT) as { calls: { code: number; name: string }[] };
    const boot = doc.calls.find((c) => c.code === 0x70)!;
    boot.name = 'Load image record';
    const map = (await analyst.send('POST', `/api/rigs/${rigId}/field-maps`, { name: 'Renamed boot call', document: doc }).expect(201)).body as FieldMapDetail;
    const before = (await viewer.get(`${url(file)}/field-map`).expect(200)).body as CaptureCallLayer;
    expect(before.mapId).toBe(builtIn.id);
    const oldRows = ((await viewer.get(`${url(file)}/exchanges`).expect(200)).body as ExchangePage).rows;
    const chosen = (await analyst.send('PUT', `${url(file)}/field-map`, { mapId: map.id }).expect(202)).body as CaptureCallLayer;
    expect(chosen.mapId).toBe(map.id);
    // until the run completes the previous run's rows stay visible
    expect(chosen.current!.runId).toBe(before.current!.runId);
    await app.calls.idle();
    const after = (await viewer.get(`${url(file)}/field-map`).expect(200)).body as CaptureCallLayer;
    expect(after.current!.mapId).toBe(map.id);
    expect(after.pending).toBeNull();
    const rows = ((await viewer.get(`${url(file)}/exchanges`).expect(200)).body as ExchangePage).rows;
    expect(rows).toHaveLength(oldRows.length);
    expect(rows.filter((r) => r.call.code === 0x70).every((r) => r.call.name === 'Load image record')).toBe(true);
    expect(rows[0].id).not.toBe(oldRows[0].id);
    const files = (await viewer.get(`${url(file)}/files`).expect(200)).body as RecoveredFileSummary[];
    expect(files.map((f) => f.name)).toEqual(['WRENBOOT.SYS']);
    // the call run has its own snapshot: the chosen map's version and the rig's timeout when it was created
    const inputs = JSON.parse(app.db.sqlite.prepare('select inputs from call_runs where id = ?').pluck().get(after.current!.runId) as string);
    expect(inputs).toMatchObject({ fieldMap: { mapId: map.id, version: 1 }, answerTimeoutSeconds: 0.5 });
    expect(inputs.capture.links.length).toBeGreaterThan(0);
    const timeline = (await viewer.get(`${url(file)}/timeline?limit=1000&events=0`).expect(200)).body as TimelinePage;
    const bootMarks = timeline.rows.filter((r): r is TimelineFrame => r.type === 'frame' && r.call?.callName === 'Load image record');
    expect(bootMarks.length).toBeGreaterThan(0);
    expect(bootMarks.every((f) => rows.some((r) => r.id === f.call!.exchangeId))).toBe(true);
    await app.jobs.idle();
    const leftovers = app.db.sqlite.prepare('select count(*) from exchanges where run_id = ?').pluck().get(before.current!.runId);
    expect(leftovers).toBe(0);
    expect((await analyst.send('PUT', `${url(file)}/field-map`, { mapId: 999999 })).status).toBe(404);
  });

  it('decodes what it can of a map whose fields run past the frame, marking the rest, without failing the run', async () => {
    const file = 'wrenfield-registry-boot.vcd';
    const doc = structuredClone(CPM_ENVELOPE_DOCUMENT) as { layouts: { when?: { calls?: number[]; direction?: string }; fields: Record<string, unknown>[] }[] };
    const bootResponse = doc.layouts.find((l) => l.when?.calls?.includes(0x70) && l.when.direction === 'response')!;
    bootResponse.fields.push({ id: 'trailer', type: 'bytes', length: 64 });
    const map = (await analyst.send('POST', `/api/rigs/${rigId}/field-maps`, { name: 'Too long', document: doc }).expect(201)).body as FieldMapDetail;
    await analyst.send('PUT', `${url(file)}/field-map`, { mapId: map.id }).expect(202);
    await app.calls.idle();
    const layer = (await viewer.get(`${url(file)}/field-map`).expect(200)).body as CaptureCallLayer;
    expect(layer.current!.mapId).toBe(map.id);
    const boots = ((await viewer.get(`${url(file)}/exchanges?call=112`).expect(200)).body as ExchangePage).rows;
    expect(boots.length).toBeGreaterThan(0);
    const fc = (await viewer.get(`${url(file)}/frames/${boots[0].responseFrameIds[0]}/call`).expect(200)).body as FrameCall;
    expect(fc.call!.truncated).toBe(true);
    expect(fc.call!.fields.find((f) => f.id === 'trailer')!.truncated).toBe(true);
    expect(fc.call!.fields.find((f) => f.id === 'record')!.truncated).toBe(false);
    expect(fc.call!.problems.join(' ')).toContain('trailer');
    // the record before the overlong field still counts
    const files = (await viewer.get(`${url(file)}/files`).expect(200)).body as RecoveredFileSummary[];
    expect(files.find((f) => f.name === 'WRENBOOT.SYS')!.complete).toBe(true);
  });

  it('removes a capture’s exchanges and recovered files with the capture', async () => {
    const owner = await signedIn(app, 'owner@demo.test', DEMO_PASSWORD);
    const file = 'wrenfield-choir-print.csv';
    const id = ids.get(file)!;
    expect(((await viewer.get(`${url(file)}/exchanges?limit=1`).expect(200)).body as ExchangePage).total).toBeGreaterThan(0);
    await owner.send('DELETE', url(file)).expect(204);
    await app.jobs.idle();
    const left = (table: string) => app.db.sqlite.prepare(`select count(*) from ${table} where capture_id = ?`).pluck().get(id);
    expect([left('exchanges'), left('recovered_files'), left('call_runs')]).toEqual([0, 0, 0]);
  });
});
