// What the page and the decode worker say to each other.
import type { CaptureSettings } from '../../../../shared/schemas';

/** what the user told us about the file before the finder looks at it (raw samples carry no time base or names) */
export interface LocalHints {
  sampleRate?: number;
  rawWidth?: 1 | 2;
  channelNames?: string[];
  bitRate?: number;
}

export type ToWorker = { type: 'find'; file: File; hints: LocalHints } | { type: 'decode'; file: File; settings: CaptureSettings };

/** a frame as the preview shows it */
export interface PreviewFrame {
  link: string;
  seq: number;
  seconds: number;
  status: string;
  summary: string;
  hex: string;
}

export interface LinkCounts {
  link: string;
  byStatus: Record<string, number>;
}

export interface LocalResult {
  /** the decoded-capture file (NDJSON) ready to upload */
  file: Blob;
  sha256: string;
  frames: number;
  events: number;
  anomalies: number;
  links: LinkCounts[];
  first: PreviewFrame | null;
  last: PreviewFrame | null;
  /** SHA-256 over the frame lines: two decodes with the same frames have the same fingerprint */
  framesFingerprint: string;
  seconds: number;
  warnings: string[];
}

export type FromWorker =
  | { type: 'find-progress'; bytesRead: number; budget: number }
  /** the finder's settings, not yet validated (the page checks them against the settings schema) */
  | { type: 'found'; candidate: Record<string, unknown> | null; summary: string; advice: string[] }
  | { type: 'progress'; bytesRead: number; total: number; frames: number }
  | { type: 'frames'; frames: PreviewFrame[] }
  | { type: 'done'; result: LocalResult }
  | { type: 'failed'; error: string };
