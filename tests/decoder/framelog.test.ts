import { describe, expect, it } from 'vitest';
import { collect, frameLogChunks, type LoggedFrame } from '../../shared/decoder/encode';
import { FrameLogReader } from '../../shared/decoder/readers';
import type { ChannelInfo, ReaderOptions } from '../../shared/decoder';
import { randomSplit } from './support/signals';

const text = (s: string) => new TextEncoder().encode(s);

function read(chunks: Uint8Array[], opts: ReaderOptions = {}) {
  const frames: { link: string; first: number; last: number; bytes: number[] }[] = [];
  let header: { links: ChannelInfo[]; period: number } | null = null;
  const reader = new FrameLogReader(opts, {
    header: (links, period) => (header = { links, period }),
    frame: (link, first, last, bytes) => frames.push({ link, first, last, bytes: Array.from(bytes) }),
  });
  for (const c of chunks) reader.push(c);
  reader.finish();
  return { reader, frames, header: header as { links: ChannelInfo[]; period: number } | null };
}

describe('frame log reader', () => {
  it('reads "<seconds> <hex bytes>" lines with spaced or packed bytes, comments and blank lines', () => {
    const log = '# boot of station 3\n0.000125 FF 03 C0 A1\n\n0.0015 ff033fe0\r\n  # indented comment\n2.0e-3 0103 b2 4C\n';
    const { frames, header, reader } = read([text(log)]);
    expect(reader.issues).toEqual([]);
    expect(header).toEqual({ links: [{ index: 0, name: 'log' }], period: 1e-9 });
    expect(frames).toEqual([
      { link: 'log', first: 125_000, last: 125_000, bytes: [0xff, 0x03, 0xc0, 0xa1] },
      { link: 'log', first: 1_500_000, last: 1_500_000, bytes: [0xff, 0x03, 0x3f, 0xe0] },
      { link: 'log', first: 2_000_000, last: 2_000_000, bytes: [0x01, 0x03, 0xb2, 0x4c] },
    ]);
  });

  it('names links from a "<link>:" column and lists them in the header', () => {
    const { frames, header } = read([text('0.001 tx: FF 03\n0.002 rx: 01 73\n0.003 tx: 03 11\n')]);
    expect(header!.links.map((l) => l.name)).toEqual(['tx', 'rx']);
    expect(frames.map((f) => f.link)).toEqual(['tx', 'rx', 'tx']);
  });

  it('places the last bit of a frame by the bit rate', () => {
    // 2 octets = 16 bits at 800 kbit/s: the last bit starts 15 × 1.25 µs after the first
    const { frames } = read([text('0.001 FF 03\n')], { bitRate: 800_000 });
    expect(frames[0]).toMatchObject({ first: 1_000_000, last: 1_018_750 });
  });

  it('reports bad lines with their numbers and keeps the good ones', () => {
    const { frames, reader } = read([text('0.1 FF 0\nabc FF\n0.2 FF G1\n0.3\n0.4 01 02\n')]);
    expect(reader.issues.map((i) => [i.line, i.expected])).toEqual([
      [1, 'pairs of hex digits'],
      [2, 'a time in seconds at the start of the line'],
      [3, 'hex digits'],
      [4, 'hex bytes after the time'],
    ]);
    expect(frames.map((f) => f.bytes)).toEqual([[1, 2]]);
  });

  it('stops with a clear error when there are no frames', () => {
    expect(read([text('# nothing\n')]).reader.fatal()?.message).toContain('no frames');
  });

  it('reads back what the encoder writes, for any split into chunks', () => {
    const logged: LoggedFrame[] = [];
    for (let i = 0; i < 1500; i++) {
      const bytes = Uint8Array.from({ length: 3 + (i % 40) }, (_, k) => (i * 31 + k * 7) & 0xff);
      logged.push({ seconds: i * 0.00125 + 0.000000001 * (i % 7), bytes, link: i % 3 === 0 ? 'rx' : 'tx' });
    }
    const bytes = collect(frameLogChunks(logged, { comment: 'written by the encoder', spaced: false, chunkSize: 4096 }));
    const whole = read([bytes]);
    expect(whole.reader.issues).toEqual([]);
    expect(whole.frames.map((f) => ({ link: f.link, first: f.first, bytes: f.bytes }))).toEqual(
      logged.map((f) => ({ link: f.link, first: Math.round(f.seconds * 1e9), bytes: Array.from(f.bytes) })),
    );
    for (let seed = 1; seed <= 5; seed++) expect(read(randomSplit(bytes, seed, 500)).frames).toEqual(whole.frames);
  });
});
