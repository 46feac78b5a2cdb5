// Ranking of the trial decodes: most good frames first. Settings that decode (nearly) the same
// frames are told apart by what the line itself shows: a captured clock beats a recovered one,
// the edge at which the data is stable beats the edge at which it changes, and the format the
// content was detected as comes first.
import type { CaptureFormat, ClockEdge, LineEncoding } from '../types';
import type { Family, FamilyCounts } from './family';
import { formatBitRate, formatSpread, groupDigits } from './rate';

export interface FinderCandidate {
  /** stable id of the setting, e.g. "raw2|clock:clk:rising|nrzi|16" */
  key: string;
  format: CaptureFormat;
  rawWidth: 1 | 2 | null;
  clock: string | null;
  edge: ClockEdge | null;
  /** null for frame logs (the frames are already cut) */
  encoding: LineEncoding | null;
  invert: boolean;
  fcs: 16 | 32;
  /** samples per bit: the clock's period, or the recovered bit time */
  samplesPerBit: number | null;
  /** bit/s when the capture has a time base */
  bitRate: number | null;
  /** relative spread of the bit time (clock period or data-edge intervals) */
  rateSpread: number | null;
  /** "800 000 bit/s ± 0.3 % (from data edges)" */
  rateText: string | null;
  frames: number;
  good: number;
  /** good / frames (0 when no frames) */
  goodShare: number;
  goodPerSecond: number | null;
  lineSeconds: number | null;
  /** per data channel; under the best setting, channels with good frames are the links */
  links: { channel: string; frames: number; good: number }[];
  /** "NRZ, rising edge of clk, not inverted, FCS-16" */
  label: string;
  /** label with the counts: "…: 412 frames, 409 good (99 %), 1 210 good frames/s" */
  evidence: string;
  /** why it ranks where it does among settings that decode as well */
  notes: string[];
}

/** candidates within this share of the top one's good frames decode "as well" */
const TIE = 0.97;

const VARIANT_TEXT = { nrz: 'NRZ', 'nrz-inv': 'NRZ', nrzi: 'NRZI' } as const;

export function rankCandidates(families: Family[]): FinderCandidate[] {
  const all: { c: FinderCandidate; family: Family; order: number; margin: number }[] = [];
  families.forEach((family, order) => {
    for (const counts of family.counts()) {
      const c = candidate(family, counts, families.length > 1);
      all.push({ c, family, order, margin: edgeMargin(family, c) });
    }
  });
  const tieBreak = (a: (typeof all)[number], b: (typeof all)[number]) => {
    if (Math.abs(a.c.goodShare - b.c.goodShare) > 0.05) return b.c.goodShare - a.c.goodShare;
    if ((a.c.clock === null) !== (b.c.clock === null)) return a.c.clock === null ? 1 : -1;
    if (a.margin !== b.margin) return b.margin - a.margin;
    if (a.order !== b.order) return a.order - b.order;
    if (a.c.invert !== b.c.invert) return a.c.invert ? 1 : -1;
    if (a.c.fcs !== b.c.fcs) return a.c.fcs - b.c.fcs;
    return a.c.key < b.c.key ? -1 : a.c.key > b.c.key ? 1 : 0;
  };
  const rest = [...all].sort((a, b) => b.c.good - a.c.good || b.c.frames - a.c.frames || tieBreak(a, b));
  const out: (typeof all)[number][] = [];
  while (rest.length) {
    const top = rest[0].c.good;
    if (top === 0) {
      out.push(...rest.splice(0));
      break;
    }
    let k = 0;
    while (k < rest.length && rest[k].c.good >= top * TIE) k++;
    const group = rest.splice(0, k).sort(tieBreak);
    annotateTies(group.map((g) => ({ c: g.c, family: g.family, margin: g.margin })));
    out.push(...group);
  }
  return out.map((x) => x.c);
}

