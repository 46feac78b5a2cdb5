// A stand-in decoder for the harness's own test (plain JavaScript: restarted quickly): hangs on a
// time of 1e999, reports a TypeError on "NaN" and (when asked) fills its heap on "Infinity"; otherwise it
// answers like the real worker.
import { parentPort } from 'node:worker_threads';

parentPort.on('message', (job) => {
  const text = new TextDecoder('latin1').decode(job.bytes);
  if (text.includes('1e999')) for (;;);
  if (text.includes('NaN')) {
    parentPort.postMessage({ id: job.id, frames: 0, fatal: null, crash: 'TypeError: made up' });
    return;
  }
  // a heap filling up (run by hand: npx tsx with FLAGLINE_FUZZ_MEMORY=1; slow under a test's budget)
  if (process.env.FLAGLINE_FUZZ_MEMORY && text.includes('Infinity')) {
    const keep = [];
    for (let i = 0; ; i++) keep.push({ i, s: `${i}`.repeat(64) });
  }
  parentPort.postMessage({ id: job.id, frames: 1, fatal: null, crash: null });
});
