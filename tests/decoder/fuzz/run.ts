// `npm run fuzz -- [--cases N] [--seed S] [--timeout MS] [--memory MB] [--format vcd,csv,…]`: the
// long fuzzing run. Exits 1 when a case hangs, crashes or runs out of memory, printing the
// smallest input that still does.
import { parseArgs } from 'node:util';
import type { CaptureFormat } from '../../../shared/decoder/types';
import { describeFailure, fuzz } from './harness';

const { values } = parseArgs({
  options: {
    cases: { type: 'string', default: '5000' },
    seed: { type: 'string', default: String(Date.now() % 100000) },
    timeout: { type: 'string', default: '10000' },
    memory: { type: 'string', default: '512' },
    format: { type: 'string' },
  },
});
const seed = Number(values.seed);
const cases = Number(values.cases);
process.stderr.write(`fuzz: ${cases} cases from seed ${seed} (repeat with --seed ${seed})\n`);
const result = await fuzz({
  root: process.cwd(),
  cases,
  seed,
  timeoutMs: Number(values.timeout),
  memoryMb: Number(values.memory),
  formats: values.format ? (values.format.split(',') as CaptureFormat[]) : undefined,
  log: (l) => process.stderr.write(`fuzz: ${l}\n`),
});
for (const f of result.failures) process.stderr.write(describeFailure(f) + '\n');
process.stderr.write(
  `fuzz: ${result.cases} cases in ${(result.ms / 1000).toFixed(1)} s: ${result.failures.length} failures, ${result.refused} refused with a message, ${result.withFrames} with frames\n`,
);
process.exit(result.failures.length > 0 ? 1 : 0);
