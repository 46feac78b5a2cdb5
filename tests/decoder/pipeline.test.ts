import { describe, expect, it } from 'vitest';
import { seededRng, collect, csvChunks, frameLogChunks, octetsFromLineBits, rawChunks, vcdChunks } from '../../shared/decoder/encode';
import { fcs16 } from '../../shared/decoder';
import { clockedWaveform, encodeLineBits, runDecoder, traffic } from './pipeline-helpers';

const twoLinks = () => {
  const a = traffic(1, 30);
  const b = traffic(2, 30);
  const ea = encodeLineBits(a.items);
  const eb = encodeLineBits(b.items);
  const w = clockedWaveform([
    { name: 'tx', bits: ea.bits },
    { name: 'rx', bits: eb.bits },
  ]);
  return { a, b, w, ea };
};

describe('createDecoder', () => {
  it('decodes a clocked raw capture with two links into frames in time order across links', () => {
    const { a, b, w, ea } = twoLinks();
    const raw = collect(rawChunks(w));
    const { frames, dec } = runDecoder(
      { format: 'raw', sampleRate: 1e7, channelNames: ['clk', 'tx', 'rx'], clock: 'clk', data: ['tx', 'rx'] },
      raw,
    );
    expect(dec.fatal()).toBeNull();
    expect(dec.links).toEqual(['tx', 'rx']);
    expect(dec.samplePeriodSeconds).toBeCloseTo(1e-7);
    const tx = frames.filter((f) => f.link === 'tx');
    const rx = frames.filter((f) => f.link === 'rx');
    expect(tx).toHaveLength(a.sent.length);
    expect(rx).toHaveLength(b.sent.length);
    // Octets as sent, faults (flipped bits) included.
    tx.forEach((f, i) => expect(Array.from(f.bytes)).toEqual(Array.from(ea.frames[i].wire)));
    for (let i = 1; i < frames.length; i++) expect(frames[i].firstSample).toBeGreaterThanOrEqual(frames[i - 1].firstSample);
    const statuses = new Set(frames.map((f) => f.status));
    expect(statuses.has('ok')).toBe(true);
    expect(statuses.has('bad-fcs')).toBe(true);
    expect(statuses.has('residue')).toBe(true);
  });

  it('gives the same frames for any split of the capture bytes into chunks', () => {
    const { w } = twoLinks();
    const raw = collect(rawChunks(w));
    const opts = { format: 'raw' as const, sampleRate: 1e7, channelNames: ['clk', 'tx', 'rx'], clock: 'clk', data: ['tx', 'rx'] };
    const whole = runDecoder(opts, raw, [raw.length]).frames;
    const rng = seededRng(8);
    const split = runDecoder(opts, raw, Array.from({ length: 9 }, () => 1 + Math.floor(rng() * 5000))).frames;
    expect(split).toEqual(whole);
  });

  it("gives the same frames with the CLI's options (line events off, frames' octets in shared blocks) for any split", () => {
    const { w } = twoLinks();
    const raw = collect(rawChunks(w));
    const opts = { format: 'raw' as const, sampleRate: 1e7, channelNames: ['clk', 'tx', 'rx'], clock: 'clk', data: ['tx', 'rx'] };
    for (const rawFastPath of [true, false]) {
      const reference = runDecoder({ ...opts, rawFastPath }, raw, [raw.length]);
      expect(reference.events.length).toBeGreaterThan(0);
      const rng = seededRng(9);
      const lean = runDecoder({ ...opts, rawFastPath, lineEvents: false, sharedFrameBytes: true }, raw, Array.from({ length: 9 }, () => 1 + Math.floor(rng() * 5000)));
      expect(lean.events).toEqual([]);
      expect(lean.frames).toEqual(reference.frames);
    }
  });

  it('detects a VCD capture and decodes it like the raw one', () => {
    const { w } = twoLinks();
    const raw = runDecoder({ format: 'raw', sampleRate: 1e7, channelNames: ['clk', 'tx', 'rx'], clock: 'clk', data: ['tx', 'rx'] }, collect(rawChunks(w)));
    const vcd = runDecoder({ format: 'auto', clock: 'clk', data: ['tx', 'rx'] }, collect(vcdChunks(w, { timescale: '1 ns' })));
    expect(vcd.dec.format).toBe('vcd');
    expect(vcd.dec.fatal()).toBeNull();
    expect(vcd.frames.map((f) => [f.link, f.status, Array.from(f.bytes)])).toEqual(raw.frames.map((f) => [f.link, f.status, Array.from(f.bytes)]));
  });

  it('decodes a CSV sample table', () => {
    const { a, w } = twoLinks();
    const csv = runDecoder({ format: 'csv', clock: 'clk', data: ['tx'] }, collect(csvChunks(w)));
    expect(csv.dec.fatal()).toBeNull();
    expect(csv.frames).toHaveLength(a.sent.length);
  });

  it('recovers the clock from the data when no clock channel is given', () => {
    const a = traffic(3, 20, false);
    const w = clockedWaveform([{ name: 'tx', bits: encodeLineBits(a.items).bits }], { clock: undefined, samplesPerBit: 8 });
    const { frames, dec } = runDecoder(
      { format: 'raw', sampleRate: 1e7, channelNames: ['tx'], data: ['tx'], bitRate: 1e7 / 8 },
      collect(rawChunks(w)),
    );
    expect(dec.fatal()).toBeNull();
    expect(frames.map((f) => f.status)).toEqual(a.sent.map(() => 'ok'));
  });

  it('decodes NRZI, inverted lines', () => {
    const a = traffic(4, 15, false);
    const w = clockedWaveform([{ name: 'tx', bits: encodeLineBits(a.items).bits }], { encoding: 'nrzi', invert: true });
    const { frames } = runDecoder(
      { format: 'raw', sampleRate: 1e7, channelNames: ['clk', 'tx'], clock: 'clk', data: ['tx'], encoding: 'nrzi', invert: true },
      collect(rawChunks(w)),
    );
    expect(frames.map((f) => f.status)).toEqual(a.sent.map(() => 'ok'));
  });

  it('decodes an octet stream of line bits', () => {
    const a = traffic(5, 25);
    const enc = encodeLineBits(a.items);
    const { frames, dec } = runDecoder({ format: 'auto', channelNames: ['port2'] }, octetsFromLineBits(enc.bits), [100]);
    expect(dec.format).toBe('octets');
    expect(frames).toHaveLength(a.sent.length);
    expect(frames[0].link).toBe('port2');
    frames.forEach((f, i) => expect(f.firstSample).toBe(enc.frames[i].startBit));
  });

  it('checks the FCS of frames from a frame log (RFC 1662 appendix C byte order)', () => {
    const body = new TextEncoder().encode('123456789');
    const good = new Uint8Array([...body, 0x6e, 0x90]);
    const bad = new Uint8Array([...body, 0x6e, 0x91]);
    const log = collect(
      frameLogChunks([
        { seconds: 0.5, bytes: good, link: 'tx' },
        { seconds: 0.75, bytes: bad, link: 'rx' },
        { seconds: 1, bytes: new Uint8Array([1, 2]), link: 'tx' },
      ]),
    );
    const { frames, dec } = runDecoder({ format: 'framelog' }, log);
    expect(dec.fatal()).toBeNull();
    expect(frames.map((f) => [f.link, f.status])).toEqual([
      ['tx', 'ok'],
      ['rx', 'bad-fcs'],
      ['tx', 'short'],
    ]);
    expect(frames[0].fcsReceived).toBe(fcs16(body));
    // 0x91 vs 0x90 differs in bit 0 of the last octet: bit 9*8+8 = 80 in transmission order.
    expect(frames[1].flippedBit).toBe(80);
  });

  it('names the channels that exist when asked for one that does not', () => {
    const { w } = twoLinks();
    const { dec, frames } = runDecoder(
      { format: 'raw', sampleRate: 1e7, channelNames: ['clk', 'tx', 'rx'], clock: 'clk', data: ['txd'] },
      collect(rawChunks(w)),
    );
    expect(frames).toEqual([]);
    const issue = dec.fatal()!;
    expect(issue.message).toContain('"txd"');
    expect(issue.message).toContain('clk, tx, rx');
  });

  it('asks for the bit rate when there is no clock channel', () => {
    const { w } = twoLinks();
    const { dec } = runDecoder({ format: 'raw', sampleRate: 1e7, channelNames: ['clk', 'tx', 'rx'], data: ['tx'] }, collect(rawChunks(w)));
    expect(dec.fatal()?.expected).toMatch(/bit rate/);
  });

  it('reports a file it cannot recognise', () => {
    const { dec } = runDecoder({ format: 'auto', data: ['x'] }, new TextEncoder().encode('hello there\nthis is prose, not a capture\n'));
    expect(dec.fatal()?.message).toMatch(/format/);
  });

  it('passes handshake changes on as line events', () => {
    const a = traffic(6, 5, false);
    const w = clockedWaveform([{ name: 'tx', bits: encodeLineBits(a.items).bits }], {
      handshake: [{ name: 'rts', initial: 0, edges: [{ bit: 4, level: 1 }, { bit: 200, level: 0 }] }],
    });
    const { events } = runDecoder(
      { format: 'raw', sampleRate: 1e7, channelNames: ['clk', 'tx', 'rts'], clock: 'clk', data: ['tx'], handshake: ['rts'] },
      collect(rawChunks(w)),
    );
    expect(events.filter((e) => e.channel === 'rts').map((e) => e.kind)).toEqual(['rise', 'fall']);
  });
});
