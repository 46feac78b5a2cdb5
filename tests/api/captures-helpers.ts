import { createHash } from 'node:crypto';
import fs from 'node:fs';
import { expect } from 'vitest';
import os from 'node:os';
import path from 'node:path';
import { encodeLineBits, type FrameFaults, type LineItem, renderWaveform, type HandshakeLine, rawChunks, vcdChunks } from '../../shared/decoder/encode';
import { type FrameStatus, createDecoder } from '../../shared/decoder';
import { captureSettingsSchema, type DecodeJob } from '../../shared/schemas';
import { decoderOptions } from '../../shared/decoder-options';
import { RunWriter } from '../../server/runs/run-writer';
import { indexSearch } from '../../server/runs/search-index';
import { openDb, type DbHandle } from '../../server/db/client';
import { rigs, stations } from '../../server/db/schema';
import type { FlaglineApp } from '../../server/index';
import { addMember, makeUser, signedIn, testApp, type Client } from './helpers';

/** What the encoder put on one link, to check the decoded frames against. */
export interface SentFrame {
  link: string;
  bytes: Uint8Array;
  status: FrameStatus;
  flipped: number | null;
  kind: 'I' | 'S' | 'U';
  text: string;
}

export interface TestCapture {
  file: Buffer;
  sent: SentFrame[];
  links: string[];
  samplePeriodSeconds: number;
}

const ascii = (s: string) => Array.from(s, (c) => c.charCodeAt(0));

/**
 * Traffic of one link: I frames carrying "FILE<nnnn>.DAT" requests, every 5th an RR, every 9th
 * a UI; every 7th frame has one flipped bit (bad FCS), every 11th three residue bits. Frame 13
 * of each link carries the bytes de ad be ef for the hex search.
 */
export function linkTraffic(link: string, address: number, count: number, offset = 0): { items: LineItem[]; sent: SentFrame[] } {
  const items: LineItem[] = [{ kind: 'flags', count: 3 }];
  const sent: SentFrame[] = [];
  for (let k = 0; k < count; k++) {
    let bytes: number[];
    let kind: SentFrame['kind'];
    let text = '';
    if (k % 5 === 4) {
      kind = 'S';
      bytes = [address, 0x01 | ((k & 7) << 5)];
    } else if (k % 9 === 8) {
      kind = 'U';
      text = `NOTE ${link} ${k}`;
      bytes = [address, 0x03, ...ascii(text)];
    } else {
      kind = 'I';
      text = `FILE${String(k + offset).padStart(4, '0')}.DAT`;
      bytes = [address, ((k & 7) << 1) | (((k + 3) & 7) << 5), 0x0f, ...ascii(text), ...(k === 13 ? [0xde, 0xad, 0xbe, 0xef] : [])];
    }
    let faults: FrameFaults | undefined;
    let status: FrameStatus = 'ok';
    let flipped: number | null = null;
    if (k % 7 === 6) {
      flipped = 8 * 2 + ((k * 5) % 8); // a bit of the first information (or FCS) octet
      faults = { flipBits: [flipped] };
      status = 'bad-fcs';
    } else if (k % 11 === 10) {
      faults = { residueBits: 3 };
      status = 'residue';
    }
    items.push({ kind: 'frame', bytes: Uint8Array.from(bytes), faults });
    items.push({ kind: 'flags', count: 2 + (k % 3) });
    sent.push({ link, bytes: Uint8Array.from(bytes), status, flipped, kind, text });
  }
  return { items, sent };
}

function collectChunks(chunks: Iterable<Uint8Array>): Buffer {
  return Buffer.concat(Array.from(chunks, (c) => Buffer.from(c)));
}

