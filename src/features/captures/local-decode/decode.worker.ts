/// <reference lib="webworker" />
// Decodes a local capture file in the browser, off the page's thread: the settings finder on the
// file's head (and windows spread over it), then one streaming pass of the decoder over
// File.stream() that also hashes the file and writes the decoded-capture file's lines. Only
// shared/ code runs here (pure TypeScript); nothing of the file is kept beyond the chunk in hand,
// and the lines written so far go to disk (decoded-output.ts), so memory stays flat on large files.
import { DecodedCaptureEncoder } from '../../../../shared/decoded-capture/encoder';
import { Sha256 } from '../../../../shared/decoded-capture/sha256';
import { discover, type CaptureSource } from '../../../../shared/decoder/finder';
import type { DecodedFrame } from '../../../../shared/decoder';
// the decoded-capture file's names without its schemas: the worker loads no validation library,
// which took a quarter of a second of its start (the page validates the settings it is sent)
import { DECODED_MEDIA_TYPE } from '../../../../shared/schemas/decoded-format';
import type { CaptureSettings } from '../../../../shared/schemas';
import { decoderOptions } from '../../../../shared/decoder-options';
import { fingerprintLine } from '../../../../shared/decoded-capture/lines';
import { openDecodedOutput } from './decoded-output';
import type { FromWorker, LinkCounts, LocalHints, PreviewFrame, ToWorker } from './messages';

declare const self: DedicatedWorkerGlobalScope;

const post = (m: FromWorker) => self.postMessage(m);
const PROGRESS_MS = 150;
/** frames shown while the decode runs */
const PREVIEW_FRAMES = 40;

function fileSource(file: File): CaptureSource {
  return { size: file.size, read: async (offset, length) => new Uint8Array(await file.slice(offset, offset + length).arrayBuffer()) };
}

async function find(file: File, hints: LocalHints): Promise<void> {
  const d = await discover(fileSource(file), hints, (p) => post({ type: 'find-progress', bytesRead: p.bytesRead, budget: p.budget }));
  const candidate = d.settings ? { ...d.settings, sampleRate: d.settings.sampleRate ?? hints.sampleRate ?? null } : null;
  post({ type: 'found', candidate, summary: d.finder.summary, advice: d.finder.found ? [] : [...d.finder.advice, ...d.finder.cautions] });
}

function summaryOf(f: DecodedFrame): string {
  const d = f.decode;
  if (!d) return f.status === 'short' ? 'too short for address and control' : '';
  const n = d.kind === 'I' ? ` N(S)=${d.ns} N(R)=${d.nr}` : d.kind === 'S' ? ` N(R)=${d.nr}` : '';
  return `addr ${d.address.toString(16).padStart(2, '0')} ${d.command}${n}${d.pf ? ' P/F' : ''}${d.infoLength ? `, ${d.infoLength} octets` : ''}`;
}

function preview(f: DecodedFrame, period: number): PreviewFrame {
  let hex = '';
  for (let i = 0; i < Math.min(f.bytes.length, 24); i++) hex += f.bytes[i].toString(16).padStart(2, '0') + ' ';
  return { link: f.link, seq: f.seq, seconds: f.firstSample * period, status: f.status, summary: summaryOf(f), hex: hex.trim() + (f.bytes.length > 24 ? ' …' : '') };
}

/** bytes read per step, into one buffer that goes back and forth with the stream */
const READ_BYTES = 1 << 20;
/** bytes the decoder takes at a time until the first frame is out */
const FIRST_STEP = 1 << 16;

/**
 * The file's bytes through File.stream(). A byte stream is read into one reused buffer (BYOB):
 * the default reader hands out a new array per chunk, and on a fast read of a large file the
 * collector falls so far behind that the tab grew past 500 MB on a 400 MB file doing nothing else.
 */
async function* fileChunks(file: File): AsyncGenerator<Uint8Array, void, undefined> {
  const stream = file.stream();
  let byob: ReadableStreamBYOBReader | null;
  try {
    byob = stream.getReader({ mode: 'byob' });
  } catch {
    byob = null;
  }
  if (!byob) {
    const reader = stream.getReader();
    try {
      for (;;) {
        const { done, value } = await reader.read();
        if (done) return;
        yield value;
      }
    } finally {
      reader.releaseLock();
    }
  }
  let buffer = new ArrayBuffer(READ_BYTES);
  try {
    for (;;) {
      const { done, value } = await byob.read(new Uint8Array(buffer, 0, READ_BYTES));
      if (done || !value) return;
      yield value;
      buffer = value.buffer;
    }
  } finally {
    await byob.cancel().catch(() => undefined);
  }
}

