// Which way each link carries traffic, and which stations are on the line, from the frames.
//
// Evidence, each with a weight and a sentence a user can check:
// - link set-up: the side that sends SNRM/SABM (mode-setting commands) is the primary, the side
//   answering UA or FRMR the secondary (ISO/IEC 13239 command/response repertoire, from memory);
//   a file server is the primary that polls its stations (common practice for such networks);
// - the response bit of the active field map: call codes with it set are answers, so their link
//   comes from the server;
// - echoes: an answer repeats bytes of the request it answers (a tag, a record number), so in the
//   order request → answer the echo holds and in the order answer → next request it does not;
// - who speaks first after a silence: the first information frame after a pause is a request;
// - a link's other direction: the two links of one station's line carry its address both ways,
//   so when one direction is known the other is the opposite one.
import type { FieldMap } from '../calls/field-map';
import type { DecodedFrame } from '../types';

/** which way a link carries, relative to the server: also the channel-role form's link direction */
export const LINK_DIRECTIONS = ['to-server', 'from-server', 'unknown'] as const;
export type InferredDirection = (typeof LINK_DIRECTIONS)[number];

export interface DirectionEvidence {
  /** positive: from the server; negative: to the server */
  weight: number;
  reason: string;
}

export interface DirectionVerdict {
  link: string;
  direction: InferredDirection;
  /** 0 (a guess) … 1 (every clue agrees) */
  confidence: number;
  /** the evidence, strongest first, as sentences; for 'unknown', why it could not be told */
  reasons: string[];
  evidence: DirectionEvidence[];
  /** the address on most of the link's frames, when one address dominates */
  station: number | null;
  /** the link carrying the same station's other direction */
  partner: string | null;
}

export interface RosterStation {
  address: number;
  frames: number;
  /** frames per link */
  links: { link: string; frames: number; infoFrames: number }[];
  firstSample: number;
  lastSample: number;
  firstSeconds: number;
  lastSeconds: number;
  /** a name for the user to change: "station 0x21" */
  suggestedName: string;
}

export interface DirectionOptions {
  samplePeriodSeconds: number;
  /** the field map whose response bit and tag help; null: link-level evidence only */
  map?: FieldMap | null;
  /** pause in information frames (seconds) after which the next one counts as "first after a silence" */
  silenceSeconds?: number;
}

const PRIMARY_U = new Map<number, string>([
  [0x83, 'SNRM'],
  [0xcf, 'SNRME'],
  [0x2f, 'SABM'],
  [0x6f, 'SABME'],
]);
const SECONDARY_U = new Map<number, string>([
  [0x63, 'UA'],
  [0x87, 'FRMR'],
]);

interface LinkFacts {
  link: string;
  frames: DecodedFrame[];
  good: number;
  info: DecodedFrame[];
  addresses: Map<number, number>;
  station: number | null;
}

const hex = (n: number) => `0x${n.toString(16).padStart(2, '0')}`;

/** Infers each link's direction from good frames in time order (any links, any count). */
export function inferDirections(frames: readonly DecodedFrame[], options: DirectionOptions): DirectionVerdict[] {
  const facts = new Map<string, LinkFacts>();
  for (const f of frames) {
    let lf = facts.get(f.link);
    if (!lf) facts.set(f.link, (lf = { link: f.link, frames: [], good: 0, info: [], addresses: new Map(), station: null }));
    if (f.status !== 'ok' || !f.decode) continue;
    lf.good++;
    lf.frames.push(f);
    lf.addresses.set(f.decode.address, (lf.addresses.get(f.decode.address) ?? 0) + 1);
    if ((f.decode.kind === 'I' || f.decode.command === 'UI') && f.decode.infoLength > 0) lf.info.push(f);
  }
  for (const lf of facts.values()) {
    let best = -1;
    let n = 0;
    for (const [a, c] of lf.addresses) if (c > n) {
      best = a;
      n = c;
    }
    lf.station = lf.good > 0 && n >= lf.good * 0.9 ? best : null;
  }
  const verdicts = new Map<string, DirectionVerdict>();
  for (const lf of facts.values()) {
    verdicts.set(lf.link, { link: lf.link, direction: 'unknown', confidence: 0, reasons: [], evidence: [], station: lf.station, partner: null });
  }
  // the two directions of a station's line carry the same address
  for (const lf of facts.values()) {
    if (lf.station === null) continue;
    const others = [...facts.values()].filter((o) => o !== lf && o.station === lf.station);
    if (others.length === 1) verdicts.get(lf.link)!.partner = others[0].link;
  }
  for (const lf of facts.values()) linkSetUp(lf, verdicts.get(lf.link)!);
  if (options.map) {
    for (const lf of facts.values()) {
      const v = verdicts.get(lf.link)!;
      responseBit(lf, v.partner ? facts.get(v.partner)! : null, options.map, v);
    }
  }
  const pairs = new Set<string>();
  for (const v of verdicts.values()) {
    if (!v.partner) continue;
    const key = [v.link, v.partner].sort().join('\u0000');
    if (pairs.has(key)) continue;
    pairs.add(key);
    const a = facts.get(v.link)!;
    const b = facts.get(v.partner)!;
    echoes(a, b, verdicts);
    firstAfterSilence(a, b, verdicts, (options.silenceSeconds ?? 0.05) / options.samplePeriodSeconds);
  }
  for (const v of verdicts.values()) decide(v, facts.get(v.link)!);
  // a link whose other direction is known, and nothing says otherwise, is the opposite one
  for (const v of verdicts.values()) {
    if (v.direction !== 'unknown' || !v.partner) continue;
    const p = verdicts.get(v.partner)!;
    if (p.direction === 'unknown' || v.evidence.some((e) => Math.sign(e.weight) === (p.direction === 'to-server' ? -1 : 1))) continue;
    v.direction = p.direction === 'to-server' ? 'from-server' : 'to-server';
    v.confidence = p.confidence * 0.9;
    v.reasons = [`The other direction of station ${hex(v.station!)}'s line (${p.link}) ${p.direction === 'to-server' ? 'carries its requests' : 'carries the server’s answers'}, so this one carries the ${p.direction === 'to-server' ? 'answers' : 'requests'}.`, ...v.reasons];
  }
  return [...verdicts.values()].sort((x, y) => (x.link < y.link ? -1 : x.link > y.link ? 1 : 0));
}

