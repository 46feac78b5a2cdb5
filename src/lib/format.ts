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

/** "1 change", "2 changes", "1,024 rows": a count with its noun in the right number. */
export function plural(n: number, one: string, many = `${one}s`): string {
  return `${n.toLocaleString('en-GB')} ${n === 1 ? one : many}`;
}

const timeUnits: [number, string][] = [
  [1, 's'],
  [1e-3, 'ms'],
  [1e-6, 'µs'],
  [1e-9, 'ns'],
  [1e-12, 'ps'],
  [1e-15, 'fs'],
];

/** A time step in the unit that keeps its number at 1 or more: 1e-12 → "1 ps", 2.5e-7 → "250 ns". */
export function formatTimeStep(seconds: number): string {
  const [scale, unit] = timeUnits.find(([s]) => seconds >= s * 0.9995) ?? timeUnits[timeUnits.length - 1];
  const v = seconds / scale;
  return `${Number(v.toPrecision(4))} ${unit}`;
}

/** A sample rate in Hz, kHz, MHz or GHz: 4e6 → "4 MHz". */
export function formatRate(perSecond: number): string {
  const units: [number, string][] = [
    [1e12, 'THz'],
    [1e9, 'GHz'],
    [1e6, 'MHz'],
    [1e3, 'kHz'],
    [1, 'Hz'],
  ];
  const [scale, unit] = units.find(([s]) => perSecond >= s) ?? units[units.length - 1];
  return `${Number((perSecond / scale).toPrecision(4))} ${unit}`;
}
