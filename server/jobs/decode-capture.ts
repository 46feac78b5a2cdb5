// The decoder side of a decode run: reads the capture, decodes it and feeds the fault desk;
// frames and events go to the decode worker (decode-worker.ts), which writes them, packed in
// batches (server/runs/frame-batch.ts). It runs in a thread of its own (decode-thread.ts), so
// decoding and SQLite's inserts run on two cores at once, or for a small capture inside the
// worker itself (no second thread to start). The fault desk's report needs the call layer's
// exchanges, which the worker pairs: it sends them back once the frames are stored, and this
// side answers with the report.
import fs from 'node:fs';
import Database from 'better-sqlite3';
import { createDecoder, type DecodeIssue } from '../../shared/decoder';
import type { Exchange } from '../../shared/decoder/calls';
import type { FaultReport } from '../../shared/decoder/faults';
import { decoderOptions } from '../../shared/decoder-options';
import { BatchPacker, type FrameBatch } from '../runs/frame-batch';
import { raceDeskOptions } from '../runs/fault-races';
import { FaultRecorder, faultCallKey } from '../runs/fault-rows';
import type { RunInputs } from '../runs/inputs';
import { MIN_FLAG_STRETCH } from '../runs/run-writer';
import { CsvSeekTracker } from '../runs/seek/csv-seek';
import { VcdSeekTracker } from '../runs/seek/vcd-seek';
import { threadCpuMs } from '../runs/thread-cpu';

export interface DecodeThreadData {
  dbPath: string;
  filePath: string;
  inputs: RunInputs;
  /**
   * Int32 [batches the worker has taken]: the decoder thread waits while too many are not taken
   * yet; null inside the worker itself, which takes them only after the decode
   */
  taken: SharedArrayBuffer | null;
}

/** where the decoder side's messages go: the thread's parent port, or the worker's inbox directly */
export interface DecodeThreadPort {
  postMessage(m: DecodeThreadMessage, transfer?: ArrayBuffer[]): void;
  once(event: 'message', listener: (m: DecodeThreadExchanges) => void): void;
  close(): void;
}

/** what the decoder thread tells the worker */
export type DecodeThreadMessage =
  | { type: 'batch'; batch: FrameBatch }
  | {
      type: 'end';
      batch: FrameBatch;
      /** the decoder's fatal issue, described; the run fails with it */
      fatal: string | null;
      issues: string[];
      period: number;
      links: string[];
      /** milliseconds: decoding (without packing and the fault desk), the fault desk, waiting for the worker */
      timings: DecodeThreadTimings;
    }
  | { type: 'report'; report: FaultReport | null; faultsMs: number; cpuMs: number };
/** what the worker tells the decoder thread once the frames are stored */
export interface DecodeThreadExchanges {
  type: 'exchanges';
  exchanges: Exchange[];
  lastSample: number;
}
export interface DecodeThreadTimings {
  decode: number;
  pack: number;
  faults: number;
  /** waiting while the worker is behind */
  waiting: number;
  cpu: number;
}

const CHUNK = 1 << 20;
/** a batch is handed over once it holds this many records (and after each chunk of the file) */
const BATCH_RECORDS = 4096;
/** batches handed over but not yet taken, beyond which this thread waits: keeps memory flat */
const MAX_IN_FLIGHT = 4;
/** waits are this long at most, so a stop of the run ends the thread promptly */
const WAIT_MS = 100;

export function describeIssue(issue: DecodeIssue): string {
  const where = issue.line !== undefined ? `line ${issue.line}, byte ${issue.offset}` : `byte ${issue.offset}`;
  return `${issue.message} (at ${where})`;
}

