// Demo captures decoded for the field-hints tests, from samples/manifest.json.
import { readFileSync } from 'node:fs';
import type { LinkRole } from '../../shared/decoder/calls';
import { createDecoder, type DecodedFrame } from '../../shared/decoder';
import type { CaptureSettingsInput } from '../../shared/schemas/captures';

export interface SampleEntry {
  file: string;
  settings: CaptureSettingsInput;
  expected: {
    frames: Record<string, Record<string, number>>;
    exchanges: { total: number; answered: number; retried: number; unanswered: number };
    files: { key: string; recordCount: number; missing: number[]; sha256: string }[];
  };
}

export interface Manifest {
  captures: SampleEntry[];
  otherRigs: { key: string; name: string; fieldMap: string; stations: { address: number; name: string; port: string }[]; captures: SampleEntry[] }[];
}

export const manifest = JSON.parse(readFileSync('samples/manifest.json', 'utf8')) as Manifest;

export function sampleEntry(file: string): SampleEntry {
  const e = [...manifest.captures, ...manifest.otherRigs.flatMap((r) => r.captures)].find((c) => c.file === file);
  if (!e) throw new Error(`no sample ${file} in samples/manifest.json`);
  return e;
}

/** Decodes a sample with the settings its manifest entry gives. */
export function decodeSample(e: SampleEntry): { frames: DecodedFrame[]; period: number; links: LinkRole[] } {
  const s = e.settings;
  const frames: DecodedFrame[] = [];
  const dec = createDecoder(
    {
      format: s.format,
      sampleRate: s.sampleRate == null ? undefined : Number(s.sampleRate),
      rawWidth: s.rawWidth,
      channelNames: s.channelNames && s.channelNames.length ? s.channelNames : undefined,
      clock: s.clock ?? undefined,
      data: s.links.map((l) => l.channel),
      bitRate: s.bitRate == null ? undefined : Number(s.bitRate),
      encoding: s.encoding,
      edge: s.edge,
      invert: s.invert,
    },
    { frame: (f) => frames.push(f), event: () => {} },
  );
  dec.push(new Uint8Array(readFileSync(`samples/${e.file}`)));
  dec.finish();
  if (dec.fatal()) throw new Error(dec.fatal()!.message);
  const links = s.links.map((l) => ({ link: l.channel, direction: l.direction as 'to-server' | 'from-server', station: l.stationAddress ?? undefined }));
  return { frames, period: dec.samplePeriodSeconds!, links };
}
