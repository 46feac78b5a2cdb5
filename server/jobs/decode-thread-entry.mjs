// Decoder thread entry in plain JavaScript, as decode-worker-entry.mjs: a nested worker registers
// tsx itself before loading the TypeScript thread.
import { register } from 'tsx/esm/api';

register();
await import('./decode-thread.ts');
