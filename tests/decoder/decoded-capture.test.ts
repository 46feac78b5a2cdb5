import { createHash } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { DecodedCaptureEncoder } from '../../shared/decoded-capture/encoder';
import { rawFrameOf } from '../../shared/decoded-capture/lines';
import { Sha256 } from '../../shared/decoded-capture/sha256';
import { checkFrame } from '../../shared/decoder/check';
import type { DecodedFrame } from '../../shared/decoder/types';
import { captureSettingsSchema, decodedBodyLineSchema, decodedHeaderSchema } from '../../shared/schemas';
import { decoderOptions } from '../../shared/decoder-options';

const samples = path.resolve(import.meta.dirname, '../../samples');

describe('streaming SHA-256', () => {
  it('gives the FIPS 180-2 example digests', () => {
    // FIPS 180-2, appendix B.1 and B.2 (one-block and two-block messages)
    expect(new Sha256().update(new TextEncoder().encode('abc')).hex()).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
    expect(new Sha256().update(new TextEncoder().encode('abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq')).hex()).toBe(
      '248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1',
    );
    expect(new Sha256().hex()).toBe('e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855');
  });

  it('equals node:crypto over random chunk splits of every length near the block edges', () => {
    for (let len = 0; len < 200; len += 7) {
      const data = Uint8Array.from({ length: len * 13 + (len % 64) }, (_, i) => (i * 31 + len) & 0xff);
      const h = new Sha256();
      let at = 0;
      while (at < data.length) {
        const n = 1 + Math.floor(Math.random() * 97);
        h.update(data.subarray(at, at + n));
        at += n;
      }
      expect(h.hex()).toBe(createHash('sha256').update(data).digest('hex'));
    }
  });
});

describe('decoded-capture lines', () => {
  const manifest = JSON.parse(fs.readFileSync(path.join(samples, 'manifest.json'), 'utf8')) as { captures: { file: string; settings: unknown }[] };
  for (const c of manifest.captures) {
    it(`carry every frame of ${c.file} so the receiver's FCS check gives the same frame`, () => {
      const settings = captureSettingsSchema.parse(c.settings);
      const file = new Uint8Array(fs.readFileSync(path.join(samples, c.file)));
      const direct: DecodedFrame[] = [];
      const enc = new DecodedCaptureEncoder(settings, decoderOptions(settings), { frame: (f) => direct.push(f) });
      for (let at = 0; at < file.length; at += 65_536) enc.push(file.subarray(at, at + 65_536));
      expect(enc.finish()).toBeNull();
      const text = enc.header({ name: c.file, size: file.length, sha256: 'a'.repeat(64) }) + enc.takeParts().join('') + enc.end();
      const lines = text.trimEnd().split('\n');
      const header = decodedHeaderSchema.parse(JSON.parse(lines[0]));
      expect(header.settings).toEqual(settings);
      const body = lines.slice(1).map((l) => decodedBodyLineSchema.parse(JSON.parse(l)));
      const frames = body.flatMap((l) => (l.type === 'frame' ? [checkFrame(rawFrameOf(l))] : []));
      expect(frames.length).toBe(direct.length);
      expect(frames).toEqual(direct);
      expect(body.at(-1)).toEqual({ type: 'end', frames: enc.frames, events: enc.events, anomalies: enc.anomalies });
    });
  }
});
