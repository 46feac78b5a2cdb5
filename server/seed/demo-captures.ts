import fs from 'node:fs';
import path from 'node:path';
import { captureSettingsSchema } from '../../shared/schemas';
import { captures } from '../db/schema';
import { repoRoot } from '../db/client';
import { startDecode } from '../services/captures/jobs';
import type { CaptureModule } from '../services/captures/module';
import { findCapture } from '../services/captures/rows';
import { saveSettings } from '../services/captures/settings';

interface ManifestEntry {
  file: string;
  title: string;
  settings: unknown;
}

export const samplesDir = () => path.join(repoRoot, 'samples');

/**
 * Loads the demo captures listed in samples/manifest.json into the demo rig, with their channel
 * roles, and queues their decoding — so a newcomer's first look shows decoded traffic.
 * Returns the queued capture ids. A manifest entry whose settings do not validate is an error in
 * the samples, not in the user's data: it stops the seed loudly.
 */
export async function seedDemoCaptures(m: CaptureModule, rigId: number, uploadedBy: number): Promise<number[]> {
  const manifestPath = path.join(samplesDir(), 'manifest.json');
  if (!fs.existsSync(manifestPath)) return [];
  const manifest = JSON.parse(fs.readFileSync(manifestPath, 'utf8')) as { captures: ManifestEntry[] };
  const ids: number[] = [];
  for (const entry of manifest.captures) {
    const settings = captureSettingsSchema.parse(entry.settings);
    const temp = path.join(m.store.tmpDir, `demo-${process.pid}-${entry.file}`);
    fs.copyFileSync(path.join(samplesDir(), entry.file), temp);
    const { sha256, size } = await m.store.adopt(temp);
    const row = m.db
      .insert(captures)
      .values({ rigId, name: entry.file, size, sha256, format: settings.format, detectReason: entry.title, uploadedBy })
      .returning()
      .get();
    saveSettings(m, row, settings);
    startDecode(m, findCapture(m, rigId, row.id));
    ids.push(row.id);
  }
  return ids;
}
