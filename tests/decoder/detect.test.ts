import { readdirSync, readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { HEAD_BYTES, readHead } from '../../server/services/captures/upload';
import { renderWaveform, collect, csvChunks, frameLogChunks, octetsFromLineBits, rawChunks, vcdChunks } from '../../shared/decoder/encode';
import { checkHead, detectFormat, inspectHead } from '../../shared/decoder/readers';
import { randomBits, stuffed } from './support/signals';

const text = (s: string) => new TextEncoder().encode(s);

/** line bits of frames between fill flags, as a busy link carries them */
function lineBits(frames: number, seed: number): Uint8Array {
  const flag = [0, 1, 1, 1, 1, 1, 1, 0];
  const out: number[] = [...flag, ...flag];
  for (let f = 0; f < frames; f++) {
    out.push(...stuffed(randomBits(8 * (20 + (f % 50)), seed + f)), ...flag, ...flag);
  }
  return Uint8Array.from(out);
}

const waveform = renderWaveform({
  links: [
    { name: 'TxD', bits: lineBits(30, 1) },
    { name: 'RxD', bits: lineBits(30, 99) },
  ],
  samplesPerBit: 8,
  samplePeriodSeconds: 1e-7,
  encoding: 'nrzi',
  clock: { edge: 'rising', name: 'TxC' },
  handshake: [
    { name: 'RTS', initial: 0, edges: [{ bit: 5, level: 1 }] },
    { name: 'CTS', initial: 0, edges: [{ bit: 9, level: 1 }] },
  ],
  faults: { jitter: 0.05, seed: 1 },
});

describe('format detection from content', () => {
  it('recognises a value change dump by its keywords (IEEE Std 1364-2001 §18.2)', () => {
    expect(detectFormat(collect(vcdChunks(waveform))).format).toBe('vcd');
    expect(detectFormat(text('$comment hand written $end\n$timescale 1ns $end')).format).toBe('vcd');
  });

  it('recognises a CSV sample table by its header row over numeric rows (common practice)', () => {
    const csv = collect(csvChunks(waveform));
    const d = detectFormat(csv);
    expect(d.format).toBe('csv');
    expect(d.reason).toContain('"time"');
    expect(detectFormat(text('clk;data\r\n0;1\r\n1;1\r\n')).format).toBe('csv');
  });

  it('recognises a frame log by its "<seconds> <hex bytes>" lines', () => {
    const log = collect(frameLogChunks([{ seconds: 0.001, bytes: Uint8Array.of(0xff, 3, 0x3f, 0x20) }, { seconds: 0.002, bytes: Uint8Array.of(1, 0x73, 0x11, 0x22), link: 'rx' }], { comment: 'two frames' }));
    expect(detectFormat(log).format).toBe('framelog');
  });

  it('recognises raw samples: few byte values that repeat from one sample to the next', () => {
    const raw = collect(rawChunks(waveform));
    const d = detectFormat(raw.subarray(0, 16384));
    expect(d.format).toBe('raw');
    expect(d.reason).toMatch(/bits change and \d+ never do/);
  });

  it('recognises line-bit octets by their flag octets in one bit alignment', () => {
    const bits = lineBits(40, 7);
    for (const shift of [0, 3, 5]) {
      const d = detectFormat(octetsFromLineBits(bits.subarray(shift)));
      expect(d.format).toBe('octets');
    }
    // nothing but fill flags, shifted so every byte is the same rotated flag
    const fill = Uint8Array.from({ length: 800 }, (_, i) => [0, 1, 1, 1, 1, 1, 1, 0][(i + 2) % 8]);
    expect(detectFormat(octetsFromLineBits(fill)).format).toBe('octets');
  });

  it('refuses to guess on noise, on unknown text and on an empty file, and says why', () => {
    const noise = Uint8Array.from(randomBits(8 * 4096, 3).filter((_, i) => i % 8 === 0), (b, i) => (b * 131 + i * 97) & 0xff);
    expect(detectFormat(noise).format).toBeNull();
    const prose = detectFormat(text('Dear reader,\nthis is a letter.\n'));
    expect(prose).toMatchObject({ format: null });
    expect(prose.reason).toContain('neither');
    expect(detectFormat(new Uint8Array(0)).reason).toContain('empty');
  });
});

describe('head inspection', () => {
  it('lists VCD signals with their scopes and suggests clock, data and handshake roles', () => {
    const vcd = collect(vcdChunks(waveform, { scopes: { TxD: ['rig', 'port2'], RxD: ['rig', 'port2'] } }));
    const head = inspectHead(vcd.subarray(0, 60_000), 'vcd');
    expect(head.channels.map((c) => c.name)).toEqual(['TxC', 'TxD', 'RxD', 'RTS', 'CTS']);
    expect(head.channels[1].scope).toEqual(['rig', 'port2']);
    expect(head.roles.clock).toBe('TxC');
    expect(head.roles.data).toEqual(['TxD', 'RxD']);
    expect(head.roles.handshake).toEqual([
      { name: 'RTS', role: 'rts' },
      { name: 'CTS', role: 'cts' },
    ]);
    // 8 samples of 100 ns per bit
    expect(head.bitRateEstimate).toBeCloseTo(1.25e6, -4);
  });

  it('lists VCD buses apart from the 1-bit channels', () => {
    const vcd = text('$timescale 1 ns $end\n$scope module top $end\n$var wire 8 ! status $end\n$var wire 1 " clk $end\n$upscope $end\n$enddefinitions $end\n#0\n0"\n');
    const head = inspectHead(vcd, 'vcd');
    expect(head.buses).toEqual([{ name: 'status', scope: ['top'], width: 8 }]);
    expect(head.channels.map((c) => c.name)).toEqual(['clk']);
  });

  it('picks the most regularly toggling raw bit as clock without names', () => {
    const raw = collect(rawChunks(waveform)).subarray(0, 40_000);
    const head = inspectHead(raw, 'raw', { sampleRate: 1e7 });
    expect(head.rawBits).toBe(8);
    expect(head.roles.clock).toBe('0');
    expect(head.roles.data).toEqual(['1', '2', '3', '4']);
    expect(head.samplePeriodSeconds).toBe(1e-7);
  });

  it('lists CSV columns and estimates the bit rate of a capture without a clock from the data', () => {
    const noClock = renderWaveform({ links: [{ name: 'data', bits: lineBits(10, 3) }], samplesPerBit: 10, samplePeriodSeconds: 1e-7, encoding: 'nrzi' });
    const csv = collect(csvChunks(noClock));
    const head = inspectHead(csv.subarray(0, 20_000), 'csv');
    expect(head.channels.map((c) => c.name)).toEqual(['data']);
    expect(head.roles.clock).toBeNull();
    expect(head.roles.data).toEqual(['data']);
    expect(head.bitRateEstimate).toBeCloseTo(1e6, -4);
  });

  it('lists the links of a frame log', () => {
    const log = text('0.001 tx: FF 03\n0.002 rx: 01 73\n');
    expect(inspectHead(log, 'framelog').channels.map((c) => c.name)).toEqual(['tx', 'rx']);
  });
});

// Issue: three of the demo's own files were refused at upload; detection must go by content alone.
describe('format detection of every file in samples/, as an upload does it', () => {
  const manifest = JSON.parse(readFileSync('samples/manifest.json', 'utf8')) as {
    captures: { file: string; settings: { format: string; rawWidth?: number } }[];
    otherRigs: { captures: { file: string; settings: { format: string; rawWidth?: number } }[] }[];
  };
  const captures = new Map([...manifest.captures, ...manifest.otherRigs.flatMap((r) => r.captures)].map((c) => [c.file, c.settings]));
  for (const file of readdirSync('samples')) {
    const settings = captures.get(file);
    it(`${file}: ${settings ? `read as ${settings.format}` : 'refused (not a capture)'}`, () => {
      // the same head and the same function the upload route uses
      const d = detectFormat(readHead(`samples/${file}`, HEAD_BYTES));
      if (!settings) {
        expect(d.format).toBeNull();
        return;
      }
      expect(d.format).toBe(settings.format);
      if (d.format === 'raw') expect(d.rawWidth).toBe(settings.rawWidth ?? 1);
    });
  }
});

// Issue: a raw one-byte-per-sample file with a clock bit was taken for an octet stream.
describe('binary heads in doubt', () => {
  it('reads one-byte samples whose every bit changes (a clock beside 7 data lines) as samples, line bits as the alternative', () => {
    const links = Array.from({ length: 7 }, (_, k) => ({ name: `d${k}`, bits: lineBits(6, 50 + k) }));
    const w = renderWaveform({ links, samplesPerBit: 4, samplePeriodSeconds: 1 / 4e6, encoding: 'nrz', clock: { name: 'clk', edge: 'rising' } });
    const raw = collect(rawChunks(w));
    const d = detectFormat(raw.subarray(0, 65536));
    expect(d.format).toBe('raw');
    expect(d.rawWidth).toBe(1);
    expect(d.alternatives).toEqual(['octets']);
    expect(d.reason).toMatch(/some at least four times as often/);
  });

  it('keeps line bits as line bits: every position changes at about the same rate', () => {
    const d = detectFormat(octetsFromLineBits(lineBits(200, 3)));
    expect(d.format).toBe('octets');
    expect(d.alternatives ?? []).toEqual([]);
  });

  it('reads NRZI line bits by their flags once NRZI-decoded (ISO/IEC 13239: a 0 is a change of level)', () => {
    const bits = lineBits(60, 11);
    const levels = new Uint8Array(bits.length);
    let level = 1;
    bits.forEach((b, i) => {
      if (b === 0) level ^= 1;
      levels[i] = level;
    });
    const d = detectFormat(octetsFromLineBits(levels));
    expect(d.format).toBe('octets');
    expect(d.reason).toMatch(/read as NRZI/);
  });

  it('still refuses bytes that are neither', () => {
    let x = 12345;
    const noise = Uint8Array.from({ length: 65536 }, () => ((x = (x * 1103515245 + 12345) >>> 0) >>> 24));
    expect(detectFormat(noise).format).toBeNull();
  });
});

// Issue: a malformed VCD looked fine at upload and dead-ended later; the upload now names the line.
describe('checks of the head at upload', () => {
  const head = '$timescale 1 ns $end\n$var wire 1 ! d $end\n';
  it('refuses a VCD whose time goes back, naming the line', () => {
    const p = checkHead(text(`${head}$enddefinitions $end\n#0 1!\n#10 0!\n#4 1!\n`), 'vcd', true);
    expect(p).toMatchObject({ line: 6, code: 'time-back' });
  });

  it('refuses a whole VCD without $enddefinitions, but not a head cut inside a long header', () => {
    expect(checkHead(text(head), 'vcd', true)).toMatchObject({ code: 'no-enddefinitions' });
    expect(checkHead(text(head), 'vcd', false)).toBeNull();
  });

  it('refuses a CSV time that cannot be placed and one going back, not a missing sample rate', () => {
    expect(checkHead(text('time,d\n0,1\n1e999,0\n'), 'csv', true)).toMatchObject({ line: 3, code: 'time-range' });
    expect(checkHead(text('time,d\n0,1\n2,0\n1,1\n'), 'csv', true)).toMatchObject({ line: 4, code: 'time-back' });
    expect(checkHead(text('sample,d\n0,1\n1,0\n'), 'csv', true)).toBeNull();
  });

  it('passes a well-formed capture', () => {
    expect(checkHead(text(`${head}$enddefinitions $end\n#0 1!\n#10 0!\n`), 'vcd', true)).toBeNull();
  });
});
