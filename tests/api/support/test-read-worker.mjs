// Test-only read worker for the pool's own tests (tests/api/read-pool.test.ts): "echo" answers its
// argument, "stall" spins without end as a stuck read would, "refuse" throws a 400 with fields,
// "crash" ends the thread mid-read. A worker given the database path "fail" throws at once, as one that cannot open it.
import { parentPort, workerData } from 'node:worker_threads';

if (workerData.dbPath === 'fail') throw new Error('cannot open the database');
parentPort.on('message', ({ id, op, args }) => {
  if (op === 'echo') parentPort.postMessage({ id, value: args });
  else if (op === 'stall') {
    for (;;) {
      // busy: no event loop turn, no answer
    }
  } else if (op === 'refuse') parentPort.postMessage({ id, error: { status: 400, message: 'Some fields need attention', fields: { cursor: 'not ours' } } });
  else if (op === 'crash') process.exit(3);
  else parentPort.postMessage({ id, error: { status: 500, message: `no read named ${op}` } });
});
parentPort.postMessage({ ready: true });
