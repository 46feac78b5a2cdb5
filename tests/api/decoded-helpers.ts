import { createHash } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { DecodedCaptureEncoder } from '../../shared/decoded-capture/encoder';
import { captureSettingsSchema, type CaptureSettings } from '../../shared/schemas';
import { decoderOptions } from '../../shared/decoder-options';

export const samplesDir = path.resolve(import.meta.dirname, '../../samples');

export interface ManifestCapture {
  file: string;
  settings: CaptureSettings;
}

export function manifestCaptures(): ManifestCapture[] {
  const m = JSON.parse(fs.readFileSync(path.join(samplesDir, 'manifest.json'), 'utf8')) as { captures: { file: string; settings: unknown }[] };
  return m.captures.map((c) => ({ file: c.file, settings: captureSettingsSchema.parse(c.settings) }));
}

/** The decoded-capture file the browser would send for this capture, made by the same encoder. */
export function decodedFileOf(file: Buffer, name: string, settings: CaptureSettings): string {
  const enc = new DecodedCaptureEncoder(settings, decoderOptions(settings));
  const bytes = new Uint8Array(file.buffer, file.byteOffset, file.length);
  for (let at = 0; at < bytes.length; at += 1 << 20) enc.push(bytes.subarray(at, at + (1 << 20)));
  const fatal = enc.finish();
  if (fatal) throw new Error(fatal.message);
  const sha256 = createHash('sha256').update(file).digest('hex');
  return enc.header({ name, size: file.length, sha256 }) + enc.takeParts().join('') + enc.end();
}
