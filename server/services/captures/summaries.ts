// One-line descriptions of timeline rows, in the words of the trade (HDLC/SDLC).

export interface SummaryFields {
  status: string;
  address: number | null;
  kind: string | null;
  command: string | null;
  ns: number | null;
  nr: number | null;
  pf: number | boolean | null;
  infoLength: number;
  flippedBit: number | null;
  bytes?: number;
}

export const hexByte = (n: number) => `0x${n.toString(16).toUpperCase().padStart(2, '0')}`;

export function frameSummary(f: SummaryFields, stationName: string | null): string {
  const parts: string[] = [];
  const pf = f.pf ? ' P/F' : '';
  if (f.kind === 'I') parts.push(`I N(S)=${f.ns} N(R)=${f.nr}${pf}`);
  else if (f.kind === 'S') parts.push(`${f.command} N(R)=${f.nr}${pf}`);
  else if (f.kind === 'U') parts.push(`${f.command === '?' ? 'unknown U' : f.command}${pf}`);
  else parts.push('no address or control');
  if (f.address !== null) parts.push(`${hexByte(f.address)}${stationName ? ` ${stationName}` : ''}`);
  if (f.infoLength > 0) parts.push(`${f.infoLength} octet${f.infoLength === 1 ? '' : 's'} of information`);
  if (f.status === 'bad-fcs') parts.push(f.flippedBit !== null ? `bad FCS, bit ${f.flippedBit} flipped` : 'bad FCS');
  else if (f.status === 'abort') parts.push('aborted');
  else if (f.status === 'short') parts.push('too short for an FCS');
  else if (f.status === 'residue') parts.push('residue bits');
  return parts.join(' · ');
}

export function formatSeconds(s: number): string {
  if (s >= 1) return `${s.toFixed(3)} s`;
  if (s >= 1e-3) return `${(s * 1e3).toFixed(3)} ms`;
  return `${(s * 1e6).toFixed(1)} µs`;
}

export function eventSummary(e: { channel: string; kind: string; t: number; tEnd: number | null; count: number | null }): string {
  switch (e.kind) {
    case 'rise':
      return `${e.channel} rises`;
    case 'fall':
      return `${e.channel} falls`;
    case 'idle':
      return `${e.channel} idle${e.tEnd !== null ? ` for ${formatSeconds(e.tEnd - e.t)}` : ''}`;
    case 'flags':
      return `${e.count ?? 'some'} fill flag${e.count === 1 ? '' : 's'} on ${e.channel}`;
    default:
      return `${e.channel} at an unknown level`;
  }
}
