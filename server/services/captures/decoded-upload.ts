// A capture decoded in the uploader's browser: the decoded-capture file (shared/schemas/
// decoded-upload.ts) instead of the samples. Two passes so nothing half-written is ever stored:
// the body goes to a temp file while every line is validated (size limit, JSON, schema, counts);
// only a whole, valid file becomes a capture. Then the frames go through the same stages as a
// server decode — FCS check and link decode, row writer, fault desk, search index, call layer —
// and the run becomes visible in one final transaction, as the decode worker does it.
import fs from 'node:fs';
import path from 'node:path';
import readline from 'node:readline';
import { randomUUID } from 'node:crypto';
import type { Readable } from 'node:stream';
import { Transform } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import { eq } from 'drizzle-orm';
import { z } from 'zod';
import { anomalyOf, lineEventOf, rawFrameOf } from '../../../shared/decoded-capture/lines';
import { checkFrame } from '../../../shared/decoder';
import type { CaptureSummaryRow } from '../../../shared/schemas';
import { decodedBodyLineSchema, decodedHeaderSchema, type DecodedHeader } from '../../../shared/schemas/decoded-upload';
import { driverOf, type Db } from '../../db/client';
import { callRuns, captures, decodeJobs } from '../../db/schema';
import { badRequest, HttpError } from '../../http/errors';
import { createCallRun, switchToCallRun } from '../../runs/call-runs';
import { runCallStage } from '../../runs/call-stage';
import { FaultRecorder, faultCallKey, storeFaultReport } from '../../runs/fault-rows';
import { loadMapVersion, type RunInputs } from '../../runs/inputs';
import { RunWriter } from '../../runs/run-writer';
import { indexSearch } from '../../runs/search-index';
import { clearRunRows } from '../../runs/sweep';
import { decodeRunInputs } from '../calls/run-inputs';
import { raceDeskOptions } from '../../runs/fault-races';
import type { CaptureDeps } from './deps';
import { toSummary } from './rows';

/** default limit of a decoded upload: 256 MB (about two million frames), or FLAGLINE_MAX_DECODED_BYTES */
export function defaultMaxDecodedBytes(): number {
  const raw = process.env.FLAGLINE_MAX_DECODED_BYTES;
  return raw && /^\d+$/.test(raw) ? Number(raw) : 256 * 1024 ** 2;
}

/** lines handled between yields to other requests */
const LINES_PER_TURN = 2000;
/** a line longer than this cannot be a valid frame (64 KB of octets as hex plus its stuffing list) */
const MAX_LINE_CHARS = 2 * 65_536 + 16 * 131_072 + 1024;

const yieldTurn = () => new Promise<void>((resolve) => setImmediate(resolve));

function sizeText(n: number): string {
  return n >= 1024 ** 3 ? `${(n / 1024 ** 3).toFixed(1)} GB` : `${Math.round(n / 1024 ** 2)} MB`;
}

function zodMessage(e: z.ZodError): string {
  const first = e.issues[0];
  const where = first.path.length ? ` (${first.path.join('.')})` : '';
  return `${first.message}${where}`;
}

/** Reads and checks one line; a problem is a 400 naming the line. */
function parseLine<S extends z.ZodType>(schema: S, text: string, lineNo: number): z.output<S> {
  if (text.length > MAX_LINE_CHARS) throw badRequest(`Line ${lineNo} of the decoded capture is too long to be a frame`);
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch {
    throw badRequest(`Line ${lineNo} of the decoded capture is not JSON`);
  }
  const r = schema.safeParse(value);
  if (!r.success) throw badRequest(`Line ${lineNo} of the decoded capture is not valid: ${zodMessage(r.error)}`);
  return r.data;
}

/** Counts bytes through the stream; past the limit it stops with a 413 (the temp file is then removed). */
function byteLimit(limit: number): Transform {
  let seen = 0;
  return new Transform({
    transform(chunk: Buffer, _enc, cb) {
      seen += chunk.length;
      if (seen > limit) return cb(new HttpError(413, `The decoded capture is larger than the limit of ${sizeText(limit)}`));
      cb(null, chunk);
    },
  });
}

