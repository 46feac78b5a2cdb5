// One decode run, in a worker thread: streams the stored capture into the decoder and writes
// frames and line events into SQLite through its own connection, tagged with the run's job id.
// The run's rows become visible only in the final transaction, which points the capture at it.
import fs from 'node:fs';
import { parentPort, workerData } from 'node:worker_threads';
import Database from 'better-sqlite3';
import { createDecoder, type Decoder } from '../../shared/decoder/pipeline';
import type { Exchange } from '../../shared/decoder/calls/exchanges';
import type { DecodeIssue } from '../../shared/decoder/types';
import type { CaptureSettings } from '../../shared/schemas';
import { chosenMap, createCallRun, runCallStage, switchToCallRun } from './call-stage';
import { decoderOptions } from './decoder-options';
import { FaultRecorder, faultCallKey, storeFaultReport } from './fault-rows';
import { indexSearch, RunWriter } from './run-rows';
import { CsvSeekTracker } from './csv-seek';
import { raceDeskOptions, storeRaces } from '../services/timing/fault-races';
import { type SeekPoint, VcdSeekTracker } from './vcd-seek';

export interface DecodeWorkerData {
  dbPath: string;
  jobId: number;
  captureId: number;
  filePath: string;
  settings: CaptureSettings;
}

export type DecodeWorkerMessage = { type: 'done'; frames: number; events: number } | { type: 'failed'; error: string };

const PROGRESS_MS = 250;
const CHUNK = 1 << 20;

export function describeIssue(issue: DecodeIssue): string {
  const where = issue.line !== undefined ? `line ${issue.line}, byte ${issue.offset}` : `byte ${issue.offset}`;
  return `${issue.message} (at ${where})`;
}

async function run(data: DecodeWorkerData): Promise<DecodeWorkerMessage> {
  const db = new Database(data.dbPath);
  db.pragma('journal_mode = WAL');
  db.pragma('busy_timeout = 10000');
  // WAL with NORMAL sync stays consistent after a crash; a larger page cache keeps the index inserts in memory
  db.pragma('synchronous = NORMAL');
  db.pragma('cache_size = -65536');
  try {
    let period = 0;
    // Frames reach the writer during push(), as soon as the reader's header has set the time base,
    // so the writer asks the decoder itself rather than a copy taken between pushes.
    const writer = new RunWriter(db, data.jobId, data.captureId, () => decoder.samplePeriodSeconds ?? period);
    const faults = new FaultRecorder(() => decoder.samplePeriodSeconds ?? period, faultCallKey(db, data.captureId, data.settings), raceDeskOptions(db, data.captureId, data.settings));
    const decoder: Decoder = createDecoder(
      { ...decoderOptions(data.settings), anomalies: faults },
      {
        frame: (f) => {
          writer.frame(f);
          faults.frame(f);
        },
        event: (e) => {
          writer.event(e);
          faults.event(e);
        },
      },
    );
    const addSeek = db.prepare('insert into seek_points (job_id, byte_offset, sample, levels) values (?, ?, ?, ?)');
    const addPoint = (p: SeekPoint) => addSeek.run(data.jobId, p.byteOffset, p.sample, JSON.stringify(p.levels));
    const seek =
      data.settings.format === 'vcd'
        ? new VcdSeekTracker(addPoint)
        : data.settings.format === 'csv'
          ? new CsvSeekTracker({ sampleRate: data.settings.sampleRate ?? undefined }, addPoint)
          : null;
    const progress = db.prepare("update decode_jobs set bytes_read = ?, frames = ?, events = ?, stage = ? where id = ? and state = 'running'");
    db.prepare("update decode_jobs set stage = 'decoding', bytes_total = ? where id = ?").run(fs.statSync(data.filePath).size, data.jobId);
    let bytes = 0;
    let lastReport = Date.now();
    for await (const chunk of fs.createReadStream(data.filePath, { highWaterMark: CHUNK })) {
      const bytesIn = new Uint8Array((chunk as Buffer).buffer, (chunk as Buffer).byteOffset, (chunk as Buffer).length);
      decoder.push(bytesIn);
      seek?.push(bytesIn, bytes);
      bytes += bytesIn.length;
      if (decoder.fatal()) break;
      period = decoder.samplePeriodSeconds ?? period;
      const now = Date.now();
      if (now - lastReport >= PROGRESS_MS) {
        writer.flush();
        progress.run(bytes, writer.frames, writer.events, 'decoding', data.jobId);
        lastReport = now;
      }
    }
    if (!decoder.fatal()) decoder.finish();
    period = decoder.samplePeriodSeconds ?? period;
    const fatal = decoder.fatal();
    if (fatal) return { type: 'failed', error: describeIssue(fatal) };
    writer.flush();
    progress.run(bytes, writer.frames, writer.events, 'indexing', data.jobId);
    indexSearch(db, data.jobId);
    const calls = await callStage(db, data, period, (e) => faults.exchange(e));
    const report = faults.report(writer.lastSample);
    storeFaultReport(db, data.jobId, data.captureId, period, report);
    storeRaces(db, data.jobId, report);
    const issues = decoder.issues.slice(0, 20).map(describeIssue);
    const committed = db.transaction(() => {
      const done = db
        .prepare(
          `update decode_jobs set state = 'done', stage = 'done', bytes_read = ?, frames = ?, events = ?, sample_period = ?, links = ?,
             last_sample = ?, issues = ?, finished_at = ? where id = ? and state = 'running'`,
        )
        .run(bytes, writer.frames, writer.events, period, JSON.stringify(decoder.links), writer.lastSample, JSON.stringify(issues), Date.now(), data.jobId);
      // cancelled meanwhile: the rows stay invisible and the runner clears them
      if (done.changes === 0) return false;
      db.prepare('update captures set current_job_id = ? where id = ?').run(data.jobId, data.captureId);
      // the call layer's exchanges and files appear together with the frames they came from
      if (calls) switchToCallRun(db, data.captureId, calls.runId, calls.counts);
      return true;
    }).immediate();
    if (!committed) return { type: 'failed', error: 'The run was cancelled.' };
    return { type: 'done', frames: writer.frames, events: writer.events };
  } finally {
    db.close();
  }
}

/**
 * The call-layer stage over the run's frames with the capture's chosen map. A failure here (a
 * stored map that no longer parses, say) fails the call run, not the decode.
 */
async function callStage(db: Database.Database, data: DecodeWorkerData, period: number, onExchange: (e: Exchange) => void) {
  let runId: number | null = null;
  try {
    db.prepare("update decode_jobs set stage = 'calls' where id = ? and state = 'running'").run(data.jobId);
    const m = chosenMap(db, data.captureId);
    runId = createCallRun(db, data.captureId, data.jobId, m, 'running');
    const counts = await runCallStage(db, { captureId: data.captureId, decodeJobId: data.jobId, runId, map: m.map, settings: data.settings, samplePeriod: period, onExchange });
    return { runId, counts };
  } catch (err) {
    const message = err instanceof Error ? err.message : String(err);
    if (runId !== null) db.prepare("update call_runs set state = 'failed', error = ?, finished_at = ? where id = ?").run(`The call layer stopped: ${message}`, Date.now(), runId);
    return null;
  }
}

if (parentPort && workerData) {
  run(workerData as DecodeWorkerData).then(
    (msg) => parentPort!.postMessage(msg),
    (err: unknown) => parentPort!.postMessage({ type: 'failed', error: err instanceof Error ? err.message : String(err) } satisfies DecodeWorkerMessage),
  );
}
