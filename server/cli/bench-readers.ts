// `npm run bench -- --readers`: each reader alone (bytes in, transitions, bits or frames out to a
// sink that only counts), MB/s of input, best of three passes over a capture made by our encoder.
import { renderWaveform } from '../../shared/decoder/encode';
import { collect } from '../../shared/decoder/encode';
import { csvChunks } from '../../shared/decoder/encode';
import { frameLogChunks } from '../../shared/decoder/encode';
import { octetsFromLineBits } from '../../shared/decoder/encode';
import { rawChunks } from '../../shared/decoder/encode';
import { vcdChunks } from '../../shared/decoder/encode';
import { seededRandom } from '../../shared/decoder/encode';
import { createReader } from '../../shared/decoder/readers';
import type { CaptureFormat, ReaderOptions } from '../../shared/decoder';

const BIT_RATE = 800_000;
const SAMPLES_PER_BIT = 10;
const CHUNK = 1 << 20;

/** line bits of busy traffic: frames of random bytes between flags, stuffed (ISO/IEC 13239) */
function lineBits(bits: number, seed: number): Uint8Array {
  const rnd = seededRandom(seed);
  const out = new Uint8Array(bits);
  let n = 0;
  const put = (b: number) => {
    if (n < bits) out[n++] = b;
  };
  while (n < bits) {
    for (const b of [0, 1, 1, 1, 1, 1, 1, 0]) put(b);
    const len = 8 * (20 + Math.floor(rnd() * 120));
    let ones = 0;
    for (let i = 0; i < len && n < bits; i++) {
      const b = rnd() < 0.5 ? 1 : 0;
      put(b);
      ones = b ? ones + 1 : 0;
      if (ones === 5) {
        put(0);
        ones = 0;
      }
    }
  }
  return out;
}

function time(format: CaptureFormat, opts: ReaderOptions, bytes: Uint8Array): number {
  let best = Infinity;
  for (let run = 0; run < 3; run++) {
    let count = 0;
    const sink = {
      header: () => {},
      transitions: (t: { n: number }) => (count += t.n),
      bits: (_l: string, c: { n: number }) => (count += c.n),
      frame: () => count++,
    };
    const r = createReader(format, opts, sink as never);
    const t0 = performance.now();
    for (let at = 0; at < bytes.length; at += CHUNK) r.push(bytes.subarray(at, at + CHUNK));
    r.finish();
    best = Math.min(best, performance.now() - t0);
    if (r.fatal()) throw new Error(`${format}: ${r.fatal()!.message}`);
    if (count === 0) throw new Error(`${format}: the reader gave nothing`);
  }
  return bytes.length / 1e6 / (best / 1000);
}

export function benchReaders(out: (line: string) => void): void {
  const bits = 2_000_000;
  const w = renderWaveform({
    links: [
      { name: 'tx', bits: lineBits(bits, 1) },
      { name: 'rx', bits: lineBits(bits, 2) },
    ],
    samplesPerBit: SAMPLES_PER_BIT,
    samplePeriodSeconds: 1 / (BIT_RATE * SAMPLES_PER_BIT),
    encoding: 'nrzi',
    clock: { name: 'clk', edge: 'rising' },
  });
  const inputs: { name: string; format: CaptureFormat; opts: ReaderOptions; bytes: Uint8Array }[] = [
    { name: 'VCD (clock + 2 links, 1 ns)', format: 'vcd', opts: {}, bytes: collect(vcdChunks(w, { timescale: '1 ns' })) },
    { name: 'CSV (change rows, seconds)', format: 'csv', opts: {}, bytes: collect(csvChunks(w)) },
    { name: 'raw, 1 byte per sample', format: 'raw', opts: { sampleRate: BIT_RATE * SAMPLES_PER_BIT }, bytes: collect(rawChunks(w)) },
    { name: 'raw, 2 bytes per sample', format: 'raw', opts: { sampleRate: BIT_RATE * SAMPLES_PER_BIT, rawWidth: 2 }, bytes: collect(rawChunks(w, { width: 2 })) },
    { name: 'line octets', format: 'octets', opts: { bitRate: BIT_RATE }, bytes: octetsFromLineBits(lineBits(8 * 32_000_000, 3)) },
    {
      name: 'frame log',
      format: 'framelog',
      opts: { bitRate: BIT_RATE },
      bytes: collect(
        frameLogChunks(
          (function* () {
            const rnd = seededRandom(4);
            for (let i = 0; i < 200_000; i++) yield { seconds: i * 0.002, link: i % 2 ? 'tx' : 'rx', bytes: Uint8Array.from({ length: 20 + (i % 100) }, () => Math.floor(rnd() * 256)) };
          })(),
        ),
      ),
    },
  ];
  out(`Readers alone (${BIT_RATE / 1000} kbit/s links, ${SAMPLES_PER_BIT} samples per bit; 1 MiB chunks; best of 3):`);
  out(`${'reader'.padEnd(32)}${'input MB'.padStart(10)}${'MB/s'.padStart(10)}`);
  for (const i of inputs) {
    const rate = time(i.format, i.opts, i.bytes);
    out(`${i.name.padEnd(32)}${(i.bytes.length / 1e6).toFixed(1).padStart(10)}${rate.toFixed(0).padStart(10)}`);
  }
}
