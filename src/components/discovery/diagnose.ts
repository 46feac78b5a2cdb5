// What is wrong with a decode, in plain words, from its frame counts, its exchanges and what the
// settings finder says about the capture; each problem with the one change that fixes it.
import type { CaptureDiscovery, CaptureSettings, CaptureSettingsInput, DiscoveryCandidate } from '../../../shared/schemas';
import { directionWords } from './direction-words';

export interface DecodeFacts {
  settings: CaptureSettings;
  frames: number;
  goodFrames: number;
  /** exchanges of the visible call run; null while there is none */
  exchanges: number | null;
  mapName: string | null;
}

export type Problem =
  | { kind: 'damaged'; text: string; fix: { label: string; settings: CaptureSettingsInput } | null }
  | { kind: 'nothing-found'; text: string }
  | { kind: 'directions'; text: string; reasons: string[]; fix: { label: string; settings: CaptureSettingsInput } | null }
  | { kind: 'no-exchanges'; text: string };

const LINE_KEYS = ['format', 'rawWidth', 'clock', 'encoding', 'edge', 'invert', 'fcs'] as const;

/** Which line settings of the candidate differ from the decode's, in words. */
function differences(s: CaptureSettings, c: DiscoveryCandidate): string[] {
  const out: string[] = [];
  const cs = c.settings;
  if (cs.format !== s.format) out.push(`format ${cs.format} instead of ${s.format}`);
  if ((cs.clock ?? null) !== s.clock) out.push(cs.clock ? `clock channel ${cs.clock}` : 'no clock channel (recovered from the data)');
  if (cs.encoding !== s.encoding || (cs.invert ?? false) !== s.invert) {
    out.push(`${cs.encoding === 'nrzi' ? 'NRZI' : 'NRZ'}${cs.invert ? ' inverted' : ''} instead of ${s.encoding === 'nrzi' ? 'NRZI' : 'NRZ'}${s.invert ? ' inverted' : ''}`);
  }
  if (cs.clock && cs.edge !== s.edge) out.push(`the ${cs.edge} clock edge`);
  if ((cs.fcs ?? 16) !== s.fcs) out.push(`FCS-${cs.fcs}`);
  return out;
}

function sameLine(s: CaptureSettings, c: DiscoveryCandidate): boolean {
  return LINE_KEYS.every((k) => (k === 'fcs' ? (c.settings.fcs ?? 16) === s.fcs : k === 'invert' ? (c.settings.invert ?? false) === s.invert : (c.settings[k] ?? null) === (s[k] ?? null)));
}

/** The candidate's line settings, keeping what the analyst said about each link that it still decodes. */
function withLine(s: CaptureSettings, c: DiscoveryCandidate): CaptureSettingsInput {
  const links = (c.settings.links ?? []).map((l) => {
    const mine = s.links.find((x) => x.channel === l.channel);
    return mine && mine.direction !== 'unknown' ? mine : l;
  });
  return { ...c.settings, links, handshake: s.handshake.length ? s.handshake : c.settings.handshake, sampleRate: s.sampleRate ?? c.settings.sampleRate ?? null, channelNames: s.channelNames.length ? s.channelNames : c.settings.channelNames };
}

export function diagnose(f: DecodeFacts, d: CaptureDiscovery | undefined): Problem[] {
  const out: Problem[] = [];
  const s = f.settings;
  const damaged = f.frames - f.goodFrames;
  const mostlyDamaged = f.frames === 0 || damaged / f.frames > 0.5;
  if (mostlyDamaged) {
    const what = f.frames === 0 ? 'The decode found no frames at all' : `${damaged} of ${f.frames} frames are damaged`;
    if (d?.state === 'done' && !d.found) {
      out.push({ kind: 'nothing-found', text: `${what}, and no setting the finder tried gives a frame with a good check sequence.` });
    } else if (d?.state === 'done') {
      const best = d.candidates[0];
      if (best && !sameLine(s, best) && best.goodShare > f.goodFrames / Math.max(1, f.frames)) {
        const diff = differences(s, best);
        out.push({
          kind: 'damaged',
          text: `${what}: the line settings look wrong. Decoded with ${diff.join(', ')}, the head of the file gives ${best.good} good frames of ${best.frames} (${Math.round(best.goodShare * 100)} %).`,
          fix: { label: `Decode again with ${best.label}`, settings: withLine(s, best) },
        });
      } else {
        out.push({ kind: 'damaged', text: `${what}, and no other setting does better: check the probes and the sample rate against the bit rate.`, fix: null });
      }
    }
  }
  if (!mostlyDamaged) {
    const unknown = s.links.filter((l) => l.direction === 'unknown');
    const verdicts = d?.state === 'done' ? d.directions : [];
    const swapped = s.links.filter((l) => {
      const v = verdicts.find((x) => x.link === l.channel);
      return l.direction !== 'unknown' && v && v.direction !== 'unknown' && v.direction !== l.direction;
    });
    if (unknown.length || swapped.length) {
      const fixed = s.links.map((l) => {
        const v = verdicts.find((x) => x.link === l.channel);
        if (!v || v.direction === 'unknown') return l;
        return { ...l, direction: v.direction, stationAddress: l.stationAddress ?? v.station };
      });
      const canFix = fixed.some((l, i) => l.direction !== s.links[i].direction);
      const reasons = [...unknown, ...swapped].map((l) => {
        const v = verdicts.find((x) => x.link === l.channel);
        if (!v) return `${l.channel}: the finder saw no frames on it.`;
        return v.direction === 'unknown' ? `${l.channel}: cannot be told — ${v.reasons.join(' ') || 'no good frames.'}` : `${l.channel}: ${directionWords[v.direction]} — ${v.reasons[0] ?? ''}`;
      });
      const text = swapped.length
        ? `The directions look swapped on ${swapped.map((l) => l.channel).join(', ')}: the frames say the opposite of the channel roles, so requests are read as answers and answers as requests.`
        : `The direction of ${unknown.map((l) => l.channel).join(', ')} is not known, so no request can be paired with its answer: Round trips and Recovered files stay empty.`;
      out.push({ kind: 'directions', text, reasons, fix: canFix ? { label: 'Use the inferred directions and decode again', settings: { ...s, links: fixed } } : null });
    } else if (f.exchanges === 0) {
      out.push({
        kind: 'no-exchanges',
        text: `The frames are good and the directions known, but the field map${f.mapName ? ` “${f.mapName}”` : ''} finds no exchanges in them: this file service probably uses another envelope. Choose another map, or start one from the field hints.`,
      });
    }
  }
  return out;
}