function add(v: DirectionVerdict, weight: number, reason: string): void {
  v.evidence.push({ weight, reason });
}

function linkSetUp(lf: LinkFacts, v: DirectionVerdict): void {
  const primary = new Map<string, number>();
  const secondary = new Map<string, number>();
  for (const f of lf.frames) {
    if (f.decode!.kind !== 'U') continue;
    const code = f.decode!.control & 0xef;
    const p = PRIMARY_U.get(code);
    const s = SECONDARY_U.get(code);
    if (p) primary.set(p, (primary.get(p) ?? 0) + 1);
    if (s) secondary.set(s, (secondary.get(s) ?? 0) + 1);
  }
  const list = (m: Map<string, number>) => [...m].map(([k, n]) => `${n} ${k}`).join(', ');
  if (primary.size) add(v, 3, `It sends the link set-up (${list(primary)}): the primary station, which on these networks is the server polling its stations (common practice).`);
  if (secondary.size) add(v, -3, `It answers the link set-up (${list(secondary)}): a secondary station, i.e. a station answering the server.`);
}

/** How many information frames of a link carry the map's response bit, of how many readable. */
function responseBitShare(lf: LinkFacts, map: FieldMap): { set: number; n: number } | null {
  const cc = map.callCode;
  if (!cc || !cc.responseMask || lf.info.length < 3) return null;
  let set = 0;
  let n = 0;
  for (const f of lf.info) {
    const d = f.decode!;
    const at = d.infoOffset + cc.offset;
    const size = cc.type === 'u8' ? 1 : 2;
    if (at + size > d.infoOffset + d.infoLength) continue;
    const value = cc.type === 'u8' ? f.bytes[at] : cc.type === 'u16le' ? f.bytes[at] | (f.bytes[at + 1] << 8) : (f.bytes[at] << 8) | f.bytes[at + 1];
    n++;
    if (value & cc.responseMask) set++;
  }
  return n < 3 ? null : { set, n };
}

/**
 * The response bit says "answer" or "request" per frame. It counts only where it tells the two
 * directions of a line apart: the same bit on both is a map that does not fit the protocol.
 */
function responseBit(lf: LinkFacts, partner: LinkFacts | null, map: FieldMap, v: DirectionVerdict): void {
  const mine = responseBitShare(lf, map);
  if (!mine) return;
  const { set, n } = mine;
  const mask = `0x${map.callCode!.responseMask.toString(16).toUpperCase()}`;
  const side = set >= n * 0.9 ? 1 : set <= n * 0.1 ? -1 : 0;
  if (side === 0) {
    add(v, 0, `The response bit (${mask}) of “${map.name}” is set on ${set} of ${n} information frames: this link mixes requests and answers, or the map does not fit.`);
    return;
  }
  const other = partner ? responseBitShare(partner, map) : null;
  if (other) {
    const otherSide = other.set >= other.n * 0.9 ? 1 : other.set <= other.n * 0.1 ? -1 : 0;
    if (otherSide === side) {
      add(v, 0, `The response bit (${mask}) of “${map.name}” is ${side > 0 ? 'set' : 'clear'} on both directions of this line (here ${side > 0 ? set : n - set} of ${n}): the map does not seem to fit the protocol, so it says nothing about direction.`);
      return;
    }
  }
  if (side > 0) add(v, 4, `${set} of ${n} information frames have the response bit (${mask}) of the call code set, as “${map.name}” marks answers.`);
  else add(v, -4, `${n - set} of ${n} information frames have the response bit (${mask}) of the call code clear, as “${map.name}” marks requests.`);
}

