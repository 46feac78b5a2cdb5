// Decodes a capture and writes the decoded-capture file's lines as it goes: the browser's worker
// runs it on a local file, tests run it on the demo samples. The decoder gets the options a
// server decode gives it (the caller passes decoderOptions(settings)) with the anomaly tap on,
// as the decode worker has it, so the frames and anomalies are the ones a server decode sees.
import type { LineAnomaly } from '../decoder/faults/anomalies';
import { createDecoder, type Decoder, type DecoderOptions } from '../decoder/pipeline';
import type { DecodedFrame, DecodeIssue, LineEvent } from '../decoder/types';
import type { CaptureSettings } from '../schemas/captures';
import { anomalyLine, endLine, eventLine, frameLine, headerLine } from './lines';

/** lines joined into one part: few large strings rather than many small ones */
const LINES_PER_PART = 2000;

export interface EncoderSink {
  /** each frame with its line as written (without the newline) */
  frame?(f: DecodedFrame, line: string): void;
}

export function describeDecodeIssue(issue: DecodeIssue): string {
  const where = issue.line !== undefined ? `line ${issue.line}, byte ${issue.offset}` : `byte ${issue.offset}`;
  return `${issue.message} (at ${where})`;
}

export class DecodedCaptureEncoder {
  private readonly decoder: Decoder;
  private pending: string[] = [];
  private parts: string[] = [];
  frames = 0;
  events = 0;
  anomalies = 0;

  constructor(
    private readonly settings: CaptureSettings,
    options: DecoderOptions,
    sink: EncoderSink = {},
  ) {
    this.decoder = createDecoder(
      {
        ...options,
        anomalies: {
          anomaly: (a: LineAnomaly) => {
            this.anomalies++;
            this.line(anomalyLine(a));
          },
        },
      },
      {
        frame: (f: DecodedFrame) => {
          this.frames++;
          const line = frameLine(f);
          this.line(line);
          sink.frame?.(f, line);
        },
        event: (e: LineEvent) => {
          this.events++;
          this.line(eventLine(e));
        },
      },
    );
  }

  private line(text: string): void {
    this.pending.push(text);
    if (this.pending.length >= LINES_PER_PART) this.seal();
  }

  private seal(): void {
    if (this.pending.length === 0) return;
    this.parts.push(this.pending.join('\n') + '\n');
    this.pending = [];
  }

  /** the next bytes of the capture (not kept: the caller may reuse the array) */
  push(bytes: Uint8Array): void {
    if (!this.decoder.fatal()) this.decoder.push(bytes);
  }

  /** ends the decode; the fatal problem, if the capture could not be read */
  finish(): DecodeIssue | null {
    if (!this.decoder.fatal()) this.decoder.finish();
    this.seal();
    return this.decoder.fatal();
  }

  fatal(): DecodeIssue | null {
    return this.decoder.fatal();
  }

  get bytesRead(): number {
    return this.decoder.bytesRead;
  }

  get samplePeriodSeconds(): number | null {
    return this.decoder.samplePeriodSeconds;
  }

  /** Body parts written since the last call (each ends with a newline); the caller moves them out of the heap. */
  takeParts(): string[] {
    const out = this.parts;
    this.parts = [];
    return out;
  }

  /** The first line, known only at the end: it carries the original's checksum and the time base. */
  header(original: { name: string; size: number; sha256: string }): string {
    return (
      headerLine({
        name: original.name.slice(0, 255) || 'capture',
        size: original.size,
        sha256: original.sha256,
        settings: this.settings,
        samplePeriod: this.decoder.samplePeriodSeconds ?? 1,
        links: this.decoder.links,
        bytesRead: this.decoder.bytesRead,
        issues: this.decoder.issues.slice(0, 20).map(describeDecodeIssue),
      }) + '\n'
    );
  }

  end(): string {
    return endLine({ frames: this.frames, events: this.events, anomalies: this.anomalies }) + '\n';
  }
}
