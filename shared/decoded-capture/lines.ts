// Builds the lines of the decoded-capture file (shared/schemas/decoded-upload.ts) from what the
// decoder emits, and turns validated lines back into decoder values. Pure: the browser's worker
// writes with it, the server reads with it, tests hold both ends to each other.
import type { LineAnomaly } from '../decoder/faults/anomalies';
import type { DecodedFrame, LineEvent, RawFrame } from '../decoder/types';
import { DECODED_FORMAT, DECODED_VERSION } from '../schemas/decoded-format';
import type { DecodedAnomalyLine, DecodedEventLine, DecodedFrameLine, DecodedHeader } from '../schemas/decoded-upload';

const HEX = Array.from({ length: 256 }, (_, b) => b.toString(16).padStart(2, '0'));

export function hexOf(bytes: Uint8Array): string {
  let s = '';
  for (let i = 0; i < bytes.length; i++) s += HEX[bytes[i]];
  return s;
}

export function bytesOfHex(hex: string): Uint8Array {
  const out = new Uint8Array(hex.length >> 1);
  for (let i = 0; i < out.length; i++) out[i] = parseInt(hex.substr(i * 2, 2), 16);
  return out;
}

export function headerLine(h: Omit<DecodedHeader, 'type' | 'format' | 'version'>): string {
  return JSON.stringify({ type: 'header', format: DECODED_FORMAT, version: DECODED_VERSION, ...h });
}

/** The deframer's verdict only: the receiver checks the FCS itself, so bad-fcs goes as ok. */
export function frameLine(f: DecodedFrame): string {
  const line: DecodedFrameLine = {
    type: 'frame',
    link: f.link,
    seq: f.seq,
    first: f.firstSample,
    last: f.lastSample,
    bits: f.bitLength,
    bytes: hexOf(f.bytes),
    stuffed: f.stuffed,
    status: f.status === 'bad-fcs' ? 'ok' : f.status,
  };
  return JSON.stringify(line);
}

export function eventLine(e: LineEvent): string {
  const line: DecodedEventLine = { type: 'event', link: e.link, channel: e.channel, kind: e.kind, sample: e.sample };
  if (e.endSample !== undefined) line.end = e.endSample;
  if (e.count !== undefined) line.count = e.count;
  return JSON.stringify(line);
}

export function anomalyLine(a: LineAnomaly): string {
  const line: DecodedAnomalyLine = { type: 'anomaly', kind: a.kind, link: a.link, channel: a.channel, sample: a.sample, end: a.endSample, count: a.count, bits: a.bits };
  return JSON.stringify(line);
}

export function endLine(counts: { frames: number; events: number; anomalies: number }): string {
  return JSON.stringify({ type: 'end', ...counts });
}

export function rawFrameOf(l: DecodedFrameLine): RawFrame {
  return { link: l.link, seq: l.seq, firstSample: l.first, lastSample: l.last, bytes: bytesOfHex(l.bytes), bitLength: l.bits, stuffed: l.stuffed, status: l.status };
}

export function lineEventOf(l: DecodedEventLine): LineEvent {
  const e: LineEvent = { link: l.link, channel: l.channel, kind: l.kind, sample: l.sample };
  if (l.end !== undefined) e.endSample = l.end;
  if (l.count !== undefined) e.count = l.count;
  return e;
}

export function anomalyOf(l: DecodedAnomalyLine): LineAnomaly {
  return { kind: l.kind, link: l.link, channel: l.channel, sample: l.sample, endSample: l.end, count: l.count, bits: l.bits };
}

/** one frame's part of a decode's fingerprint: its line and the FCS verdict, so equal fingerprints mean equal frames */
export function fingerprintLine(f: DecodedFrame, line = frameLine(f)): string {
  return `${line} ${f.status}\n`;
}
