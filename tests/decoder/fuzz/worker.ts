// Runs one decode per message, in a worker thread with a memory limit, so a hang or a blow-up
// can be stopped from outside. Answers how it ended: frames, a fatal issue, or a thrown error
// (only DecodeError is the decoder's own; anything else is a bug).
import { parentPort } from 'node:worker_threads';
import { createDecoder, type DecoderOptions } from '../../../shared/decoder/pipeline';
import { DecodeError } from '../../../shared/decoder/types';

export interface Job {
  id: number;
  options: DecoderOptions;
  bytes: Uint8Array;
  /** sizes of the pieces pushed, cycled (chunks may split anywhere) */
  pieces: number[];
}

export interface Outcome {
  id: number;
  frames: number;
  fatal: string | null;
  /** a throw that is not the decoder's own DecodeError */
  crash: string | null;
}

function run(job: Job): Outcome {
  let frames = 0;
  try {
    const d = createDecoder(job.options, { frame: () => frames++, event: () => {} });
    let at = 0;
    let k = 0;
    while (at < job.bytes.length && !d.fatal()) {
      const size = Math.max(1, job.pieces[k++ % job.pieces.length]);
      d.push(job.bytes.subarray(at, at + size));
      at += size;
    }
    d.finish();
    return { id: job.id, frames, fatal: d.fatal()?.message ?? null, crash: null };
  } catch (e) {
    if (e instanceof DecodeError) return { id: job.id, frames, fatal: e.message, crash: null };
    return { id: job.id, frames, fatal: null, crash: e instanceof Error ? `${e.name}: ${e.message}\n${e.stack ?? ''}` : String(e) };
  }
}

parentPort!.on('message', (job: Job) => parentPort!.postMessage(run(job)));