async function* lines(file: string): AsyncGenerator<string> {
  const rl = readline.createInterface({ input: fs.createReadStream(file, { encoding: 'utf8', highWaterMark: 1 << 20 }), crlfDelay: Infinity });
  for await (const line of rl) if (line.length > 0) yield line;
}

/** First pass: every line valid, links named in the header, the end line's counts right. */
async function validate(file: string): Promise<DecodedHeader> {
  let header: DecodedHeader | null = null;
  let links = new Set<string>();
  let lineNo = 0;
  const counts = { frames: 0, events: 0, anomalies: 0 };
  let ended = false;
  for await (const text of lines(file)) {
    lineNo++;
    if (ended) throw badRequest(`Line ${lineNo} follows the end line; the decoded capture must end there`);
    if (!header) {
      header = parseLine(decodedHeaderSchema, text, lineNo);
      links = new Set(header.links);
      continue;
    }
    const line = parseLine(decodedBodyLineSchema, text, lineNo);
    if (line.type === 'frame') {
      if (!links.has(line.link)) throw badRequest(`Line ${lineNo}: the frame's link "${line.link}" is not among the header's links`);
      if (line.bits < (line.bytes.length / 2) * 8) throw badRequest(`Line ${lineNo}: the frame has fewer bits than its octets need`);
      counts.frames++;
    } else if (line.type === 'event') counts.events++;
    else if (line.type === 'anomaly') counts.anomalies++;
    else {
      if (line.frames !== counts.frames || line.events !== counts.events || line.anomalies !== counts.anomalies) {
        throw badRequest(
          `The decoded capture is incomplete: its end line counts ${line.frames} frames, ${line.events} events and ${line.anomalies} anomalies, the file holds ${counts.frames}, ${counts.events} and ${counts.anomalies}`,
        );
      }
      ended = true;
    }
    if (lineNo % LINES_PER_TURN === 0) await yieldTurn();
  }
  if (!header) throw badRequest('The decoded capture is empty: send the header line, the frames and the end line');
  if (!ended) throw badRequest('The decoded capture has no end line: the file was cut short; decode and send it again');
  if (counts.frames === 0) throw badRequest('The decoded capture holds no frames: there is nothing to show; decode with other settings');
  return header;
}

