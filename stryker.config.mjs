// `npm run mutate`: StrykerJS mutation testing of the decoder core, one source file at a time
// with only the decoder tests that exercise it (the machine is shared: two workers by default).
// One file: `STRYKER_TARGET=fcs npx stryker run` (add STRYKER_FRESH=1 to include static mutants,
// see below). Reports: coverage/mutation/<target>[-fresh].html|json.
// Not part of `npm test`: a full run takes tens of minutes.
const TARGETS = {
  fcs: { mutate: 'shared/decoder/fcs.ts', tests: ['fcs', 'line-bits'] },
  deframe: { mutate: 'shared/decoder/deframe.ts', tests: ['deframe', 'fast-path-deframe', 'line-bits'] },
  link: { mutate: 'shared/decoder/link.ts', tests: ['link', 'line-bits'] },
  bits: { mutate: 'shared/decoder/bits.ts', tests: ['bits', 'fast-path-raw', 'waveform-roundtrip'] },
  apply: { mutate: 'shared/decoder/calls/apply.ts', tests: ['calls-apply', 'calls-field-map'] },
  exchanges: { mutate: 'shared/decoder/calls/exchanges.ts', tests: ['calls-exchanges', 'calls-compare'] },
  files: { mutate: 'shared/decoder/calls/files.ts', tests: ['calls-files', 'hints-ledger'] },
};

const name = process.env.STRYKER_TARGET ?? '';
const fresh = process.env.STRYKER_FRESH === '1';
const target = TARGETS[name];
if (!target) throw new Error(`Set STRYKER_TARGET to one of: ${Object.keys(TARGETS).join(', ')}`);

/** @type {import('@stryker-mutator/api/core').PartialStrykerOptions} */
export default {
  testRunner: 'vitest',
  vitest: { configFile: 'vitest.mutate.config.ts', related: false },
  mutate: [target.mutate],
  testFiles: target.tests.map((t) => `tests/decoder/${t}.test.ts`),
  coverageAnalysis: 'perTest',
  // The Vitest runner keeps a worker's modules from one mutant to the next, so code that runs
  // once per process (tables built at module load — the FCS table, the deframer's FAST table,
  // the U-frame names — and the lazily built syndrome table) never sees its mutant switched on.
  // By default such static mutants are left out; STRYKER_FRESH=1 starts a fresh worker for
  // every mutant and runs them too (slower; worth it for fcs, deframe and link).
  ignoreStatic: !fresh,
  maxTestRunnerReuse: fresh ? 1 : 0,
  concurrency: Number(process.env.STRYKER_CONCURRENCY ?? 2),
  timeoutMS: 20_000,
  reporters: ['clear-text', 'progress', 'html', 'json'],
  htmlReporter: { fileName: `coverage/mutation/${name}${fresh ? '-fresh' : ''}.html` },
  jsonReporter: { fileName: `coverage/mutation/${name}${fresh ? '-fresh' : ''}.json` },
  tempDirName: 'coverage/stryker-tmp',
  cleanTempDir: 'always',
  // the sandbox needs only the decoder, its tests and the configs
  ignorePatterns: ['samples', 'src', 'server', 'drizzle', 'public', 'bench', 'data', 'dist', 'test-artifacts', 'tests/api', 'tests/browser', 'coverage'],
  thresholds: { high: 90, low: 85, break: null },
};