/** Decodes the capture, handing batches to `port`; then answers the worker's exchanges with the fault report. */
export function decodeCapture(data: DecodeThreadData, port: DecodeThreadPort): void {
  const cpuStart = threadCpuMs();
  const taken = data.taken ? new Int32Array(data.taken) : null;
  // the fault desk's call identities and race options come from the run's field map
  const ro = new Database(data.dbPath, { readonly: true });
  let faults: FaultRecorder;
  try {
    ro.pragma('busy_timeout = 10000');
    faults = new FaultRecorder(periodNow, faultCallKey(ro, data.inputs), raceDeskOptions(ro, data.inputs));
  } finally {
    ro.close();
  }
  const packer = new BatchPacker();
  let period = 0;
  function periodNow(): number {
    return decoder.samplePeriodSeconds ?? period;
  }
  let sent = 0;
  const timings: DecodeThreadTimings = { decode: 0, pack: 0, faults: 0, waiting: 0, cpu: 0 };
  let bytes = 0;
  const handOver = (bytesRead: number) => {
    // the worker takes batches in order; past MAX_IN_FLIGHT this thread waits for it
    const t = performance.now();
    for (; taken; ) {
      const seen = Atomics.load(taken, 0);
      if (sent - seen < MAX_IN_FLIGHT) break;
      Atomics.wait(taken, 0, seen, WAIT_MS);
    }
    timings.waiting += performance.now() - t;
    const batch = packer.take(bytesRead);
    port.postMessage({ type: 'batch', batch } satisfies DecodeThreadMessage, [batch.nums, batch.octets]);
    sent++;
  };
  const decoder = createDecoder(
    { ...decoderOptions(data.inputs.capture), anomalies: faults },
    {
      frame: (f) => {
        const t = performance.now();
        packer.setPeriod(periodNow());
        packer.frame(f);
        const u = performance.now();
        faults.frame(f);
        timings.pack += u - t;
        timings.faults += performance.now() - u;
        if (packer.size >= BATCH_RECORDS) handOver(bytes);
      },
      event: (e) => {
        const t = performance.now();
        // fill shorter than MIN_FLAG_STRETCH is not stored (run-writer.ts), and the call layer reads only rises
        if (e.kind !== 'flags' || (e.count ?? 0) >= MIN_FLAG_STRETCH) {
          packer.setPeriod(periodNow());
          packer.event(e);
        }
        const u = performance.now();
        faults.event(e);
        timings.pack += u - t;
        timings.faults += performance.now() - u;
        if (packer.size >= BATCH_RECORDS) handOver(bytes);
      },
    },
  );
  const seek =
    data.inputs.capture.format === 'vcd'
      ? new VcdSeekTracker((p) => packer.seekPoint(p))
      : data.inputs.capture.format === 'csv'
        ? new CsvSeekTracker({ sampleRate: data.inputs.capture.sampleRate ?? undefined }, (p) => packer.seekPoint(p))
        : null;
  const started = performance.now();
  const fd = fs.openSync(data.filePath, 'r');
  try {
    for (;;) {
      const chunk = Buffer.allocUnsafe(CHUNK);
      const got = fs.readSync(fd, chunk, 0, CHUNK, bytes);
      if (got === 0) break;
      const bytesIn = new Uint8Array(chunk.buffer, chunk.byteOffset, got);
      decoder.push(bytesIn);
      seek?.push(bytesIn, bytes);
      bytes += got;
      if (decoder.fatal()) break;
      period = decoder.samplePeriodSeconds ?? period;
      // each chunk's records go over even when few, so progress reaches the worker
      handOver(bytes);
    }
  } finally {
    fs.closeSync(fd);
  }
  if (!decoder.fatal()) decoder.finish();
  period = decoder.samplePeriodSeconds ?? period;
  const fatal = decoder.fatal();
  timings.decode = performance.now() - started - timings.pack - timings.faults - timings.waiting;
  timings.cpu = threadCpuMs() - cpuStart;
  const batch = packer.take(bytes);
  port.postMessage(
    {
      type: 'end',
      batch,
      fatal: fatal ? describeIssue(fatal) : null,
      issues: decoder.issues.slice(0, 20).map(describeIssue),
      period,
      links: decoder.links,
      timings,
    } satisfies DecodeThreadMessage,
    [batch.nums, batch.octets],
  );
  if (fatal) return;
  // the fault desk's report, once the worker has the call layer's exchanges
  port.once('message', (m: DecodeThreadExchanges) => {
    const cpu = threadCpuMs();
    const t = performance.now();
    for (const e of m.exchanges) faults.exchange(e);
    const report = faults.report(m.lastSample);
    port.postMessage({ type: 'report', report, faultsMs: performance.now() - t, cpuMs: threadCpuMs() - cpu } satisfies DecodeThreadMessage);
    port.close();
  });
}
