// What the settings finder found in a capture, as the API returns it (server/services/discovery-runs.ts).
import { z } from 'zod';
import type { ClockEdge, LineEncoding } from '../decoder';
import type { HintReport } from '../decoder/hints';
import type { CaptureSettingsInput, linkDirectionSchema } from './captures';

export type LinkDirectionName = z.infer<typeof linkDirectionSchema>;

export interface DiscoveryCandidate {
  key: string;
  /** "NRZ, rising edge of clk, not inverted, FCS-16" */
  label: string;
  /** the label with its counts */
  evidence: string;
  notes: string[];
  frames: number;
  good: number;
  goodShare: number;
  rateText: string | null;
  encoding: LineEncoding | null;
  edge: ClockEdge | null;
  invert: boolean;
  clock: string | null;
  fcs: 16 | 32;
  format: string;
  samplesPerBit: number | null;
  /** the channel-role form filled with this setting and the inferred directions */
  settings: CaptureSettingsInput;
}

export interface DiscoveryDirection {
  link: string;
  direction: LinkDirectionName;
  confidence: number;
  /** the evidence as sentences; for 'unknown', why it could not be told */
  reasons: string[];
  station: number | null;
  partner: string | null;
}

export interface DiscoveryStation {
  address: number;
  frames: number;
  links: { link: string; frames: number }[];
  firstSeconds: number;
  lastSeconds: number;
  suggestedName: string;
}

export interface CaptureDiscovery {
  state: 'running' | 'done' | 'failed';
  bytesRead: number;
  /** the most the finder reads */
  budget: number;
  /** set when state is 'failed' */
  error: string | null;
  /** true when some setting decoded a frame with a good FCS */
  found: boolean;
  summary: string;
  /** what was tried, one line per dimension */
  tried: string[];
  /** when nothing decoded: what to check */
  advice: string[];
  cautions: string[];
  detection: { format: string | null; reason: string; tried: string[] };
  /** best first, at most a dozen */
  candidates: DiscoveryCandidate[];
  /** how many settings were tried in all */
  candidatesTried: number;
  directions: DiscoveryDirection[];
  roster: DiscoveryStation[];
  /** field map the directions were told with */
  mapName: string | null;
}

/** GET …/field-hints: which octet of the information field splits the frames into calls */
export const fieldHintsQuerySchema = z.object({
  selector: z
    .union([z.literal('none'), z.coerce.number({ error: 'Give the selector offset as a number of octets, or "none"' }).int().min(0, 'The offset cannot be negative').max(63, 'Choose an offset within the first 64 octets')])
    .default(0),
});
export type FieldHintsQuery = z.infer<typeof fieldHintsQuerySchema>;

export interface CaptureFieldHints {
  report: HintReport;
  /** "link:seq" → frame id, for the frames the hints name */
  frameIds: Record<string, number>;
  /** links the statistics could not use, and why */
  skippedLinks: { link: string; why: string }[];
  /** true when the capture had more frames than were read */
  limited: boolean;
  /** the most frames the statistics read */
  frameLimit: number;
}