async function decode(file: File, settings: CaptureSettings): Promise<void> {
  const started = performance.now();
  const counts = new Map<string, Record<string, number>>();
  const fingerprint = new Sha256();
  const utf8 = new TextEncoder();
  // one reused buffer for the fingerprint's input: no array per frame (a longer line gets its own)
  let scratch = new Uint8Array(1 << 16);
  const utf8Of = (text: string): Uint8Array => {
    if (text.length * 3 > scratch.length) scratch = new Uint8Array(text.length * 3);
    const { written } = utf8.encodeInto(text, scratch);
    return scratch.subarray(0, written);
  };
  let shown: PreviewFrame[] = [];
  let previewed = 0;
  let first: PreviewFrame | null = null;
  let last: DecodedFrame | null = null;
  const period = () => enc.samplePeriodSeconds ?? 1;
  const enc = new DecodedCaptureEncoder(settings, decoderOptions(settings), {
    frame: (f, line) => {
      const c = counts.get(f.link) ?? {};
      c[f.status] = (c[f.status] ?? 0) + 1;
      counts.set(f.link, c);
      fingerprint.update(utf8Of(fingerprintLine(f, line)));
      last = f;
      if (previewed < PREVIEW_FRAMES) {
        const p = preview(f, period());
        first ??= p;
        shown.push(p);
        previewed++;
      }
    },
  });
  const hash = new Sha256();
  const output = await openDecodedOutput();
  const chunks = fileChunks(file);
  let bytes = 0;
  let lastReport = 0;
  for (;;) {
    const { done, value } = await chunks.next();
    if (done) break;
    // until the first frames are out, the decoder takes the bytes in small steps, each followed by
    // a look for frames: the first frames then go out without waiting for a whole read (1 MB, which
    // the decoder and the hash take slowly while they are not yet compiled); the hash follows
    let at = 0;
    while (first === null && at < value.length && !enc.fatal()) {
      enc.push(value.subarray(at, Math.min(value.length, at + FIRST_STEP)));
      at += FIRST_STEP;
      if (shown.length > 0) {
        post({ type: 'frames', frames: shown });
        shown = [];
      }
    }
    if (at < value.length) enc.push(value.subarray(at));
    hash.update(value);
    bytes += value.length;
    if (enc.fatal()) break;
    for (const part of enc.takeParts()) output.write(part);
    const now = performance.now();
    // the first frames go out as soon as there are any, then with the progress
    if (shown.length > 0 && (now - lastReport >= PROGRESS_MS || previewed === shown.length)) {
      post({ type: 'frames', frames: shown });
      shown = [];
    }
    if (now - lastReport >= PROGRESS_MS) {
      post({ type: 'progress', bytesRead: bytes, total: file.size, frames: enc.frames });
      lastReport = now;
    }
  }
  const fatal = enc.finish();
  if (fatal) {
    await chunks.return(undefined);
    post({ type: 'failed', error: `The capture could not be decoded with these settings: ${fatal.message}` });
    return;
  }
  if (shown.length > 0) post({ type: 'frames', frames: shown });
  post({ type: 'progress', bytesRead: bytes, total: file.size, frames: enc.frames });
  for (const part of enc.takeParts()) output.write(part);
  const sha256 = hash.hex();
  const out = await output.finish(enc.header({ name: file.name, size: file.size, sha256 }), enc.end(), DECODED_MEDIA_TYPE);
  const lastFrame = last as DecodedFrame | null;
  const links: LinkCounts[] = [...counts].map(([link, byStatus]) => ({ link, byStatus }));
  post({
    type: 'done',
    result: {
      file: out,
      sha256,
      frames: enc.frames,
      events: enc.events,
      anomalies: enc.anomalies,
      links,
      first,
      last: lastFrame ? preview(lastFrame, period()) : null,
      framesFingerprint: fingerprint.hex(),
      seconds: (performance.now() - started) / 1000,
      warnings: [],
    },
  });
}

self.onmessage = (e: MessageEvent<ToWorker>) => {
  const m = e.data;
  const run = m.type === 'find' ? find(m.file, m.hints) : decode(m.file, m.settings);
  run.catch((err: unknown) => post({ type: 'failed', error: err instanceof Error ? err.message : String(err) }));
};
