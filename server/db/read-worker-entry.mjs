// Worker entry in plain JavaScript: Node 20 does not apply `--import tsx` from a worker's
// execArgv, so the worker registers tsx itself before loading the TypeScript worker.
import { register } from 'tsx/esm/api';

register();
await import('./read-worker.ts');
