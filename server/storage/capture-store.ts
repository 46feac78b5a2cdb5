import { createHash } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { repoRoot } from '../db/client';

/**
 * Capture files, content-addressed: data/captures/<sha256>, written once and never modified.
 * Uploads land in data/tmp first and are renamed into place (same file system, so atomic).
 */
export interface CaptureStore {
  readonly dir: string;
  readonly tmpDir: string;
  pathOf(sha256: string): string;
  /** hashes a finished temp file and moves it into place; an identical file already stored is kept and the temp dropped */
  adopt(tempPath: string): Promise<{ sha256: string; size: number }>;
  exists(sha256: string): boolean;
  remove(sha256: string): void;
}

/**
 * Uploads that were still arriving when the server stopped (killed, crashed, power cut) stay in
 * the temp folder; no request will ever finish them. Runs when the server starts: a file last
 * written before this process began is such a leftover (an upload in progress elsewhere keeps
 * its file's time moving, so a second process sharing the folder, as tests do, loses nothing).
 */
function clearLeftoverUploads(tmpDir: string): void {
  const started = performance.timeOrigin;
  let removed = 0;
  for (const entry of fs.readdirSync(tmpDir, { withFileTypes: true })) {
    if (!entry.isFile()) continue;
    const file = path.join(tmpDir, entry.name);
    const written = fs.statSync(file, { throwIfNoEntry: false })?.mtimeMs;
    if (written === undefined || written >= started) continue;
    fs.rmSync(file, { force: true });
    removed++;
  }
  if (removed > 0) console.log(`[flagline] removed ${removed} unfinished upload${removed === 1 ? '' : 's'} left in ${tmpDir}`);
}

export const defaultDataDir = () => process.env.FLAGLINE_DATA_DIR || path.join(repoRoot, 'data');

export function createCaptureStore(dataDir: string = defaultDataDir()): CaptureStore {
  const dir = path.join(dataDir, 'captures');
  const tmpDir = path.join(dataDir, 'tmp');
  fs.mkdirSync(dir, { recursive: true });
  fs.mkdirSync(tmpDir, { recursive: true });
  clearLeftoverUploads(tmpDir);
  const pathOf = (sha256: string) => {
    if (!/^[0-9a-f]{64}$/.test(sha256)) throw new Error(`not a sha256: ${sha256}`);
    return path.join(dir, sha256);
  };
  return {
    dir,
    tmpDir,
    pathOf,
    async adopt(tempPath) {
      const hash = createHash('sha256');
      let size = 0;
      for await (const chunk of fs.createReadStream(tempPath, { highWaterMark: 1 << 20 })) {
        hash.update(chunk as Buffer);
        size += (chunk as Buffer).length;
      }
      const sha256 = hash.digest('hex');
      const target = pathOf(sha256);
      if (fs.existsSync(target)) fs.rmSync(tempPath, { force: true });
      else {
        fs.chmodSync(tempPath, 0o444);
        fs.renameSync(tempPath, target);
      }
      return { sha256, size };
    },
    exists: (sha256) => fs.existsSync(pathOf(sha256)),
    remove(sha256) {
      fs.rmSync(pathOf(sha256), { force: true });
    },
  };
}
