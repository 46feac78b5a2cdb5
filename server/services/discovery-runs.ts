// The settings finder run for a capture of the app: started on the first request, run beside the
// request thread (its reads are asynchronous and it reads at most 16 MB), its progress and answer
// kept in memory per capture, so the upload and channel-roles pages can poll it.
import type { FieldMap } from '../../shared/decoder/calls';
import { suggestedSettings, type Discovery } from '../../shared/decoder/finder';
import type { CaptureDiscovery, CaptureSettingsInput, DiscoveryCandidate } from '../../shared/schemas';
import type { Db } from '../db/client';
import { mapNameOf } from './calls/capture-layer';
import { chosenMap } from './calls/field-map-store';
import type { CaptureStore } from '../storage/capture-store';
import type { CaptureRow } from './captures/rows';
import { parseSettings } from './captures/rows';
import { discoverCaptureFile } from './discovery';

/** candidates the page shows; the rest only count */
const SHOWN = 12;
/** finished answers kept (each is a few KB) */
const KEEP = 64;

interface Entry {
  key: string;
  view: CaptureDiscovery;
}

const runs = new Map<number, Entry>();

function emptyView(budget: number): CaptureDiscovery {
  return {
    state: 'running',
    bytesRead: 0,
    budget,
    error: null,
    found: false,
    summary: '',
    tried: [],
    advice: [],
    cautions: [],
    detection: { format: null, reason: '', tried: [] },
    candidates: [],
    candidatesTried: 0,
    directions: [],
    roster: [],
    mapName: null,
  };
}

/** The finder's answer as the channel-role form and the decode pages take it. */
export function discoveryView(d: Discovery, mapName: string | null, given: { sampleRate: number | null; channelNames: string[] }): CaptureDiscovery {
  const r = d.finder;
  const options = { sampleRate: given.sampleRate ?? undefined, channelNames: given.channelNames.length ? given.channelNames : undefined };
  const candidates: DiscoveryCandidate[] = r.ranking.slice(0, SHOWN).map((c) => {
    const s = suggestedSettings(c, d.directions, null, options);
    const settings: CaptureSettingsInput = {
      format: s.format,
      sampleRate: s.sampleRate,
      rawWidth: s.rawWidth,
      channelNames: s.channelNames,
      clock: s.clock,
      links: s.links.map((l) => ({ channel: l.channel, direction: l.direction, stationAddress: l.stationAddress, label: l.label })),
      handshake: s.handshake.map((h) => ({ channel: h.channel, name: h.name, link: h.link })),
      bitRate: s.bitRate,
      encoding: s.encoding,
      edge: s.edge,
      invert: s.invert,
      fcs: s.fcs,
    };
    // the best setting keeps the handshake lines the finder saw; the others take them from it
    if (c !== r.best && d.settings) settings.handshake = d.settings.handshake.map((h) => ({ channel: h.channel, name: h.name, link: h.link }));
    return {
      key: c.key,
      label: c.label,
      evidence: c.evidence,
      notes: c.notes,
      frames: c.frames,
      good: c.good,
      goodShare: c.goodShare,
      rateText: c.rateText,
      encoding: c.encoding,
      edge: c.edge,
      invert: c.invert,
      clock: c.clock,
      fcs: c.fcs,
      format: c.format,
      samplesPerBit: c.samplesPerBit,
      settings,
    };
  });
  return {
    state: 'done',
    bytesRead: r.bytesRead,
    budget: r.bytesRead,
    error: null,
    found: r.found,
    summary: r.summary,
    tried: r.tried,
    advice: r.advice,
    cautions: r.cautions,
    detection: { format: r.detection.format, reason: r.detection.reason, tried: [...r.detection.tried] },
    candidates,
    candidatesTried: r.ranking.length,
    directions: d.directions.map((v) => ({ link: v.link, direction: v.direction, confidence: v.confidence, reasons: v.reasons, station: v.station, partner: v.partner })),
    roster: d.roster.map((s) => ({
      address: s.address,
      frames: s.frames,
      links: s.links.map((l) => ({ link: l.link, frames: l.frames })),
      firstSeconds: s.firstSeconds,
      lastSeconds: s.lastSeconds,
      suggestedName: s.suggestedName,
    })),
    mapName,
  };
}

export interface DiscoveryDeps {
  db: Db;
  store: CaptureStore;
}

/**
 * The capture's discovery: the answer when the finder has run for this file, map and the reader
 * facts the analyst gave (sample rate, raw channel names); otherwise starts it and answers
 * 'running' with its progress. The file never changes, so neither does the answer.
 */
export function captureDiscovery(deps: DiscoveryDeps, c: CaptureRow): CaptureDiscovery {
  // the finder reads the capture file: a capture decoded in the browser left its samples with the
  // uploader, and a file can be gone; the answer says so (a page may ask while showing such a capture)
  const unreadable = !c.samplesKept
    ? 'The samples of this capture stayed on the uploader’s machine, so the settings finder cannot read them; decode the file in the browser again to try other settings.'
    : !/^[0-9a-f]{64}$/.test(c.sha256) || !deps.store.exists(c.sha256)
      ? 'The capture file is not on the server any more, so the settings finder cannot read it; upload the capture again.'
      : null;
  if (unreadable) return { ...emptyView(0), state: 'failed', error: unreadable };
  const saved = parseSettings(c.settings);
  const given = { sampleRate: saved?.format === 'raw' ? saved.sampleRate : null, channelNames: saved?.format === 'raw' ? saved.channelNames : [] };
  let resolved: { mapId: number; version: number; map: FieldMap } | null;
  try {
    resolved = chosenMap(deps.db, c.id);
  } catch {
    resolved = null; // a capture without a map still has its settings found; directions then use link-level clues only
  }
  const key = [c.sha256, resolved ? `${resolved.mapId}:${resolved.version}` : '-', given.sampleRate ?? '', given.channelNames.join(',')].join('|');
  const entry = runs.get(c.id);
  if (entry && entry.key === key) return entry.view;
  const mapName = resolved ? (mapNameOf(deps, resolved.mapId) ?? null) : null;
  const fresh: Entry = { key, view: emptyView(16 * 1024 * 1024) };
  runs.delete(c.id);
  runs.set(c.id, fresh);
  while (runs.size > KEEP) runs.delete(runs.keys().next().value!);
  const options = {
    map: resolved?.map ?? null,
    ...(given.sampleRate ? { sampleRate: given.sampleRate } : {}),
    ...(given.channelNames.length ? { channelNames: given.channelNames } : {}),
  };
  discoverCaptureFile(deps.store.pathOf(c.sha256), options, (p) => {
    fresh.view = { ...fresh.view, bytesRead: p.bytesRead, budget: p.budget };
  })
    .then((d) => {
      fresh.view = discoveryView(d, mapName, given);
    })
    .catch((err: unknown) => {
      fresh.view = { ...fresh.view, state: 'failed', error: err instanceof Error ? err.message : String(err) };
    });
  return fresh.view;
}

/** Forgets a capture's discovery (when the capture is deleted). */
export function forgetDiscovery(captureId: number): void {
  runs.delete(captureId);
}