/** Second pass: the run's rows, as the decode worker writes them. */
async function storeRun(db: Db, file: string, h: DecodedHeader, inputs: RunInputs, captureId: number, jobId: number): Promise<void> {
  // the run writer, search index, call stage and fault rows take the driver's handle (as in the
  // decode worker); the job, capture and call run rows go through Drizzle on the same connection
  const sqlite = driverOf(db);
  const period = h.samplePeriod;
  const writer = new RunWriter(sqlite, jobId, captureId, () => period);
  const faults = new FaultRecorder(() => period, faultCallKey(sqlite, inputs), raceDeskOptions(db, inputs));
  let n = 0;
  let first = true;
  for await (const text of lines(file)) {
    if (first) {
      first = false;
      continue;
    }
    const line = decodedBodyLineSchema.parse(JSON.parse(text));
    if (line.type === 'frame') {
      // the FCS verdict and link decode are the server's own, whatever the browser concluded
      const f = checkFrame(rawFrameOf(line));
      writer.frame(f);
      faults.frame(f);
    } else if (line.type === 'event') {
      const e = lineEventOf(line);
      writer.event(e);
      faults.event(e);
    } else if (line.type === 'anomaly') faults.anomaly(anomalyOf(line));
    if (++n % LINES_PER_TURN === 0) await yieldTurn();
  }
  writer.flush();
  db.update(decodeJobs).set({ bytesRead: h.bytesRead, frames: writer.frames, events: writer.events, stage: 'indexing' }).where(eq(decodeJobs.id, jobId)).run();
  indexSearch(sqlite, jobId);
  await yieldTurn();
  db.update(decodeJobs).set({ stage: 'calls' }).where(eq(decodeJobs.id, jobId)).run();
  let calls: { runId: number; counts: Awaited<ReturnType<typeof runCallStage>> } | null = null;
  let runId: number | null = null;
  try {
    runId = createCallRun(db, captureId, jobId, inputs, 'running');
    const { map } = loadMapVersion(db, inputs.fieldMap.mapId, inputs.fieldMap.version);
    const counts = await runCallStage(sqlite, { captureId, decodeJobId: jobId, runId, map, inputs, samplePeriod: period, pause: yieldTurn, onExchange: (e) => faults.exchange(e) });
    calls = { runId, counts };
  } catch (err) {
    // as in a server decode: a call layer that stops fails the call run, not the frames
    const message = err instanceof Error ? err.message : String(err);
    if (runId !== null) db.update(callRuns).set({ state: 'failed', error: `The call layer stopped: ${message}`, finishedAt: new Date() }).where(eq(callRuns.id, runId)).run();
  }
  // as in a server decode: the fault desk has seen the call layer's exchanges (receiver over-run symptoms)
  storeFaultReport(sqlite, jobId, captureId, period, faults.report(writer.lastSample));
  db.transaction(
    (tx) => {
      tx.update(decodeJobs)
        .set({
          state: 'done',
          stage: 'done',
          bytesRead: h.bytesRead,
          frames: writer.frames,
          events: writer.events,
          samplePeriod: period,
          links: JSON.stringify(h.links),
          lastSample: writer.lastSample,
          issues: JSON.stringify(h.issues),
          finishedAt: new Date(),
        })
        .where(eq(decodeJobs.id, jobId))
        .run();
      tx.update(captures).set({ currentJobId: jobId }).where(eq(captures.id, captureId)).run();
      if (calls) switchToCallRun(tx, captureId, calls.runId, calls.counts);
    },
    { behavior: 'immediate' },
  );
}

/**
 * Takes the request body of a decoded upload: validates it whole, then stores it as a capture
 * whose samples stayed with the uploader and runs the stages above the frames on it.
 */
export async function storeDecodedUpload(deps: CaptureDeps, rigId: number, userId: number, body: Readable, limit: number): Promise<CaptureSummaryRow> {
  const temp = path.join(deps.store.tmpDir, `decoded-${randomUUID()}`);
  try {
    await pipeline(body, byteLimit(limit), fs.createWriteStream(temp));
    const h = await validate(temp);
    const row = deps.db
      .insert(captures)
      .values({
        rigId,
        name: h.name,
        size: h.size,
        sha256: h.sha256,
        format: h.settings.format,
        detectReason: 'decoded in the browser; the samples stayed on the uploader’s machine',
        settings: JSON.stringify(h.settings),
        uploadedBy: userId,
        samplesKept: false,
      })
      .returning()
      .get();
    // the run's inputs snapshot, as a server decode records it
    const inputs = decodeRunInputs(deps.db, row.id, h.settings);
    const jobId = deps.db
      .insert(decodeJobs)
      .values({ captureId: row.id, state: 'running', stage: 'storing', bytesTotal: h.size, settings: JSON.stringify(h.settings), inputs: JSON.stringify(inputs), startedAt: new Date() })
      .returning({ id: decodeJobs.id })
      .get().id;
    try {
      await storeRun(deps.db, temp, h, inputs, row.id, jobId);
    } catch (err) {
      // nothing half-stored: the capture and its rows go
      clearRunRows(driverOf(deps.db), jobId);
      deps.db.delete(captures).where(eq(captures.id, row.id)).run();
      throw err;
    }
    return toSummary(deps, deps.db.select().from(captures).where(eq(captures.id, row.id)).get()!);
  } finally {
    fs.rmSync(temp, { force: true });
  }
}
