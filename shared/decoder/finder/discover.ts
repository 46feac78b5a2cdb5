// Everything a capture reveals about how to decode it, in one call: the settings finder's
// ranking, the frames of the best setting decoded again from the windows it read, each link's
// direction with its reasons, the station roster, and capture settings to prefill the form.
import type { FieldMap } from '../calls/field-map';
import { createDecoder, type DecoderOptions } from '../pipeline';
import type { ClockEdge, DecodedFrame, LineEncoding } from '../types';
import { inferDirections, stationRoster, type DirectionVerdict, type InferredDirection, type RosterStation } from './directions';
import { findSettings, type CaptureSource, type FinderOptions, type FinderProgress, type FinderResult, type SettingsFinder } from './finder';
import type { FinderCandidate } from './rank';

/** Capture settings in the shape of the channel-role form (shared/schemas/captures.ts), plus the FCS width. */
export interface SuggestedSettings {
  format: FinderCandidate['format'];
  sampleRate: number | null;
  rawWidth: 1 | 2;
  channelNames: string[];
  clock: string | null;
  links: { channel: string; direction: InferredDirection; stationAddress: number | null; label: string }[];
  handshake: { channel: string; name: string; link: string | null }[];
  bitRate: number | null;
  encoding: LineEncoding;
  edge: ClockEdge;
  invert: boolean;
  fcs: 16 | 32;
}

export interface Discovery {
  finder: FinderResult;
  /** frames of the best setting decoded again for the inference (at most `frameLimit`) */
  framesDecoded: number;
  directions: DirectionVerdict[];
  roster: RosterStation[];
  settings: SuggestedSettings | null;
}

export interface DiscoverOptions extends FinderOptions {
  /** the field map whose response bit and tag help tell directions (e.g. the built-in one) */
  map?: FieldMap | null;
  frameLimit?: number;
}

export async function discover(source: CaptureSource, options: DiscoverOptions = {}, onProgress?: (p: FinderProgress) => void): Promise<Discovery> {
  const { result, finder } = await findSettings(source, options, onProgress);
  return discoveryOf(finder, result, options);
}

/** The second half of discover(), for a caller that drove the finder itself. */
export function discoveryOf(finder: SettingsFinder, result: FinderResult, options: DiscoverOptions = {}): Discovery {
  const best = result.best;
  if (!best) return { finder: result, framesDecoded: 0, directions: [], roster: [], settings: null };
  const { frames, samplePeriodSeconds } = framesUnder(finder, best, options, options.frameLimit ?? 20000);
  const directions = inferDirections(frames, { samplePeriodSeconds, map: options.map ?? null });
  const roster = stationRoster(frames, samplePeriodSeconds);
  return { finder: result, framesDecoded: frames.length, directions, roster, settings: suggestedSettings(best, directions, finder, options) };
}

/** The links of a setting: the channels that gave good frames (all it tried when none did). */
export function linksOf(c: FinderCandidate): string[] {
  const good = c.links.filter((l) => l.good > 0).map((l) => l.channel);
  return good.length ? good : c.links.map((l) => l.channel);
}

export function decoderOptionsOf(c: FinderCandidate, options: FinderOptions): DecoderOptions {
  return {
    format: c.format,
    sampleRate: options.sampleRate,
    channelNames: options.channelNames,
    rawWidth: c.rawWidth ?? undefined,
    clock: c.clock ?? undefined,
    data: linksOf(c),
    edge: c.edge ?? 'rising',
    encoding: c.encoding ?? 'nrz',
    invert: c.invert,
    // the reader's time base for octet streams and frame logs; the recovered rate without a clock
    // (per sample when the capture has no time base: framesUnder then reads it at 1 sample/s)
    bitRate: c.format === 'octets' || c.format === 'framelog' || c.clock ? options.bitRate : (options.bitRate ?? c.bitRate ?? (c.samplesPerBit ? 1 / c.samplesPerBit : undefined)),
    fcs: c.fcs,
  };
}

/**
 * The windows the finder read, decoded again under one setting by the real pipeline. Frames of a
 * window from the middle of the file keep their place in the file where its format allows it
 * (raw samples, octets, VCD and frame-log times); otherwise they follow the previous window's.
 */
export function framesUnder(finder: SettingsFinder, c: FinderCandidate, options: FinderOptions, limit: number): { frames: DecodedFrame[]; samplePeriodSeconds: number } {
  const opts = decoderOptionsOf(c, options);
  if (c.format === 'raw' && !opts.sampleRate) opts.sampleRate = 1;
  const frames: DecodedFrame[] = [];
  let period = 1;
  let end = 0;
  for (const w of finder.kept) {
    const windowFrames: DecodedFrame[] = [];
    const dec = createDecoder(opts, { frame: (f) => windowFrames.length < limit && windowFrames.push(f), event: () => {} });
    for (const b of w.input) dec.push(b);
    dec.finish();
    period = dec.samplePeriodSeconds ?? period;
    let base = 0;
    if (w.offset > 0) {
      if (c.format === 'raw') base = w.offset / (c.rawWidth ?? 1);
      else if (c.format === 'octets') base = w.offset * 8;
      else if (c.format === 'csv') base = end + Math.round(1 / period);
    }
    for (const f of windowFrames) {
      if (frames.length >= limit) break;
      if (base) {
        f.firstSample += base;
        f.lastSample += base;
      }
      frames.push(f);
      end = Math.max(end, f.lastSample);
    }
  }
  return { frames, samplePeriodSeconds: period };
}

const hex = (n: number) => `0x${n.toString(16).padStart(2, '0')}`;

/** Capture settings from the best setting and the inferred directions, for the channel-role form. */
export function suggestedSettings(c: FinderCandidate, directions: DirectionVerdict[], finder: SettingsFinder | null, options: FinderOptions): SuggestedSettings {
  const links = linksOf(c).map((channel) => {
    const v = directions.find((d) => d.link === channel);
    const direction = v?.direction ?? 'unknown';
    const station = v?.station ?? null;
    const who = station !== null ? `station ${hex(station)}` : 'station';
    const label = direction === 'to-server' ? `${who} → server` : direction === 'from-server' ? `server → ${who}` : '';
    return { channel, direction, stationAddress: station, label };
  });
  const handshake = (finder?.handshakeLines() ?? []).map((h) => ({ channel: h.channel, name: h.role.toUpperCase(), link: nearestLink(h.channel, links.filter((l) => l.direction === 'to-server').map((l) => l.channel)) }));
  const needsRate = !c.clock && c.format !== 'framelog';
  return {
    format: c.format,
    sampleRate: options.sampleRate ?? null,
    rawWidth: c.rawWidth ?? 1,
    channelNames: options.channelNames ?? [],
    clock: c.clock,
    links,
    handshake,
    bitRate: needsRate && c.bitRate ? Math.round(c.bitRate) : options.bitRate ?? null,
    encoding: c.encoding ?? 'nrz',
    edge: c.edge ?? 'rising',
    invert: c.invert,
    fcs: c.fcs,
  };
}

/** The link whose name shares the longest start with a handshake line's ("p1_rts" → "p1_txd"). */
function nearestLink(channel: string, links: string[]): string | null {
  let best: string | null = null;
  let len = 0;
  for (const l of links) {
    let k = 0;
    while (k < l.length && k < channel.length && l[k] === channel[k]) k++;
    if (k > len) {
      best = l;
      len = k;
    }
  }
  return len > 0 ? best : null;
}
