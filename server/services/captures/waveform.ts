import fs from 'node:fs';
import { and, desc, eq, lte, sql } from 'drizzle-orm';
import { createReader } from '../../../shared/decoder/readers';
import type { ChannelInfo, Transitions } from '../../../shared/decoder';
import type { CaptureSettings, WaveformWindow } from '../../../shared/schemas';
import { prepared } from '../../db/prepared';
import { seekPoints } from '../../db/schema';
import { HttpError } from '../../http/errors';
import type { CaptureDeps } from './deps';
import type { FrameRecord } from './frame-detail';
import { csvHeadEnd } from '../../runs/seek/csv-seek';
import { headerEnd, headerIds, resumeText } from '../../runs/seek/vcd-seek';
import { thinChanges } from './waveform-thin';

/**
 * The window is sized in line bits, not samples: a VCD with a 1 ps time unit has a million samples
 * in one bit at 800 kbit/s. At most this many bits (frame plus context) per window, so a request
 * cannot make the server read a whole huge file for one picture.
 */
export const MAX_WINDOW_BITS = 65_536;
/** raw samples and octet streams are read sample by sample: their windows also stop at this many samples */
const MAX_READ_SAMPLES = 20_000_000;
const CHUNK = 1 << 20;

/** the last seek point of a decode run at or before `sample`: a waveform window resumes the file there */
const seekPointBefore = (deps: Pick<CaptureDeps, 'db'>, jobId: number, sample: number) =>
  prepared(deps.db, 'seek point before', () =>
    deps.db
      .select({ byteOffset: seekPoints.byteOffset, sample: seekPoints.sample, levels: seekPoints.levels })
      .from(seekPoints)
      .where(and(eq(seekPoints.jobId, sql.placeholder('jobId')), lte(seekPoints.sample, sql.placeholder('sample'))))
      .orderBy(desc(seekPoints.sample))
      .limit(1)
      .prepare(),
  ).get({ jobId, sample });

type Role = WaveformWindow['channels'][number]['role'];

function wantedChannels(s: CaptureSettings): { name: string; role: Role }[] {
  const out: { name: string; role: Role }[] = [];
  if (s.clock !== null) out.push({ name: s.clock, role: 'clock' });
  for (const l of s.links) out.push({ name: l.channel, role: 'data' });
  for (const h of s.handshake) out.push({ name: h.channel, role: 'handshake' });
  return out;
}

/** Collects each wanted channel's level at fromSample and its changes up to toSample. */
class WindowSink {
  readonly level: number[] = [];
  readonly changes: [number, number][][] = [];
  index = new Map<string, number>();
  passed = false;

  constructor(
    private readonly names: string[],
    private readonly from: number,
    private readonly to: number,
    private readonly offset = 0,
  ) {}

  header(channels: ChannelInfo[]) {
    for (const c of channels) this.index.set(c.name, c.index);
    for (const c of channels) {
      this.level[c.index] = 0;
      this.changes[c.index] = [];
    }
  }

  transitions(t: Transitions) {
    for (let i = 0; i < t.n; i++) {
      const s = t.sample[i] + this.offset;
      const c = t.channel[i];
      if (s > this.to) {
        this.passed = true;
        continue;
      }
      if (s <= this.from) this.level[c] = t.value[i];
      else if (t.value[i] !== (this.changes[c].at(-1)?.[1] ?? this.level[c])) this.changes[c].push([s, t.value[i]]);
    }
  }

  result(): { name: string; changes: [number, number][] }[] {
    return this.names.map((name) => {
      const i = this.index.get(name);
      if (i === undefined) return { name, changes: [] };
      return { name, changes: [[this.from, this.level[i]] as [number, number], ...this.changes[i]] };
    });
  }
}

/** the VCD header (up to and including "$enddefinitions $end"), read in growing steps */
async function readHeader(filePath: string): Promise<Uint8Array | null> {
  const fd = await fs.promises.open(filePath, 'r');
  try {
    for (let want = 64 * 1024; want <= 64 << 20; want *= 4) {
      const buf = Buffer.alloc(want);
      const { bytesRead } = await fd.read(buf, 0, want, 0);
      const end = headerEnd(buf.subarray(0, bytesRead));
      if (end >= 0) return buf.subarray(0, end);
      if (bytesRead < want) return null;
    }
    return null;
  } finally {
    await fd.close();
  }
}

/** the CSV reader's head (header and the rows that set its time base), read in growing steps */
async function readCsvHead(filePath: string): Promise<Uint8Array | null> {
  const fd = await fs.promises.open(filePath, 'r');
  try {
    for (let want = 256 * 1024; want <= 64 << 20; want *= 4) {
      const buf = Buffer.alloc(want);
      const { bytesRead } = await fd.read(buf, 0, want, 0);
      const end = csvHeadEnd(buf.subarray(0, bytesRead));
      if (end >= 0) return buf.subarray(0, end);
      if (bytesRead < want) return null;
    }
    return null;
  } finally {
    await fd.close();
  }
}