/** echo offsets looked at in each information field */
const ECHO_SPAN = 24;
/** pairs of frames compared at most, per order */
const ECHO_PAIRS = 2000;

/**
 * Information frames of the two links merged in time order; each frame paired with the next one
 * on the other link. For every pair of offsets (ia in a frame of link a, jb in a frame of link
 * b), the share of pairs in which the two octets are equal, once with b's frame following a's
 * and once the other way round. An answer repeats its request's tag or record number, while the
 * next request carries a new one: the echo holds in the order request → answer only.
 */
function echoes(a: LinkFacts, b: LinkFacts, verdicts: Map<string, DirectionVerdict>): void {
  const merged = [...a.info.map((f) => ({ f, side: 0 })), ...b.info.map((f) => ({ f, side: 1 }))].sort((x, y) => x.f.firstSample - y.f.firstSample);
  // counts[order][ia * SPAN + jb]: order 0 = a's frame then b's, 1 = b's then a's
  const counts = [new Int32Array(ECHO_SPAN * ECHO_SPAN), new Int32Array(ECHO_SPAN * ECHO_SPAN)];
  const totals = [0, 0];
  for (let k = 0; k + 1 < merged.length; k++) {
    const x = merged[k];
    const y = merged[k + 1];
    if (x.side === y.side) continue;
    const order = x.side;
    if (totals[order] >= ECHO_PAIRS) continue;
    totals[order]++;
    const fa = order === 0 ? x.f : y.f;
    const fb = order === 0 ? y.f : x.f;
    const ad = fa.decode!;
    const bd = fb.decode!;
    const na = Math.min(ECHO_SPAN, ad.infoLength);
    const nb = Math.min(ECHO_SPAN, bd.infoLength);
    const c = counts[order];
    for (let i = 0; i < na; i++) {
      const v = fa.bytes[ad.infoOffset + i];
      for (let j = 0; j < nb; j++) if (fb.bytes[bd.infoOffset + j] === v) c[i * ECHO_SPAN + j]++;
    }
  }
  if (totals[0] < 3 || totals[1] < 3) return;
  let best = 0;
  let at = -1;
  for (let k = 0; k < ECHO_SPAN * ECHO_SPAN; k++) {
    const d = counts[0][k] / totals[0] - counts[1][k] / totals[1];
    if (Math.abs(d) > Math.abs(best)) {
      best = d;
      at = k;
    }
  }
  if (Math.abs(best) < 0.5) return;
  const ia = Math.floor(at / ECHO_SPAN);
  const jb = at % ECHO_SPAN;
  // best > 0: the echo holds when b follows a, so a asks and b answers
  const [req, resp, reqAt, respAt] = best > 0 ? [a, b, ia, jb] : [b, a, jb, ia];
  const order = best > 0 ? 0 : 1;
  const share = (n: number, t: number) => `${Math.round((n / t) * 100)} %`;
  const reason = `Information octet ${respAt} of frames on ${resp.link} repeats octet ${reqAt} of the frame just before on ${req.link} in ${share(counts[order][at], totals[order])} of ${totals[order]} pairs, but only in ${share(counts[1 - order][at], totals[1 - order])} the other way round: an answer echoing its request (a tag or record number).`;
  add(verdicts.get(req.link)!, -3 * Math.min(1, Math.abs(best)), reason);
  add(verdicts.get(resp.link)!, 3 * Math.min(1, Math.abs(best)), reason);
}

function firstAfterSilence(a: LinkFacts, b: LinkFacts, verdicts: Map<string, DirectionVerdict>, silence: number): void {
  const merged = [...a.info.map((f) => ({ f, side: 0 })), ...b.info.map((f) => ({ f, side: 1 }))].sort((x, y) => x.f.firstSample - y.f.firstSample);
  const first = [0, 0];
  let lastEnd = -Infinity;
  for (const m of merged) {
    if (m.f.firstSample - lastEnd > silence) first[m.side]++;
    lastEnd = Math.max(lastEnd, m.f.lastSample);
  }
  const n = first[0] + first[1];
  if (n < 2) return;
  const lead = first[0] >= first[1] ? 0 : 1;
  if (first[lead] < n * 0.8) return;
  const [starter, other] = lead === 0 ? [a, b] : [b, a];
  const reason = `After ${n} pauses in the information frames, ${starter.link} spoke first ${first[lead]} times and ${other.link} ${first[1 - lead]}: a request opens each burst.`;
  add(verdicts.get(starter.link)!, -1.5, reason);
  add(verdicts.get(other.link)!, 1.5, reason);
}

