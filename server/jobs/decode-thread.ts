// The decoder thread of a decode run, started by the decode worker (decode-worker.ts) for all but
// small captures: decode-capture.ts in a thread of its own, at the worker's lower priority.
import { parentPort, workerData } from 'node:worker_threads';
import { decodeCapture, type DecodeThreadData } from './decode-capture';
import { decodeNice, lowerThreadPriority, nameThread } from './thread-priority';

if (parentPort && workerData) {
  // as the worker: the decode yields to requests
  lowerThreadPriority(decodeNice());
  nameThread('flagline-decode');
  decodeCapture(workerData as DecodeThreadData, parentPort);
}
