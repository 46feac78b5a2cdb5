// Worker entry: loads the TypeScript worker through tsx (worker threads do not inherit a loader).
import { workerData } from 'node:worker_threads';
import { tsImport } from 'tsx/esm/api';

await tsImport(workerData.entry, import.meta.url);
