// The compiled server and CLI: esbuild bundles our TypeScript entries into dist/server/*.mjs, with
// every package left external (resolved from node_modules when run). Plain JavaScript, so that
// `npm start` and the decode CLI need no TypeScript loader at run time.
//   node server/cli/server-build.mjs          builds (npm run build:server)
// All outputs sit flat in dist/server/, two levels below the repository like their sources:
// server/db/client.ts finds the repository from its own file's URL, and the decode queue (server/runs/decode-queue.ts), the
// decode worker (its decoder thread) and the read pool (server/db/read-pool.ts) start their bundled workers beside themselves,
// whose names this build gives them (`define` below).
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

export const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..');
export const serverDist = path.join(repoRoot, 'dist', 'server');
/** the list of bundled source files, written after each build: the freshness check stats them */
const INPUTS = path.join(serverDist, 'inputs.json');

/** output name → source entry */
export const SERVER_ENTRIES = {
  start: 'server/cli/start.ts',
  decode: 'server/cli/decode.ts',
  'decode-worker-entry': 'server/jobs/decode-worker.ts',
  'decode-thread-entry': 'server/jobs/decode-thread.ts',
  'read-worker-entry': 'server/db/read-worker.ts',
};

/** what a bundle in dist/server is told about the workers that sit beside it */
export const BUNDLED_WORKERS = {
  BUNDLED_DECODE_WORKER: JSON.stringify('./decode-worker-entry.mjs'),
  BUNDLED_DECODE_THREAD: JSON.stringify('./decode-thread-entry.mjs'),
  BUNDLED_READ_WORKER: JSON.stringify('./read-worker-entry.mjs'),
};

/** Besides the bundled sources, a change to these makes the build stale (dependencies, options). */
const ALSO = ['package.json', 'tsconfig.json', 'server/cli/server-build.mjs'];

const mtime = (file) => {
  try {
    return fs.statSync(path.join(repoRoot, file)).mtimeMs;
  } catch {
    return Infinity; // gone: a rebuild says what is missing
  }
};

/** Why the server build is needed, or null when dist/server is up to date. */
export function serverBuildReason() {
  let recorded;
  try {
    recorded = JSON.parse(fs.readFileSync(INPUTS, 'utf8'));
  } catch {
    return 'no server build yet';
  }
  if (JSON.stringify(recorded.entries) !== JSON.stringify(SERVER_ENTRIES)) return 'the entry points changed';
  for (const name of Object.keys(SERVER_ENTRIES)) if (!fs.existsSync(path.join(serverDist, `${name}.mjs`))) return `dist/server/${name}.mjs is missing`;
  const stale = [...recorded.inputs, ...ALSO].find((f) => mtime(f) > recorded.builtAt);
  return stale ? `${stale} changed since the last server build` : null;
}

export async function buildServer() {
  const { build } = await import('esbuild');
  const builtAt = Date.now();
  // built beside, then swapped in: a server or CLI started meanwhile never sees half a build
  const fresh = `${serverDist}.building-${process.pid}-${Math.random().toString(36).slice(2)}`;
  fs.rmSync(fresh, { recursive: true, force: true });
  const common = {
    absWorkingDir: repoRoot,
    outdir: fresh,
    outExtension: { '.js': '.mjs' },
    bundle: true,
    format: 'esm',
    platform: 'node',
    target: 'node20',
    sourcemap: 'linked',
    metafile: true,
    logLevel: 'warning',
  };
  const entries = Object.entries(SERVER_ENTRIES).map(([out, entry]) => ({ in: entry, out }));
  const [server, cli] = await Promise.all([
    build({
      ...common,
      entryPoints: entries.filter((e) => e.out !== 'decode'),
      // shared code in flat chunks beside the entries (see the note at the top)
      splitting: true,
      chunkNames: '[name]-[hash]',
      packages: 'external',
      // the decode queue, the decode worker and the read pool start the bundled workers that sit
      // beside them (server/runs/decode-queue.ts, server/jobs/decode-worker.ts, server/db/read-pool.ts)
      define: BUNDLED_WORKERS,
    }),
    // The CLI is one file with its one small package (crc) inside: every module node resolves
    // and loads is start-up time, and the CLI must answer within 150 ms.
    build({ ...common, entryPoints: entries.filter((e) => e.out === 'decode'), plugins: [externalExcept(['crc'])] }),
  ]);
  const inputs = [...new Set([...Object.keys(server.metafile.inputs), ...Object.keys(cli.metafile.inputs)])].filter((f) => !f.startsWith('node_modules/'));
  fs.writeFileSync(path.join(fresh, path.basename(INPUTS)), JSON.stringify({ builtAt, entries: SERVER_ENTRIES, inputs }));
  const old = `${fresh}.old`;
  if (fs.existsSync(serverDist)) fs.renameSync(serverDist, old);
  fs.renameSync(fresh, serverDist);
  fs.rmSync(old, { recursive: true, force: true });
}

/** esbuild plugin: packages stay external (resolved from node_modules at run time) except `bundled`. */
function externalExcept(bundled) {
  return {
    name: 'external-except',
    setup(b) {
      b.onResolve({ filter: /^[^./]/ }, (args) => {
        const name = args.path.startsWith('@') ? args.path.split('/').slice(0, 2).join('/') : args.path.split('/')[0];
        return bundled.includes(name) || args.path.startsWith('node:') ? undefined : { path: args.path, external: true };
      });
    },
  };
}

/** Builds when stale (saying why on stderr); returns the file URL of the entry `name`. */
export async function ensureServerBuild(name, { quiet = false } = {}) {
  const reason = serverBuildReason();
  if (reason) {
    if (!quiet) process.stderr.write(`Building the server (${reason})…\n`);
    await buildServer();
  }
  return pathToFileURL(path.join(serverDist, `${name}.mjs`)).href;
}

// Run as a script only under its own name: bundled into another file (the bench's stage runner)
// import.meta.url is that file, which is also argv[1].
const self = fileURLToPath(import.meta.url);
if (process.argv[1] && path.basename(self) === 'server-build.mjs' && self === path.resolve(process.argv[1])) {
  const t0 = performance.now();
  await buildServer();
  console.log(`Built dist/server (${Object.keys(SERVER_ENTRIES).join(', ')}) in ${Math.round(performance.now() - t0)} ms`);
}