/** A clocked VCD: clock "clk", data "tx" (station 0x21) and "rx" (server 0x10), an RTS line that rises before the first frame. */
export function clockedVcd(framesPerLink = 60, opts: { timescale?: string } = {}): TestCapture {
  const a = linkTraffic('tx', 0x21, framesPerLink);
  const b = linkTraffic('rx', 0x10, framesPerLink, 5000);
  const ea = encodeLineBits(a.items);
  const eb = encodeLineBits(b.items);
  const rts: HandshakeLine = { name: 'rts', initial: 0, edges: [{ bit: 4, level: 1 }, { bit: ea.bits.length - 4, level: 0 }] };
  const w = renderWaveform({
    links: [
      { name: 'tx', bits: ea.bits },
      { name: 'rx', bits: eb.bits },
    ],
    samplesPerBit: 6,
    samplePeriodSeconds: 1e-7,
    encoding: 'nrz',
    clock: { name: 'clk', edge: 'rising' },
    handshake: [rts],
  });
  return { file: collectChunks(vcdChunks(w, { timescale: opts.timescale ?? '1 ns' })), sent: [...a.sent, ...b.sent], links: ['tx', 'rx'], samplePeriodSeconds: 1e-7 };
}

/** Raw 1-byte samples without a clock (bit 0 "tx", bit 1 "rx"), NRZI, 8 samples per bit at 8 MHz. */
export function recoveredRaw(framesPerLink = 60): TestCapture {
  const a = linkTraffic('tx', 0x21, framesPerLink);
  const b = linkTraffic('rx', 0x10, framesPerLink, 5000);
  const w = renderWaveform({
    links: [
      { name: 'tx', bits: encodeLineBits(a.items).bits },
      { name: 'rx', bits: encodeLineBits(b.items).bits },
    ],
    samplesPerBit: 8,
    samplePeriodSeconds: 1 / 8e6,
    encoding: 'nrzi',
  });
  return { file: collectChunks(rawChunks(w)), sent: [...a.sent, ...b.sent], links: ['tx', 'rx'], samplePeriodSeconds: 1 / 8e6 };
}

export function tempDataDir(): { dir: string; dbPath: string; cleanup(): void } {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'flagline-captures-'));
  return { dir, dbPath: path.join(dir, 'test.db'), cleanup: () => fs.rmSync(dir, { recursive: true, force: true }) };
}

export interface World {
  app: FlaglineApp;
  handle: DbHandle;
  env: ReturnType<typeof tempDataDir>;
  rigId: number;
  owner: Client;
  analyst: Client;
  viewer: Client;
}

export async function buildWorld(env = tempDataDir(), maxUploadBytes?: number): Promise<World> {
  const handle = openDb(env.dbPath);
  const app = await testApp({ db: handle, dataDir: env.dir, maxUploadBytes });
  const ownerId = await makeUser(app, 'owner@example.test', 'Olive Owner');
  const analystId = await makeUser(app, 'analyst@example.test', 'Ann Analyst');
  const viewerId = await makeUser(app, 'viewer@example.test', 'Vic Viewer');
  const rigId = app.db.db.insert(rigs).values({ name: 'Bench', bitRate: 1_666_667, encoding: 'nrz', clockEdge: 'rising', bitOrder: 'lsb-first' }).returning().get().id;
  addMember(app, rigId, ownerId, 'owner');
  addMember(app, rigId, analystId, 'analyst');
  addMember(app, rigId, viewerId, 'viewer');
  app.db.db.insert(stations).values({ rigId, address: 0x21, name: 'Desk A', role: 'station' }).run();
  app.db.db.insert(stations).values({ rigId, address: 0x10, name: 'File server', role: 'server' }).run();
  return {
    app,
    handle,
    env,
    rigId,
    owner: await signedIn(app, 'owner@example.test'),
    analyst: await signedIn(app, 'analyst@example.test'),
    viewer: await signedIn(app, 'viewer@example.test'),
  };
}

/**
 * A new app on the world's database and data folder, as a server restarted after the old one
 * stopped (the caller closes the old app and handle first, the way its test needs).
 */
export async function reopenWorld(old: World): Promise<World> {
  const handle = openDb(old.env.dbPath);
  const app = await testApp({ db: handle, dataDir: old.env.dir });
  return {
    ...old,
    app,
    handle,
    owner: await signedIn(app, 'owner@example.test'),
    analyst: await signedIn(app, 'analyst@example.test'),
    viewer: await signedIn(app, 'viewer@example.test'),
  };
}

export async function closeWorld(w: World, keepFiles = false) {
  await w.app.jobs.close();
  w.app.close();
  w.handle.close();
  if (!keepFiles) w.env.cleanup();
}

