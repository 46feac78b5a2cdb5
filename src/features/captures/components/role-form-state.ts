import type { CaptureSettings, CaptureSettingsInput, CaptureSummaryRow, Detection, LineSettings } from '../../../../shared/schemas';

export type ChannelUse = 'data' | 'handshake' | 'unused';

export interface ChannelRow {
  name: string;
  use: ChannelUse;
  direction: CaptureSettings['links'][number]['direction'];
  /** station address as a string ('' = not known), straight from the select */
  station: string;
  label: string;
  /** handshake line name (RTS, CTS, DCD…) */
  lineName: string;
  /** the link (data channel name) a handshake line belongs to, '' for none */
  lineLink: string;
  /**
   * the station a handshake line belongs to, as a string ('' = the link's station, if any). On a
   * multidrop line the data wires are shared and each station has its own request line.
   */
  lineStation: string;
}

export interface RoleFormState {
  format: NonNullable<Detection['format']>;
  sampleRate: string;
  rawWidth: '1' | '2';
  channelNames: string;
  /** '' = recover the clock from data transitions */
  clock: string;
  rows: ChannelRow[];
  bitRate: string;
  encoding: CaptureSettings['encoding'];
  edge: CaptureSettings['edge'];
  invert: boolean;
  fcs: '16' | '32';
}

const handshakeName = /^(rts|cts|dcd|dtr|dsr|ri|cd)/i;

/** Prefill: saved settings first, then what detection suggests, then the rig's line settings. */
export function initialRoleForm(detection: Detection, capture: CaptureSummaryRow, line: LineSettings): RoleFormState {
  const s: CaptureSettingsInput | null = capture.settings ?? detection.suggested;
  const names = new Set(detection.channels.map((c) => c.name));
  for (const l of s?.links ?? []) names.add(l.channel);
  const rows: ChannelRow[] = [...names].map((name) => {
    const link = s?.links.find((l) => l.channel === name);
    const hs = s?.handshake?.find((h) => h.channel === name);
    const detected = detection.channels.find((c) => c.name === name);
    const use: ChannelUse = link ? 'data' : hs ? 'handshake' : s ? 'unused' : detected?.suggested === 'data' ? 'data' : detected?.suggested === 'handshake' ? 'handshake' : 'unused';
    return {
      name,
      use,
      direction: link?.direction ?? 'unknown',
      station: link?.stationAddress === null || link?.stationAddress === undefined ? '' : String(link.stationAddress),
      label: link?.label ?? '',
      lineName: hs?.name ?? (handshakeName.exec(name)?.[1]?.toUpperCase() ?? name.slice(0, 20)),
      lineLink: hs?.link ?? '',
      lineStation: hs?.stationAddress === null || hs?.stationAddress === undefined ? '' : String(hs.stationAddress),
    };
  });
  const suggestedClock = detection.channels.find((c) => c.suggested === 'clock')?.name ?? '';
  const clock = s ? (s.clock ?? '') : suggestedClock;
  return {
    format: s?.format ?? detection.format ?? 'vcd',
    // a rate the file states itself (VCD timescale, CSV time column) is not copied into the form: the reader takes it from the file
    sampleRate: s?.sampleRate == null ? '' : String(s.sampleRate),
    rawWidth: s?.rawWidth === 2 ? '2' : '1',
    channelNames: (s?.channelNames ?? []).join(', '),
    clock,
    rows,
    bitRate: String(s?.bitRate ?? (clock ? '' : line.bitRate)),
    encoding: s?.encoding ?? line.encoding,
    edge: s?.edge ?? line.clockEdge,
    invert: s?.invert ?? false,
    fcs: s?.fcs === 32 ? '32' : '16',
  };
}

/** The form state as the body captureSettingsSchema validates (and the server takes). */
export function settingsFromForm(f: RoleFormState): CaptureSettingsInput {
  const numberOrNull = (v: string) => (v.trim() === '' ? null : (v.trim() as unknown as number));
  const rows = f.rows.filter((r) => r.name !== f.clock);
  return {
    format: f.format,
    sampleRate: numberOrNull(f.sampleRate),
    rawWidth: f.rawWidth === '2' ? 2 : 1,
    channelNames: f.format === 'raw' ? f.channelNames.split(',').map((n) => n.trim()).filter(Boolean) : [],
    clock: f.clock === '' ? null : f.clock,
    links: rows
      .filter((r) => r.use === 'data')
      .map((r) => ({ channel: r.name, direction: r.direction, stationAddress: r.station === '' ? null : Number(r.station), label: r.label })),
    handshake: rows
      .filter((r) => r.use === 'handshake')
      .map((r) => ({ channel: r.name, name: r.lineName, link: r.lineLink === '' ? null : r.lineLink, stationAddress: r.lineStation === '' ? null : Number(r.lineStation) })),
    bitRate: numberOrNull(f.bitRate),
    encoding: f.encoding,
    edge: f.edge,
    invert: f.invert,
    fcs: f.fcs === '32' ? 32 : 16,
  };
}

/** Field-error keys ("links.0.channel") point at link indices; the form shows them on the channel's row. */
export function rowErrorKey(f: RoleFormState, rowName: string, field: string): string | null {
  const rows = f.rows.filter((r) => r.name !== f.clock);
  const links = rows.filter((r) => r.use === 'data');
  const hs = rows.filter((r) => r.use === 'handshake');
  const li = links.findIndex((r) => r.name === rowName);
  if (li >= 0) return `links.${li}.${field}`;
  const hi = hs.findIndex((r) => r.name === rowName);
  if (hi >= 0) return `handshake.${hi}.${field}`;
  return null;
}
