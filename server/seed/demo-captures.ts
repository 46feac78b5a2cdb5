import fs from 'node:fs';
import path from 'node:path';
import { parseFieldMap } from '../../shared/decoder/calls';
import { captureSettingsSchema } from '../../shared/schemas';
import { captures } from '../db/schema';
import { driverOf, repoRoot } from '../db/client';
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
  const manifest = readManifest();
  return manifest ? addCaptures(m, rigId, uploadedBy, manifest.captures) : [];
}

interface Manifest {
  captures: ManifestEntry[];
  otherRigs?: { key: string; fieldMap?: string; captures: ManifestEntry[] }[];
}

function readManifest(): Manifest | null {
  const manifestPath = path.join(samplesDir(), 'manifest.json');
  return fs.existsSync(manifestPath) ? (JSON.parse(fs.readFileSync(manifestPath, 'utf8')) as Manifest) : null;
}

/**
 * The captures of another demo scenario (manifest otherRigs, by key) into its rig, decoded with
 * the scenario's reference field map, which the rig gets as a map of its own.
 */
export async function seedOtherDemoCaptures(m: CaptureModule, key: string, rigId: number, uploadedBy: number): Promise<number[]> {
  const scenario = readManifest()?.otherRigs?.find((r) => r.key === key);
  if (!scenario) return [];
  let mapId: number | null = null;
  if (scenario.fieldMap) {
    const doc = JSON.parse(fs.readFileSync(path.join(samplesDir(), scenario.fieldMap), 'utf8')) as { name: string };
    parseFieldMap(doc); // a reference map that does not validate is an error in the samples
    const now = Date.now();
    const sqlite = driverOf(m.db);
    mapId = sqlite.transaction(() => {
      const id = Number(
        sqlite
          .prepare('insert into field_maps (rig_id, name, built_in, latest_version, created_at, updated_at) values (?, ?, 0, 1, ?, ?)')
          .run(rigId, doc.name, now, now).lastInsertRowid,
      );
      sqlite.prepare('insert into field_map_versions (map_id, version, document, created_by, created_at) values (?, 1, ?, ?, ?)').run(id, JSON.stringify({ ...doc, version: 1 }), uploadedBy, now);
      return id;
    })();
  }
  return addCaptures(m, rigId, uploadedBy, scenario.captures, mapId);
}

async function addCaptures(m: CaptureModule, rigId: number, uploadedBy: number, entries: ManifestEntry[], mapId: number | null = null): Promise<number[]> {
  const ids: number[] = [];
  for (const entry of entries) {
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
    // the map is chosen before the decode, whose call stage then uses it
    if (mapId !== null) driverOf(m.db).prepare('insert into capture_call_layers (capture_id, map_id, map_version, current_run_id) values (?, ?, null, null)').run(row.id, mapId);
    startDecode(m, findCapture(m, rigId, row.id));
    ids.push(row.id);
  }
  return ids;
}
