// Seeds for the fuzzer: the head of every capture in samples/ with the settings its manifest gives.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { DecoderOptions } from '../../../shared/decoder/pipeline';
import type { CaptureFormat } from '../../../shared/decoder/types';

export interface Seed {
  name: string;
  format: CaptureFormat;
  options: DecoderOptions;
  bytes: Uint8Array;
}

interface ManifestCapture {
  file: string;
  settings: {
    format: CaptureFormat;
    sampleRate: number | null;
    rawWidth?: 1 | 2;
    channelNames?: string[];
    clock: string | null;
    links: { channel: string }[];
    handshake?: { channel: string }[];
    bitRate: number | null;
    encoding: 'nrz' | 'nrzi';
    edge: 'rising' | 'falling';
    invert: boolean;
  };
}

/** the first `headBytes` of each capture: small enough that a case takes milliseconds */
export function loadSeeds(root: string, headBytes = 24 * 1024): Seed[] {
  const manifest = JSON.parse(readFileSync(join(root, 'samples/manifest.json'), 'utf8')) as {
    captures: ManifestCapture[];
    otherRigs?: { captures: ManifestCapture[] }[];
  };
  const all = [...manifest.captures, ...(manifest.otherRigs ?? []).flatMap((r) => r.captures)];
  return all.map((c) => {
    const s = c.settings;
    const file = readFileSync(join(root, 'samples', c.file));
    let bytes: Uint8Array = new Uint8Array(file.buffer, file.byteOffset, Math.min(file.length, headBytes)).slice();
    if (s.format === 'vcd' || s.format === 'csv' || s.format === 'framelog') {
      // whole lines, and for a VCD the whole header however long the head must be
      const text = file.toString('latin1');
      const bodyAt = s.format === 'vcd' ? text.indexOf('$enddefinitions') : 0;
      const cut = text.lastIndexOf('\n', Math.max(bodyAt + 200, headBytes));
      bytes = new Uint8Array(file.buffer, file.byteOffset, cut + 1).slice();
    }
    return {
      name: c.file,
      format: s.format,
      bytes,
      options: {
        format: s.format,
        sampleRate: s.sampleRate ?? undefined,
        rawWidth: s.rawWidth,
        channelNames: s.channelNames && s.channelNames.length > 0 ? s.channelNames : undefined,
        clock: s.clock ?? undefined,
        data: s.links.map((l) => l.channel),
        handshake: (s.handshake ?? []).map((h) => h.channel),
        bitRate: s.bitRate ?? undefined,
        encoding: s.encoding,
        edge: s.edge,
        invert: s.invert,
      },
    };
  });
}
