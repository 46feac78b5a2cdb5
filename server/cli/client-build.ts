import fs from 'node:fs';
import path from 'node:path';
import { repoRoot } from '../db/client';
import { clientDist } from '../http/client';

/** Sources the client build depends on; a change to any of them makes the build stale. */
const CLIENT_SOURCES = ['src', 'public', 'shared', 'index.html', 'vite.config.ts', 'package.json'];

function newestMtime(p: string): number {
  if (!fs.existsSync(p)) return 0;
  const stat = fs.statSync(p);
  if (!stat.isDirectory()) return stat.mtimeMs;
  let newest = stat.mtimeMs;
  for (const entry of fs.readdirSync(p)) newest = Math.max(newest, newestMtime(path.join(p, entry)));
  return newest;
}

/** Why the client needs (re)building, or null when dist/client is up to date. */
export function clientBuildReason(): string | null {
  const index = path.join(clientDist, 'index.html');
  if (!fs.existsSync(index)) return 'no client build yet';
  const built = fs.statSync(index).mtimeMs;
  const stale = CLIENT_SOURCES.find((s) => newestMtime(path.join(repoRoot, s)) > built);
  return stale ? `${stale} changed since the last client build` : null;
}

export async function buildClient(): Promise<void> {
  const { build } = await import('vite');
  // Always a production build: under vitest NODE_ENV is 'test', which would otherwise leave a
  // development React (and the dev JSX runtime) in dist/client for `npm start` to serve. Vite and
  // its React plugin both read the variable, so it is set for the build and restored after.
  const before = process.env.NODE_ENV;
  process.env.NODE_ENV = 'production';
  try {
    await build({ root: repoRoot, logLevel: 'warn', mode: 'production' });
  } finally {
    if (before === undefined) delete process.env.NODE_ENV;
    else process.env.NODE_ENV = before;
  }
}