function candidate(family: Family, k: FamilyCounts, showFormat: boolean): FinderCandidate {
  const { plan, variant, fcs } = k;
  const frames = k.links.reduce((n, l) => n + l.frames, 0);
  const good = k.links.reduce((n, l) => n + l.good, 0);
  const seconds = family.timeBase ? family.lineSeconds() : null;
  const framelog = family.spec.format === 'framelog';
  const octets = family.spec.format === 'octets';
  const spb = plan.samplesPerBit;
  const bitRate = family.timeBase && spb ? 1 / (spb * family.period) : null;
  let rateText: string | null = null;
  if (!framelog && !octets && spb) {
    const from = plan.clock ? `from ${plan.clock}` : plan.givenRate ? 'as given' : 'from data edges';
    rateText = bitRate
      ? `${formatBitRate(bitRate)}${plan.spread !== null ? ` ${formatSpread(plan.spread)}` : ''} (${from})`
      : `${spb.toFixed(spb < 10 ? 2 : 1)} samples per bit${plan.spread !== null ? ` ${formatSpread(plan.spread)}` : ''} (${from}; give the sample rate for bit/s)`;
  } else if (octets && family.timeBase) {
    rateText = `${formatBitRate(1 / family.period)} (as given)`;
  }
  const encoding = framelog ? null : variant === 'nrzi' ? 'nrzi' : 'nrz';
  const invert = variant === 'nrz-inv';
  const parts: string[] = [];
  if (showFormat) parts.push(family.spec.format === 'raw' ? `raw, ${family.spec.rawWidth} byte${family.spec.rawWidth === 2 ? 's' : ''} per sample` : family.spec.format === 'octets' ? 'line octets' : family.spec.format);
  if (!framelog) {
    parts.push(VARIANT_TEXT[variant]);
    if (plan.clock) parts.push(`${plan.edge} edge of ${plan.clock}`);
    else if (!octets) parts.push(`no clock, ${rateText}`);
    parts.push(variant === 'nrzi' ? 'either polarity' : invert ? 'inverted' : 'not inverted');
  }
  parts.push(`FCS-${fcs}`);
  const label = parts.join(', ');
  const share = frames ? good / frames : 0;
  const perSecond = seconds && seconds > 0 ? good / seconds : null;
  const evidence = `${label}: ${groupDigits(frames)} frame${frames === 1 ? '' : 's'}, ${groupDigits(good)} good${frames ? ` (${Math.round(share * 100)} %)` : ''}${perSecond !== null && good > 0 ? `, ${groupDigits(Math.round(perSecond))} good frames/s` : ''}`;
  return {
    key: `${family.spec.key}|${plan.key}|${variant}|${fcs}`,
    format: family.spec.format,
    rawWidth: family.spec.rawWidth,
    clock: plan.clock,
    edge: plan.edge,
    encoding,
    invert,
    fcs,
    samplesPerBit: octets ? 1 : spb,
    bitRate: octets ? (family.timeBase ? 1 / family.period : null) : bitRate,
    rateSpread: plan.spread,
    rateText,
    frames,
    good,
    goodShare: share,
    goodPerSecond: perSecond,
    lineSeconds: seconds,
    links: k.links,
    label,
    evidence,
    notes: [
      ...(variant === 'nrzi' ? ['NRZI carries the data in level changes (ISO/IEC 13239: a 0 is a transition), so an inverted line decodes the same.'] : []),
      ...(spb && !octets && !framelog && spb < (plan.clock ? 4 : 8) ? [coarse(spb)] : []),
    ],
  };
}

/** the sampling advice for a capture with few samples per bit */
export function coarse(spb: number): string {
  return `Only ${spb.toFixed(1)} samples per bit: bits are easily lost or doubled; sample at least 4 times the bit rate with a clock and 8 without (common practice).`;
}

/** How far from data changes the candidate's clock edge lies, in periods (clocked only; 0 otherwise). */
function edgeMargin(family: Family, c: FinderCandidate): number {
  if (!c.clock || !c.edge) return 0;
  const t = family.edgeTiming(c.clock);
  if (!t) return 0;
  return c.edge === 'rising' ? t.fromRising : t.fromFalling;
}

const fmtPeriods = (x: number) => x.toFixed(2);

/** Notes on settings that decode as well as the one ranked above them. */
function annotateTies(group: { c: FinderCandidate; family: Family; margin: number }[]): void {
  if (group.length < 2) return;
  const first = group[0].c;
  for (const { c, family } of group) {
    if (c.clock) {
      const t = family.edgeTiming(c.clock);
      const other = group.find((g) => g.c.clock === c.clock && g.c.edge !== c.edge && g.c.encoding === c.encoding && g.c.fcs === c.fcs);
      if (t && other) {
        const here = c.edge === 'rising' ? t.fromRising : t.fromFalling;
        const there = c.edge === 'rising' ? t.fromFalling : t.fromRising;
        c.notes.push(
          here >= there
            ? `Data changes lie ${fmtPeriods(here)} of a clock period from ${c.edge} edges and ${fmtPeriods(there)} from ${c.edge === 'rising' ? 'falling' : 'rising'} ones: the data is stable at the ${c.edge} edge.`
            : `The data changes at ${c.edge} edges (${fmtPeriods(here)} of a period away): sampling there works only while the data holds past the edge; the ${c.edge === 'rising' ? 'falling' : 'rising'} edge is the safe one.`,
        );
      }
    } else if (group.some((g) => g.c.clock !== null) && c !== first) {
      c.notes.push('Decodes as well without the clock; the captured clock is preferred, as it follows the line’s real timing.');
    }
  }
}

/** The best setting's evidence, then what each other choice gave: "… · NRZI: 0 good of 61". */
export function contrasts(ranking: FinderCandidate[]): string[] {
  const best = ranking[0];
  if (!best) return [];
  const out: string[] = [];
  const same = (c: FinderCandidate, ...except: (keyof FinderCandidate)[]) =>
    (['format', 'rawWidth', 'clock', 'edge', 'encoding', 'invert', 'fcs'] as (keyof FinderCandidate)[]).every((k) => except.includes(k) || c[k] === best[k]);
  /** the best-ranked setting that differs in `differ` (and may differ in `free`), equal otherwise */
  const pick = (label: (c: FinderCandidate) => string, differ: (keyof FinderCandidate)[], free: (keyof FinderCandidate)[] = []) => {
    const c = ranking.find((x) => x !== best && same(x, ...differ, ...free) && differ.some((d) => x[d] !== best[d]));
    if (c) out.push(`${label(c)}: ${groupDigits(c.good)} good of ${groupDigits(c.frames)}`);
  };
  pick((c) => (c.encoding === 'nrzi' ? 'NRZI' : c.invert ? 'NRZ inverted' : 'NRZ'), ['encoding', 'invert']);
  if (best.clock) pick((c) => `${c.edge} edge`, ['edge']);
  pick((c) => (c.clock ? `clock ${c.clock}` : 'no clock'), ['clock'], ['edge']);
  pick((c) => `FCS-${c.fcs}`, ['fcs']);
  pick((c) => (c.format === 'raw' ? `raw, ${c.rawWidth}-byte samples` : c.format), ['format', 'rawWidth'], ['clock', 'edge']);
  return out;
}
