// SQLite side of ingest alone: `npx tsx server/cli/bench-ingest-db.ts [--frames N] [--batch N] [--chunk N]`.
// Writes N synthetic decoded frames through the run writer into a fresh database, then builds the
// search index, timing each on this process's CPU (single-threaded here, so CPU seconds are
// steady on a shared machine where wall time is not).
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { parseArgs } from 'node:util';
import type { DecodedFrame } from '../../shared/decoder';
import { openDb } from '../db/client';
import { RunWriter } from '../runs/run-writer';
import { indexSearch } from '../runs/search-index';

const { values } = parseArgs({ options: { frames: { type: 'string', default: '200000' }, chunk: { type: 'string', default: '' } } });
const N = Number(values.frames);
const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'flagline-ingest-db-'));
const handle = openDb(path.join(dir, 'bench.db'));
const db = handle.sqlite;
db.pragma('synchronous = NORMAL');
db.pragma('cache_size = -131072');
db.pragma('temp_store = MEMORY');
db.pragma('wal_autocheckpoint = 4096');
db.pragma('foreign_keys = OFF');
db.prepare("insert into decode_jobs (id, capture_id, state, settings, created_at) values (1, 1, 'running', '{}', 0)").run();

const cpu = () => {
  const u = process.cpuUsage();
  return (u.user + u.system) / 1e6;
};
const ascii = (s: string) => Array.from(s, (c) => c.charCodeAt(0));
function frame(k: number): DecodedFrame {
  const bytes = Uint8Array.from([0x21 + (k % 5), (k & 7) << 1, 0x0f, k & 0xff, (k >> 8) & 0xff, ...ascii(`FILE${String(k % 100000).padStart(5, '0')}.DAT`), 0x1a, 0x00, 0x12, 0x34]);
  return {
    link: 'line',
    seq: k,
    firstSample: k * 400,
    lastSample: k * 400 + 300,
    status: 'ok',
    bytes,
    bitLength: bytes.length * 8,
    fcsReceived: 0x1234,
    fcsComputed: 0x1234,
    flippedBit: null,
    stuffed: [],
    decode: { address: bytes[0], control: bytes[1], kind: 'I', command: 'I', ns: k & 7, nr: 0, pf: false, infoOffset: 2, infoLength: bytes.length - 4 },
  };
}

const frames = Array.from({ length: N }, (_, k) => frame(k));
let c0 = cpu();
let t0 = performance.now();
const writer = new RunWriter(db, 1, 1, () => 1e-6);
for (const f of frames) writer.frame(f);
writer.flush();
const insertCpu = cpu() - c0;
const insertWall = (performance.now() - t0) / 1000;
c0 = cpu();
t0 = performance.now();
indexSearch(db, 1, values.chunk ? { chunk: Number(values.chunk) } : {});
const indexCpu = cpu() - c0;
const indexWall = (performance.now() - t0) / 1000;
console.log(`${N} frames: rows+inserts ${insertCpu.toFixed(2)} s CPU (${insertWall.toFixed(2)} s wall), search index ${indexCpu.toFixed(2)} s CPU (${indexWall.toFixed(2)} s wall); ${(fs.statSync(path.join(dir, 'bench.db')).size / 1e6).toFixed(0)} MB`);
handle.close();
fs.rmSync(dir, { recursive: true, force: true });