export function upload(c: Client, rigId: number, file: Buffer, name: string) {
  return c.agent.post(`/api/rigs/${rigId}/captures`).set('x-csrf-token', c.csrf).attach('file', file, name);
}

export function put(c: Client, url: string, body: object) {
  return c.agent.put(url).set('x-csrf-token', c.csrf).send(body);
}

export async function waitForJob(c: Client, url: string, until: (j: DecodeJob) => boolean = (j) => j.state !== 'queued' && j.state !== 'running', timeoutMs = 60_000): Promise<DecodeJob> {
  const seen: DecodeJob[] = [];
  const end = Date.now() + timeoutMs;
  for (;;) {
    const res = await c.get(`${url}/job`);
    expect(res.status).toBe(200);
    seen.push(res.body);
    if (until(res.body)) return res.body;
    if (Date.now() > end) throw new Error(`job did not finish: ${JSON.stringify(seen.at(-1))}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}


/**
 * A decoded capture made without a worker (in-memory databases cannot be shared with one):
 * the small clocked VCD, stored where the app keeps captures, decoded in-process through the
 * same row writer the worker uses. For tests that need a decoded capture as scenery.
 */
export function seedDecodedCapture(app: FlaglineApp, rigId: number, dataDir: string, uploadedBy: number): { captureId: number; frameId: number; busyCaptureId: number } {
  const cap = clockedVcd(12);
  const sha256 = createHash('sha256').update(cap.file).digest('hex');
  fs.mkdirSync(path.join(dataDir, 'captures'), { recursive: true });
  fs.writeFileSync(path.join(dataDir, 'captures', sha256), cap.file);
  const settings = captureSettingsSchema.parse({
    format: 'vcd',
    clock: 'clk',
    links: [{ channel: 'tx' }, { channel: 'rx' }],
    handshake: [{ channel: 'rts', name: 'RTS' }],
    encoding: 'nrz',
    edge: 'rising',
  });
  const sqlite = app.db.sqlite;
  const insertCapture = sqlite.prepare(
    "insert into captures (rig_id, name, size, sha256, format, detect_reason, settings, uploaded_by, created_at) values (?, ?, ?, ?, 'vcd', '', ?, ?, ?)",
  );
  const captureId = Number(insertCapture.run(rigId, 'seeded.vcd', cap.file.length, sha256, JSON.stringify(settings), uploadedBy, Date.now()).lastInsertRowid);
  const busyCaptureId = Number(insertCapture.run(rigId, 'busy.vcd', cap.file.length, sha256, JSON.stringify(settings), uploadedBy, Date.now()).lastInsertRowid);
  const newJob = sqlite.prepare("insert into decode_jobs (capture_id, state, stage, bytes_total, settings, created_at) values (?, ?, ?, ?, ?, ?)");
  const jobId = Number(newJob.run(captureId, 'running', 'decoding', cap.file.length, JSON.stringify(settings), Date.now()).lastInsertRowid);
  // a run that waits in the queue of a server that is not running it: something to cancel
  newJob.run(busyCaptureId, 'queued', 'queued', cap.file.length, JSON.stringify(settings), Date.now());
  let period = 0;
  const writer = new RunWriter(sqlite, jobId, captureId, () => period);
  const decoder = createDecoder(decoderOptions(settings), { frame: (f) => writer.frame(f), event: (e) => writer.event(e) });
  decoder.push(cap.file);
  period = decoder.samplePeriodSeconds ?? 0;
  decoder.finish();
  writer.flush();
  indexSearch(sqlite, jobId);
  sqlite
    .prepare("update decode_jobs set state = 'done', stage = 'done', bytes_read = ?, frames = ?, events = ?, sample_period = ?, links = ?, last_sample = ? where id = ?")
    .run(cap.file.length, writer.frames, writer.events, period, JSON.stringify(decoder.links), writer.lastSample, jobId);
  sqlite.prepare('update captures set current_job_id = ? where id = ?').run(jobId, captureId);
  const frameId = (sqlite.prepare('select id from frames where job_id = ? order by t, id limit 1').get(jobId) as { id: number }).id;
  return { captureId, frameId, busyCaptureId };
}