function decide(v: DirectionVerdict, lf: LinkFacts): void {
  const ev = [...v.evidence].sort((x, y) => Math.abs(y.weight) - Math.abs(x.weight));
  v.evidence = ev;
  const score = ev.reduce((s, e) => s + e.weight, 0);
  const against = ev.filter((e) => Math.sign(e.weight) !== Math.sign(score) && e.weight !== 0).reduce((s, e) => s + Math.abs(e.weight), 0);
  const total = ev.reduce((s, e) => s + Math.abs(e.weight), 0);
  if (lf.good === 0) {
    v.reasons = ['No frame with a good FCS on this link in the part of the capture read.'];
    return;
  }
  if (Math.abs(score) < 1.5) {
    v.reasons = ev.length
      ? [`The clues disagree or are too weak: ${ev.map((e) => e.reason).join(' ')}`]
      : [
          lf.info.length === 0
            ? `Only supervisory and unnumbered frames (${lf.good}) and no link set-up: nothing shows which side answers. Decode a longer stretch with file traffic, or set the direction by hand.`
            : `${lf.info.length} information frames, but no link set-up${v.partner ? '' : ' and no link in the other direction with the same address'} to compare them with. Set the direction by hand.`,
        ];
    return;
  }
  v.direction = score > 0 ? 'from-server' : 'to-server';
  v.confidence = Math.max(0, Math.min(1, (Math.abs(score) - against) / Math.max(total, 6)));
  v.reasons = ev.filter((e) => Math.sign(e.weight) === Math.sign(score)).map((e) => e.reason);
  const contra = ev.filter((e) => Math.sign(e.weight) === -Math.sign(score));
  if (contra.length) v.reasons.push(`Against it: ${contra.map((e) => e.reason).join(' ')}`);
  for (const e of ev) if (e.weight === 0) v.reasons.push(e.reason);
}

/** Stations by the address octet, with counts per link and when each was first and last seen. */
export function stationRoster(frames: readonly DecodedFrame[], samplePeriodSeconds: number): RosterStation[] {
  const by = new Map<number, { frames: number; links: Map<string, { frames: number; info: number }>; first: number; last: number }>();
  for (const f of frames) {
    if (f.status !== 'ok' || !f.decode) continue;
    const a = f.decode.address;
    let s = by.get(a);
    if (!s) by.set(a, (s = { frames: 0, links: new Map(), first: f.firstSample, last: f.lastSample }));
    s.frames++;
    s.first = Math.min(s.first, f.firstSample);
    s.last = Math.max(s.last, f.lastSample);
    let l = s.links.get(f.link);
    if (!l) s.links.set(f.link, (l = { frames: 0, info: 0 }));
    l.frames++;
    if (f.decode.kind === 'I' && f.decode.infoLength > 0) l.info++;
  }
  return [...by]
    .map(([address, s]) => ({
      address,
      frames: s.frames,
      links: [...s.links].map(([link, c]) => ({ link, frames: c.frames, infoFrames: c.info })).sort((x, y) => y.frames - x.frames),
      firstSample: s.first,
      lastSample: s.last,
      firstSeconds: s.first * samplePeriodSeconds,
      lastSeconds: s.last * samplePeriodSeconds,
      suggestedName: `station ${hex(address)}`,
    }))
    .sort((x, y) => x.address - y.address);
}

/**
 * Links whose configured direction the frames contradict: e.g. a "to the server" link whose
 * information frames all carry the map's response bit. One sentence per link, for the decode page.
 */
export function directionConflicts(configured: { channel: string; direction: InferredDirection }[], inferred: readonly DirectionVerdict[]): { link: string; configured: InferredDirection; inferred: InferredDirection; message: string }[] {
  const out: { link: string; configured: InferredDirection; inferred: InferredDirection; message: string }[] = [];
  for (const c of configured) {
    const v = inferred.find((x) => x.link === c.channel);
    if (!v || v.direction === 'unknown') continue;
    const words = (d: InferredDirection) => (d === 'to-server' ? 'to the server' : d === 'from-server' ? 'from the server' : 'of unknown direction');
    if (c.direction === 'unknown') {
      out.push({ link: c.channel, configured: c.direction, inferred: v.direction, message: `${c.channel} is set ${words('unknown')}; the frames say it carries traffic ${words(v.direction)}: ${v.reasons[0]}` });
    } else if (c.direction !== v.direction) {
      out.push({ link: c.channel, configured: c.direction, inferred: v.direction, message: `${c.channel} is set to carry traffic ${words(c.direction)}, but the frames say ${words(v.direction)}: ${v.reasons[0]}` });
    }
  }
  return out;
}
