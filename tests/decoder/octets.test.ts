import { describe, expect, it } from 'vitest';
import { octetsFromLineBits } from '../../shared/decoder/encode';
import { OctetReader } from '../../shared/decoder/readers';
import type { ChannelInfo, ReaderOptions } from '../../shared/decoder';
import { randomBits, randomSplit } from './support/signals';

function read(chunks: Uint8Array[], opts: ReaderOptions = {}) {
  const bits: number[] = [];
  const samples: number[] = [];
  let header: { links: ChannelInfo[]; period: number } | null = null;
  const links = new Set<string>();
  const reader = new OctetReader(opts, {
    header: (l, period) => (header = { links: l, period }),
    bits: (link, c) => {
      links.add(link);
      for (let i = 0; i < c.n; i++) {
        bits.push(c.bits[i]);
        samples.push(c.samples[i]);
      }
    },
  });
  for (const c of chunks) reader.push(c);
  reader.finish();
  return { reader, bits, samples, header: header as { links: ChannelInfo[]; period: number } | null, links };
}

describe('octet stream reader', () => {
  it('takes 8 line bits per byte, least significant bit first (ISO/IEC 13239:2002: octets are sent LSB first, from memory)', () => {
    const { bits, samples } = read([Uint8Array.of(0x7e, 0x01, 0x80)]);
    expect(bits).toEqual([0, 1, 1, 1, 1, 1, 1, 0, 1, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 1]);
    expect(samples).toEqual(bits.map((_, i) => i));
  });

  it('uses the bit rate as time base and the first channel name as link', () => {
    const { header, links } = read([Uint8Array.of(1)], { bitRate: 800_000, channelNames: ['port 2'] });
    expect(header).toEqual({ links: [{ index: 0, name: 'port 2' }], period: 1 / 800_000 });
    expect([...links]).toEqual(['port 2']);
    expect(read([Uint8Array.of(1)]).header).toEqual({ links: [{ index: 0, name: 'line' }], period: 1 });
  });

  it('gives identical output for any split, across chunk boundaries of the bit buffer', () => {
    const bits = randomBits(8 * 5000, 4);
    const bytes = octetsFromLineBits(bits);
    const whole = read([bytes]);
    expect(whole.bits).toEqual(Array.from(bits));
    for (let seed = 1; seed <= 5; seed++) {
      const split = read(randomSplit(bytes, seed, 3000));
      expect(split.bits).toEqual(whole.bits);
      expect(split.samples).toEqual(whole.samples);
      expect(split.reader.bytesRead).toBe(bytes.length);
    }
  });

  it('pads the last partial octet of written line bits with idle 1s', () => {
    expect(Array.from(octetsFromLineBits(Uint8Array.of(0, 1, 0)))).toEqual([0b11111010]);
  });

  it('stops with a clear error on an empty stream', () => {
    expect(read([]).reader.fatal()?.message).toContain('empty');
  });
});