async function readRange(filePath: string, start: number, end: number, onChunk: (b: Uint8Array) => boolean, chunkSize = CHUNK): Promise<void> {
  if (end <= start) return;
  for await (const chunk of fs.createReadStream(filePath, { start, end: end - 1, highWaterMark: chunkSize })) {
    const b = chunk as Buffer;
    if (!onChunk(new Uint8Array(b.buffer, b.byteOffset, b.length))) return;
  }
}

/**
 * Level changes of the channels around a frame: `bits` line bits of context either side of it, each
 * channel thinned to at most three changes per drawing column (`points` columns across the window).
 */
export async function waveformWindow(
  deps: CaptureDeps,
  sha256: string,
  s: CaptureSettings,
  period: number,
  f: FrameRecord,
  bits: number,
  points: number,
): Promise<WaveformWindow> {
  if (s.format === 'framelog') throw new HttpError(422, 'A frame log holds cut frames, not line samples: there is no waveform to show');
  const stuffed = (JSON.parse(f.stuffed) as number[]).length;
  const samplesPerBit = Math.max(1, (f.lastSample - f.firstSample) / Math.max(1, f.bitLength + stuffed - 1));
  const margin = Math.ceil(bits * samplesPerBit);
  const from = Math.max(0, Math.floor(f.firstSample - margin));
  const sampled = s.format === 'raw' || s.format === 'octets';
  const cap = from + Math.min(Math.ceil(MAX_WINDOW_BITS * samplesPerBit), sampled ? MAX_READ_SAMPLES : Number.MAX_SAFE_INTEGER);
  const to = Math.min(cap, Math.ceil(f.lastSample + margin));
  const wanted = wantedChannels(s);
  const filePath = deps.store.pathOf(sha256);
  const size = fs.statSync(filePath).size;
  let result: { name: string; changes: [number, number][] }[];

  if (s.format === 'octets') {
    // one line bit per sample: the level is the bit itself
    const link = s.links[0]?.channel ?? 'line';
    const changes: [number, number][] = [];
    let last = -1;
    const firstByte = Math.floor(from / 8);
    await readRange(filePath, firstByte, Math.min(size, Math.floor(to / 8) + 1), (b) => {
      for (let i = 0; i < b.length; i++) {
        for (let k = 0; k < 8; k++) {
          const sample = (firstByte + i) * 8 + k;
          if (sample < from || sample > to) continue;
          const v = (b[i] >> k) & 1;
          if (v !== last) changes.push([sample, v]);
          last = v;
        }
      }
      return true;
    });
    result = [{ name: link, changes }];
  } else if (s.format === 'raw') {
    // raw samples sit at a computable offset: read just the window
    const width = s.rawWidth;
    const sink = new WindowSink(wanted.map((w) => w.name), from, to, from);
    const reader = createReader('raw', { sampleRate: 1 / period, channelNames: s.channelNames.length ? s.channelNames : undefined, rawWidth: width }, sink);
    await readRange(filePath, from * width, Math.min(size, (to + 1) * width), (b) => {
      reader.push(b);
      return true;
    });
    reader.finish();
    result = sink.result();
  } else {
    // VCD and CSV: resume at the nearest seek point before the window; a capture without points
    // that early is read from the start up to the window
    const sink = new WindowSink(wanted.map((w) => w.name), from, to);
    const reader = createReader(s.format, { sampleRate: s.sampleRate ?? undefined }, sink);
    let startAt = 0;
    const point =
      s.format === 'vcd' || s.format === 'csv'
        ? seekPointBefore(deps, f.jobId, from)
        : undefined;
    if (point && s.format === 'csv') {
      // the file's own head gives the resumed reader the decode's time base; every row carries all levels
      const head = await readCsvHead(filePath);
      if (head && head.length <= point.byteOffset) {
        reader.push(head);
        startAt = point.byteOffset;
      }
    } else if (point) {
      const head = await readHeader(filePath);
      if (head) {
        reader.push(head);
        reader.push(resumeText({ byteOffset: point.byteOffset, sample: point.sample, levels: JSON.parse(point.levels) as number[] }, headerIds(head).ids));
        startAt = point.byteOffset;
      }
    }
    let stopped = false;
    await readRange(filePath, startAt, size, (b) => {
      reader.push(b);
      if (sink.passed || reader.fatal()) {
        stopped = true;
        return false;
      }
      return true;
    }, 64 * 1024);
    if (!stopped) reader.finish();
    result = sink.result();
  }
  return {
    fromSample: from,
    toSample: to,
    samplePeriodSeconds: period,
    samplesPerBit,
    channels: result.map((r, i) => {
      const changes = thinChanges(r.changes, from, to, points);
      return { name: r.name, role: wanted[i]?.role ?? 'data', changes, thinned: changes.length < r.changes.length };
    }),
  };
}
