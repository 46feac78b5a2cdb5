import type { LineSettings } from '../../shared/schemas';

/** HDLC address octet as it is written in the trade: 0x-prefixed, two upper-case hex digits. */
export function formatAddress(address: number): string {
  return `0x${address.toString(16).toUpperCase().padStart(2, '0')}`;
}

export function formatBitRate(bitRate: number): string {
  if (bitRate >= 1_000_000 && bitRate % 1000 === 0) return `${trim(bitRate / 1_000_000)} Mbit/s`;
  if (bitRate >= 1000) return `${trim(bitRate / 1000)} kbit/s`;
  return `${bitRate} bit/s`;
}

function trim(n: number): string {
  return Number.isInteger(n) ? String(n) : n.toFixed(3).replace(/0+$/, '');
}

export const encodingLabels: Record<LineSettings['encoding'], string> = { nrz: 'NRZ', nrzi: 'NRZI' };
export const clockEdgeLabels: Record<LineSettings['clockEdge'], string> = {
  rising: 'Rising edge',
  falling: 'Falling edge',
};
export const bitOrderLabels: Record<LineSettings['bitOrder'], string> = {
  'lsb-first': 'LSB first',
  'msb-first': 'MSB first',
};

export function formatLineSettings(s: LineSettings): string {
  return [formatBitRate(s.bitRate), encodingLabels[s.encoding], clockEdgeLabels[s.clockEdge].toLowerCase(), bitOrderLabels[s.bitOrder]].join(' · ');
}

export function formatDateTime(iso: string): string {
  const date = new Date(iso);
  if (Number.isNaN(date.getTime())) return iso;
  return date.toLocaleString(undefined, { dateStyle: 'medium', timeStyle: 'short' });
}
