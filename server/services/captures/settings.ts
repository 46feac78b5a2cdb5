import { eq } from 'drizzle-orm';
import { inspectHead } from '../../../shared/decoder/readers';
import type { CaptureSettings, CaptureSummaryRow } from '../../../shared/schemas';
import { captures } from '../../db/schema';
import { HttpError } from '../../http/errors';
import type { CaptureDeps } from './deps';
import { toSummary, type CaptureRow } from './rows';
import { readHead } from './upload';

/**
 * Stores the channel roles after checking every named channel against the channels the capture
 * has (read from its head with the chosen format and names): 422 naming the ones that exist.
 */
export function saveSettings(deps: CaptureDeps, c: CaptureRow, s: CaptureSettings): CaptureSummaryRow {
  const head = readHead(deps.store.pathOf(c.sha256));
  const inspection = inspectHead(head, s.format, {
    sampleRate: s.sampleRate ?? undefined,
    channelNames: s.channelNames.length > 0 ? s.channelNames : undefined,
    rawWidth: s.rawWidth,
    bitRate: s.bitRate ?? undefined,
  });
  const problem = inspection.issues[0];
  const names = inspection.channels.map((ch) => ch.name);
  // frame logs name their links on each line; a link first seen after the head is still fine
  const checkNames = s.format !== 'framelog';
  if (checkNames && names.length === 0) {
    throw new HttpError(422, `Read as ${s.format}, the capture shows no channels${problem ? ` (${problem.message})` : ''}. Check the format.`);
  }
  const named: [string, string][] = [
    ...(s.clock !== null ? [['clock', s.clock] as [string, string]] : []),
    ...s.links.map((l) => ['data', l.channel] as [string, string]),
    ...s.handshake.map((h) => ['handshake', h.channel] as [string, string]),
  ];
  const missing = checkNames ? named.filter(([, n]) => !names.includes(n)) : [];
  if (missing.length > 0) {
    const list = missing.map(([role, n]) => `"${n}" (${role})`).join(', ');
    throw new HttpError(422, `The capture has no channel ${list}; its channels are ${names.join(', ')}.`);
  }
  const row = deps.db.update(captures).set({ settings: JSON.stringify(s) }).where(eq(captures.id, c.id)).returning().get();
  return toSummary(deps, row);
}
