// Test-only decode worker (FLAGLINE_TEST_DECODE_WORKER): a run whose settings name a channel
// "stall" reports one position and then spins without end, as a decoder walking a huge time gap
// bit by bit would; any other run is handed to the real worker.
import { parentPort, workerData } from 'node:worker_threads';

if (workerData.inputs.capture.channelNames.includes('stall')) {
  parentPort.postMessage({ type: 'progress', bytesRead: 4096, bytesTotal: 8192, seconds: 0.25 });
  for (;;) {
    // busy: no event loop turn, no message, as a stuck decoder
  }
} else {
  await import('../../../server/jobs/decode-worker-entry.mjs');
}
