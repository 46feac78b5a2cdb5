// Every demo capture in samples/ decodes to what the script that made it encoded
// (server/cli/make-samples.ts writes the expected counts into samples/manifest.json).
import { execFileSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { CPM_ENVELOPE } from '../../shared/decoder/calls/cpm-envelope';
import { CallLayer, callLayerRoles, type Exchange } from '../../shared/decoder/calls/exchanges';
import { missingRanges, recoverFiles } from '../../shared/decoder/calls/files';
import { createDecoder, type DecoderOptions } from '../../shared/decoder/pipeline';
import type { DecodedFrame } from '../../shared/decoder/types';
import { captureSettingsSchema, type CaptureSettingsInput } from '../../shared/schemas/captures';

interface ExpectedFile {
  key: string;
  recordCount: number;
  missing: number[];
  sha256: string;
}
interface Entry {
  file: string;
  server: 'original' | 'replacement';
  settings: CaptureSettingsInput;
  cli: string;
  expected: {
    frames: Record<string, Record<string, number>>;
    exchanges: { total: number; answered: number; retried: number; unanswered: number };
    files: ExpectedFile[];
  };
}

const manifest = JSON.parse(readFileSync('samples/manifest.json', 'utf8')) as { captures: Entry[] };

function decoderOptions(s: CaptureSettingsInput): DecoderOptions {
  return {
    format: s.format,
    sampleRate: s.sampleRate == null ? undefined : Number(s.sampleRate),
    rawWidth: s.rawWidth,
    channelNames: s.channelNames && s.channelNames.length ? s.channelNames : undefined,
    clock: s.clock ?? undefined,
    data: s.links.map((l) => l.channel),
    handshake: (s.handshake ?? []).map((h) => h.channel),
    bitRate: s.bitRate == null ? undefined : Number(s.bitRate),
    encoding: s.encoding,
    edge: s.edge,
    invert: s.invert,
  };
}

function decodeEntry(e: Entry) {
  const frames: DecodedFrame[] = [];
  const exchanges: Exchange[] = [];
  const { links, rts } = callLayerRoles(captureSettingsSchema.parse(e.settings));
  // the sample period is known once the decoder has read the capture's header
  let layer = null as CallLayer | null;
  const callLayer = () => (layer ??= new CallLayer({ map: CPM_ENVELOPE, links, rts, samplePeriodSeconds: dec.samplePeriodSeconds! }, { exchange: (x) => exchanges.push(x) }));
  const dec = createDecoder(decoderOptions(e.settings), {
    frame(f) {
      frames.push(f);
      callLayer().frame(f);
    },
    event(ev) {
      callLayer().event(ev);
    },
  });
  const bytes = readFileSync(`samples/${e.file}`);
  for (let at = 0; at < bytes.length; at += 1 << 16) dec.push(bytes.subarray(at, at + (1 << 16)));
  dec.finish();
  layer?.finish();
  return { dec, frames, exchanges };
}

describe('demo samples', () => {
  it('lists one capture of each input format, and a replacement-server capture', () => {
    expect(new Set(manifest.captures.map((c) => c.settings.format))).toEqual(new Set(['vcd', 'csv', 'raw', 'octets', 'framelog']));
    expect(manifest.captures.some((c) => c.settings.format === 'raw' && c.settings.clock)).toBe(true);
    expect(manifest.captures.some((c) => c.settings.format === 'raw' && !c.settings.clock)).toBe(true);
    expect(manifest.captures.filter((c) => c.server === 'replacement')).toHaveLength(1);
  });

  for (const entry of manifest.captures) {
    describe(entry.file, () => {
      it('has settings the capture settings form accepts', () => {
        expect(captureSettingsSchema.safeParse(entry.settings).success).toBe(true);
      });

      const decoded = () => decodeEntry(entry);
      let cache: ReturnType<typeof decodeEntry> | null = null;
      const get = () => (cache ??= decoded());

      it('decodes to the encoded frames, damaged ones included', () => {
        const { dec, frames } = get();
        expect(dec.fatal()).toBeNull();
        const counts: Record<string, Record<string, number>> = {};
        for (const f of frames) {
          counts[f.link] ??= { ok: 0, 'bad-fcs': 0 };
          counts[f.link][f.status] = (counts[f.link][f.status] ?? 0) + 1;
        }
        expect(counts).toEqual(entry.expected.frames);
      });

      it('pairs the encoded exchanges with their outcomes', () => {
        const { exchanges } = get();
        const count = (o: string) => exchanges.filter((x) => x.outcome === o).length;
        expect({ total: exchanges.length, answered: count('answered'), retried: count('retried'), unanswered: count('unanswered') }).toEqual(entry.expected.exchanges);
      });

      it('recovers the encoded files byte for byte, missing records shown as missing', () => {
        const files = recoverFiles(get().exchanges).filter((f) => f.recordCount > 0);
        const got = files.map((f) => ({
          key: f.key,
          recordCount: f.recordCount,
          missing: missingRanges(f.coverage).flatMap(([a, b]) => Array.from({ length: b - a + 1 }, (_, i) => a + i)),
          sha256: createHash('sha256').update(f.bytes).digest('hex'),
        }));
        expect(got).toEqual(entry.expected.files);
      });
    });
  }

  it('decodes every sample with the CLI as samples/README.md tells', () => {
    for (const entry of manifest.captures) {
      const args = entry.cli.replace(/^npm run --silent decode -- /, '').split(' ');
      const out = execFileSync('npx', ['tsx', 'server/cli/decode.ts', ...args], { encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] });
      const lines = out.trim().split('\n').map((l) => JSON.parse(l) as { link: string; status: string });
      const total = Object.values(entry.expected.frames).reduce((n, c) => n + c.ok + c['bad-fcs'], 0);
      expect(lines, entry.file).toHaveLength(total);
    }
  });
});
