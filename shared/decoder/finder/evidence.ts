// The finder's words: one summary line, what was tried, and what to check when nothing decoded.
import type { CaptureFormat } from '../types';
import type { Family } from './family';
import { formatBitRate, formatSpread, groupDigits } from './rate';
import { coarse, contrasts, type FinderCandidate } from './rank';

export function summaryLine(ranking: FinderCandidate[]): string {
  return [ranking[0].evidence, ...contrasts(ranking)].join(' · ');
}

const MB = (n: number) => `${(n / (1024 * 1024)).toFixed(n < 1024 * 1024 ? 2 : 1)} MB`;

/** One line per dimension tried: formats, clocks and edges, recovered rates, line codings, FCS widths. */
export function describeTried(families: Family[], ranking: FinderCandidate[], detection: { format: CaptureFormat | null; reason: string; tried: CaptureFormat[] }): string[] {
  const out: string[] = [];
  if (detection.tried.length > 1) out.push(`formats: ${detection.tried.join(' and ')} (the content fits more than one)`);
  else if (detection.tried.length === 1) out.push(`format: ${detection.tried[0]}`);
  const widths = families.filter((f) => f.spec.format === 'raw').map((f) => f.spec.rawWidth);
  if (widths.length) out.push(`raw sample width: ${widths.map((w) => `${w} byte${w === 2 ? 's' : ''}`).join(', ')}`);
  const clocks = new Set<string>();
  const edges = new Set<string>();
  const rates: string[] = [];
  const data = new Set<string>();
  for (const f of families) {
    for (const p of f.plans.values()) {
      p.data.forEach((d) => data.add(d));
      if (p.clock) {
        clocks.add(p.clock);
        if (p.edge) edges.add(p.edge);
      } else if (p.samplesPerBit && p.key !== 'line' && p.key !== 'frames') {
        const rate = f.timeBase ? formatBitRate(1 / (p.samplesPerBit * f.period)) : `${p.samplesPerBit.toFixed(1)} samples per bit`;
        rates.push(`${rate}${p.spread !== null ? ` ${formatSpread(p.spread)}` : ''} on ${p.data.join(', ')}`);
      }
    }
  }
  if (clocks.size) out.push(`clock: ${[...clocks].join(', ')} (${[...edges].join(' and ')} edge)`);
  if (rates.length) out.push(`no clock, bit clock recovered at ${rates.join('; ')}`);
  if (families.some((f) => f.spec.format !== 'framelog')) {
    const v = new Set(families.filter((f) => f.spec.format !== 'framelog').flatMap((f) => f.variants));
    out.push(`line coding: ${[...v].map((x) => (x === 'nrz' ? 'NRZ' : x === 'nrz-inv' ? 'NRZ inverted' : 'NRZI')).join(', ')}`);
  }
  const fcs = new Set(families.flatMap((f) => f.fcsWidths));
  out.push(`FCS: ${[...fcs].map((w) => (w === 16 ? 'FCS-16 (CRC-16/IBM-SDLC)' : 'FCS-32 (CRC-32/ISO-HDLC)')).join(', ')}`);
  if (data.size) out.push(`data channels as links: ${[...data].join(', ')}`);
  out.push(`${ranking.length} setting${ranking.length === 1 ? '' : 's'} in all`);
  return out;
}

/** When no setting gave a good frame: what that says about the capture, and what to check. */
export function describeFailure(families: Family[], ranking: FinderCandidate[], detection: { format: CaptureFormat | null; reason: string }, bytesRead: number, size: number): string[] {
  const out: string[] = [];
  const issues = families.map((f) => f.issue).filter((i) => i !== null);
  if (families.length === 0) {
    out.push(`The format could not be told: ${detection.reason} Choose the format, then run the finder again.`);
    return out;
  }
  if (issues.length === families.length) {
    out.push(`The capture could not be read: ${issues[0]!.message}`);
    return out;
  }
  out.push(`No setting gave a frame with a good FCS in the ${MB(bytesRead)} read${bytesRead < size ? ` (of ${MB(size)}, from the head and windows spread over the file)` : ''}.`);
  const mostFrames = [...ranking].sort((a, b) => b.frames - a.frames)[0];
  if (mostFrames && mostFrames.frames > 0) {
    out.push(
      `Flags were found (${groupDigits(mostFrames.frames)} frames under ${mostFrames.label}) but no FCS matched: check the FCS width and whether the analyzer saw every bit — a sample rate too low for the bit rate, or a clock channel from another port, drops or adds bits.`,
    );
  } else {
    out.push('No flag pattern (01111110) was found under any setting: the channels tried may not be the serial data lines.');
  }
  const sampled = families.filter((f) => f.channels && f.spec.format !== 'octets' && f.spec.format !== 'framelog');
  for (const f of sampled) {
    const quiet = (f.channels ?? []).filter((c) => (f.changes.get(c.name) ?? 0) === 0).map((c) => c.name);
    if (quiet.length) out.push(`Channels that never changed: ${quiet.join(', ')} — probes there saw a steady level (unconnected, or a line that idles).`);
    const clocks = [...f.clocks.keys()];
    out.push(
      clocks.length
        ? `Clock candidates: ${clocks.join(', ')}. Check that the clock probe sits on the serial controller's transmit/receive clock of the same port as the data lines.`
        : 'No channel changes at a regular rate, so no clock was captured: the bit clock was recovered from the data edges. If the controller has a clock pin (TxC/RxC), capturing it makes decoding much more reliable.',
    );
    for (const [name, r] of f.rates) {
      if (!f.timeBase) {
        out.push(`${name}: about ${r.samplesPerBit.toFixed(1)} samples per bit; the capture's sample rate was not given, so the bit rate cannot be checked.`);
        continue;
      }
      const rate = 1 / (r.samplesPerBit * f.period);
      out.push(`${name}: data edges suggest ${formatBitRate(rate)} ${formatSpread(r.spread)}, ${r.samplesPerBit.toFixed(1)} samples per bit.${r.samplesPerBit < 8 ? ` ${coarse(r.samplesPerBit)}` : ''}`);
    }
  }
  out.push('Check the probe points: the data lines of a synchronous serial port, on the logic side of the line drivers, with a common ground.');
  return out;
}
