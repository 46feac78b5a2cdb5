// Benchmarks of discovery, part of `npm run bench`:
// - the settings finder on a 400 MB raw capture (a virtual file: blocks our encoder made, served
//   by offset, so no disk is needed) whose first 24 MB are an idle line, and on one busy from the
//   start — target: at most 16 MB read and an answer within 2 s;
// - field hints over 1 M frames of CP/M call envelope traffic — target: within 10 s.
import { bootCalls, readFileCalls, Tags, type ScriptCall, encodeLineBits, randomFrame, seededRng, type LineItem, renderWaveform, collect, rawChunks } from '../../shared/decoder/encode';
import { findSettings, type CaptureSource } from '../../shared/decoder/finder';
import { FieldHints, type HintFrame } from '../../shared/decoder/hints';

export interface DiscoveryRow {
  stage: string;
  mbPerS?: number;
  seconds: number;
  target: string;
  note: string;
}

const BIT_RATE = 800_000;

/** CPU seconds of this process since `c0`: the steadier figure on a shared machine */
const cpuSince = (c0: NodeJS.CpuUsage) => {
  const c = process.cpuUsage(c0);
  return (c.user + c.system) / 1e6;
};
const SPB = 10;

function rawBlock(bits: Uint8Array[]): Uint8Array {
  const w = renderWaveform({
    links: bits.map((b, i) => ({ name: `d${i}`, bits: b })),
    samplesPerBit: SPB,
    samplePeriodSeconds: 1 / (BIT_RATE * SPB),
    encoding: 'nrzi',
    clock: { name: 'clk', edge: 'rising' },
    leadBits: 0,
    tailBits: 0,
  });
  return collect(rawChunks(w, { chunkSize: 1 << 22 }));
}

function busyBits(seed: number, count: number): Uint8Array {
  const rng = seededRng(seed);
  const items: LineItem[] = [{ kind: 'flags', count: 2 }];
  for (let k = 0; k < count; k++) items.push({ kind: 'frame', bytes: randomFrame(rng, 140) }, { kind: 'flags', count: 1 + Math.floor(rng() * 3) });
  return encodeLineBits(items).bits;
}

/** A virtual capture: `idleBytes` of an idle line (clock running), then busy blocks to `size`. */
function virtualCapture(size: number, idleBytes: number): CaptureSource & { read: (o: number, l: number) => Uint8Array } {
  const idle = rawBlock([new Uint8Array(100_000).fill(1), new Uint8Array(100_000).fill(1)]);
  const a = busyBits(1, 1500);
  const b = busyBits(2, 1500);
  const n = Math.min(a.length, b.length);
  const busy = rawBlock([a.subarray(0, n), b.subarray(0, n)]);
  return {
    size,
    read(offset: number, length: number) {
      const out = new Uint8Array(Math.max(0, Math.min(length, size - offset)));
      for (let at = 0; at < out.length; ) {
        const pos = offset + at;
        const block = pos < idleBytes ? idle : busy;
        const within = pos < idleBytes ? pos % idle.length : (pos - idleBytes) % busy.length;
        const k = Math.min(out.length - at, block.length - within, pos < idleBytes ? idleBytes - pos : Infinity);
        out.set(block.subarray(within, within + k), at);
        at += k;
      }
      return out;
    },
  };
}

async function timeFinder(label: string, source: CaptureSource): Promise<DiscoveryRow> {
  let read = 0;
  const counted: CaptureSource = {
    size: source.size,
    read: (o, l) => {
      const b = source.read(o, l) as Uint8Array;
      read += b.length;
      return b;
    },
  };
  const t0 = performance.now();
  const c0 = process.cpuUsage();
  const { result } = await findSettings(counted, { sampleRate: BIT_RATE * SPB, channelNames: ['clk', 'd0', 'd1'] });
  const secs = (performance.now() - t0) / 1000;
  const cpu = cpuSince(c0);
  const best = result.best;
  return {
    stage: label,
    mbPerS: read / 1e6 / secs,
    seconds: secs,
    target: '≤ 16 MB read, ≤ 2 s',
    note: `read ${(read / 1e6).toFixed(1)} MB of ${(source.size / 1e6).toFixed(0)} MB in ${result.windows.length} window(s), ${secs.toFixed(2)} s wall, ${cpu.toFixed(2)} CPU-s; ${best ? best.label : 'nothing found'}`,
  };
}

/** 1 M frames: three stations reading files and loading a boot image, requests and answers. */
function hintFramePool(): HintFrame[] {
  const text = new TextEncoder().encode('Parish accounts, general fund, audited. '.repeat(120));
  const calls: { station: number; c: ScriptCall }[] = [];
  for (const station of [0x21, 0x22, 0x23]) {
    const tags = new Tags();
    for (const c of readFileCalls(`FILE${station}.DAT`, text, { tags, delay: 0 })) calls.push({ station, c });
    for (const c of bootCalls('BOOT.SYS', text.subarray(0, 2048), { tags, delay: 0 })) calls.push({ station, c });
  }
  const pool: HintFrame[] = [];
  let seq = 0;
  for (const { station, c } of calls) {
    pool.push({ ref: { link: `s${station}up`, seq }, direction: 'request', station, sample: seq, info: c.request });
    if (c.response) pool.push({ ref: { link: `s${station}down`, seq }, direction: 'response', station, sample: seq + 0.5, info: c.response });
    seq++;
  }
  return pool;
}

function timeHints(frames: number): DiscoveryRow {
  const pool = hintFramePool();
  const t0 = performance.now();
  const c0 = process.cpuUsage();
  const engine = new FieldHints();
  for (let i = 0; i < frames; i++) engine.push(pool[i % pool.length]);
  const report = engine.finish();
  const secs = (performance.now() - t0) / 1000;
  const cpu = cpuSince(c0);
  const hints = report.groups.reduce((n, g) => n + g.hints.length, 0);
  return {
    stage: `field hints over ${(frames / 1e6).toFixed(0)} M frames`,
    seconds: secs,
    target: '≤ 10 s',
    note: `${secs.toFixed(1)} s wall, ${cpu.toFixed(1)} CPU-s (${(frames / cpu / 1e3).toFixed(0)} k frames per CPU-s); ${report.groups.length} groups, ${hints} hints, ${report.pairs} request/answer pairs`,
  };
}

export async function benchDiscovery(): Promise<DiscoveryRow[]> {
  const rows: DiscoveryRow[] = [];
  // warm-up on a small capture, as a restorer's browser or server would have run it before
  await timeFinder('warm-up', virtualCapture(8e6, 0));
  rows.push(await timeFinder('settings finder, 400 MB raw, busy from the start', virtualCapture(400e6, 0)));
  rows.push(await timeFinder('settings finder, 400 MB raw, first 24 MB idle', virtualCapture(400e6, 24e6)));
  rows.push(timeHints(1_000_000));
  return rows;
}
