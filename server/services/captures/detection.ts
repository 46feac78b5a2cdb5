import { detectFormat, inspectHead } from '../../../shared/decoder/readers';
import type { CaptureFormat } from '../../../shared/decoder';
import type { CaptureSettingsInput, DetectedChannel, Detection } from '../../../shared/schemas';
import { rigs } from '../../db/schema';
import { eq } from 'drizzle-orm';
import type { CaptureDeps } from './deps';
import { parseSettings, type CaptureRow } from './rows';
import { readHead } from './upload';

/**
 * What the head of the capture says: format, channels with suggested roles, and settings
 * prefilled from that and from the rig's line settings (bit rate, encoding, edge). The stored
 * settings, if any, decide the format and the reader options (sample rate, raw names).
 */
export function detectCapture(deps: CaptureDeps, c: CaptureRow): Detection {
  const head = readHead(deps.store.pathOf(c.sha256));
  const saved = parseSettings(c.settings);
  const guess = detectFormat(head);
  const format: CaptureFormat | null = saved?.format ?? c.format ?? guess.format;
  if (!format) return { format: null, reason: guess.reason, channels: [], sampleRate: null, suggested: null };
  const rig = deps.db.select().from(rigs).where(eq(rigs.id, c.rigId)).get()!;
  const inspection = inspectHead(head, format, {
    sampleRate: saved?.sampleRate ?? undefined,
    channelNames: saved && saved.channelNames.length > 0 ? saved.channelNames : undefined,
    rawWidth: saved?.rawWidth,
    bitRate: saved?.bitRate ?? rig.bitRate,
  });
  const { roles } = inspection;
  const channels: DetectedChannel[] = inspection.channels.map((ch) => ({
    name: ch.name,
    source: format === 'vcd' ? [...(ch.scope ?? []), ch.name].join('.') : format === 'csv' ? `column ${ch.index + 1}` : `bit ${ch.index}`,
    suggested:
      ch.name === roles.clock ? 'clock' : roles.data.includes(ch.name) ? 'data' : roles.handshake.some((h) => h.name === ch.name) ? 'handshake' : 'unused',
    transitions: ch.toggles,
  }));
  const sampleRate = inspection.samplePeriodSeconds ? Math.round(1 / inspection.samplePeriodSeconds) : null;
  const needsBitRate = !roles.clock && format !== 'framelog';
  const suggested: CaptureSettingsInput = {
    format,
    sampleRate: format === 'raw' ? (saved?.sampleRate ?? null) : null,
    rawWidth: saved?.rawWidth ?? 1,
    channelNames: saved?.channelNames ?? [],
    clock: format === 'octets' || format === 'framelog' ? null : roles.clock,
    links: roles.data.map((channel) => ({ channel, direction: 'unknown', stationAddress: null, label: '' })),
    handshake: roles.handshake.map((h) => ({ channel: h.name, name: h.role.toUpperCase(), link: null })),
    bitRate: needsBitRate || format === 'octets' ? rig.bitRate : null,
    encoding: rig.encoding,
    edge: rig.clockEdge,
    invert: false,
  };
  const reason = c.format === format ? c.detectReason || guess.reason : guess.reason;
  return { format, reason, channels, sampleRate, suggested };
}
