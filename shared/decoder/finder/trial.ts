// Trial decodes: one pass over a window's transitions (or line bits, or cut frames) decodes it
// under many settings at once and counts frames and good FCS per setting.
//
// The settings share work where the line allows it:
// - one bit recovery per clock choice (each clock candidate, on each edge; or each group of data
//   channels with the same recovered bit time) samples the line levels;
// - the levels of each link go to three deframers: NRZ, NRZ inverted and NRZI (inversion does not
//   change NRZI, which carries data in transitions: ISO/IEC 13239, a 0 is a transition);
// - every frame a deframer finds is checked against both FCS widths.
import { BitRecovery } from '../bits';
import { Deframer } from '../deframe';
import { FCS16_GOOD_RESIDUE, fcs16Register, fcs32 } from '../fcs';
import { BIT_CHUNK_SIZE } from '../link-bits';
import type { BitChunk, ChannelInfo, ClockEdge, RawFrame, TransitionSink, Transitions } from '../types';

export type LineVariant = 'nrz' | 'nrz-inv' | 'nrzi';
export const LINE_VARIANTS: readonly LineVariant[] = ['nrz', 'nrz-inv', 'nrzi'];

/** Frames a deframer found under one line variant, and how many had a good FCS of each width. */
export class VariantCount {
  /** complete frames (whole octets or residue) of at least address, control and a 16-bit FCS */
  frames = 0;
  good16 = 0;
  /** frames long enough for a 32-bit FCS */
  frames32 = 0;
  good32 = 0;
}

/** One link's levels → the three line variants → deframers → counts. */
class LinkTrial {
  private readonly deframers: (Deframer | null)[];
  readonly counts: VariantCount[];
  private readonly packed: Uint8Array[];
  private ref = -1;

  constructor(link: string, variants: readonly LineVariant[]) {
    this.counts = LINE_VARIANTS.map(() => new VariantCount());
    this.packed = LINE_VARIANTS.map(() => new Uint8Array((BIT_CHUNK_SIZE >> 3) + 2));
    this.deframers = LINE_VARIANTS.map((v, k) => {
      if (!variants.includes(v)) return null;
      const count = this.counts[k];
      return new Deframer(link, { frame: (f) => countFrame(f, count), event: () => {} }, { minOctets: 4, maxFrameOctets: 1 << 14 });
    });
  }

  /** a chunk of sampled line levels (NRZ, not inverted) */
  bits(chunk: BitChunk): void {
    const n = chunk.n;
    const src = chunk.bits;
    const [nrz, inv, nrzi] = this.packed;
    const bytes = (n + 7) >> 3;
    nrz.fill(0, 0, bytes);
    nrzi.fill(0, 0, bytes);
    let ref = this.ref < 0 ? (n > 0 ? src[0] : 0) : this.ref;
    for (let i = 0; i < n; i++) {
      const level = src[i];
      const at = i >> 3;
      const bit = 1 << (i & 7);
      if (level) nrz[at] |= bit;
      if (level === ref) nrzi[at] |= bit;
      ref = level;
    }
    this.ref = ref;
    for (let i = 0; i < bytes; i++) inv[i] = ~nrz[i] & 0xff;
    const empty = src.subarray(0, 0);
    for (let k = 0; k < 3; k++) {
      const d = this.deframers[k];
      if (d) d.push({ bits: empty, packed: this.packed[k], samples: chunk.samples, n });
    }
  }

  finish(): void {
    for (const d of this.deframers) d?.finish();
  }
}

function countFrame(f: RawFrame, c: VariantCount): void {
  if (f.status !== 'ok' && f.status !== 'residue') return;
  const b = f.bytes;
  const n = b.length;
  c.frames++;
  if (f.status !== 'ok') return;
  if (fcs16Register(0xffff, b, 0, n) === FCS16_GOOD_RESIDUE) c.good16++;
  if (n >= 6) {
    c.frames32++;
    const received = (b[n - 4] | (b[n - 3] << 8) | (b[n - 2] << 16) | (b[n - 1] << 24)) >>> 0;
    if (fcs32(b, 0, n - 4) === received) c.good32++;
  }
}

/** How one bit recovery samples the line: a clock channel and edge, or a recovered clock. */
export interface RecoveryPlan {
  /** key shared by all candidates this recovery feeds */
  key: string;
  clock: { channel: ChannelInfo; edge: ClockEdge } | null;
  /** samples per bit for a recovered clock */
  samplesPerBit: number | null;
  data: ChannelInfo[];
}

/** A recovery and its links' counts. */
export class RecoveryTrial {
  readonly links = new Map<string, LinkTrial>();
  private readonly recovery: BitRecovery;

  constructor(
    readonly plan: RecoveryPlan,
    samplePeriodSeconds: number,
    variants: readonly LineVariant[],
  ) {
    for (const d of plan.data) this.links.set(d.name, new LinkTrial(d.name, variants));
    this.recovery = new BitRecovery(
      {
        samplePeriodSeconds,
        clock: plan.clock?.channel.index,
        data: plan.data.map((d) => ({ channel: d.index, link: d.name })),
        edge: plan.clock?.edge ?? 'rising',
        encoding: 'nrz',
        invert: false,
        bitRate: plan.samplesPerBit ? 1 / (plan.samplesPerBit * samplePeriodSeconds) : undefined,
      },
      { bits: (link, chunk) => this.links.get(link)!.bits(chunk), event: () => {} },
    );
  }

  transitions(t: Transitions): void {
    this.recovery.transitions(t);
  }

  finish(): void {
    this.recovery.finish();
    for (const l of this.links.values()) l.finish();
  }
}

/** Fans one reader's transitions out to every recovery of a window. */
export class TransitionFanOut implements TransitionSink {
  constructor(
    private readonly onHeader: (channels: ChannelInfo[], period: number) => void,
    private readonly targets: () => { transitions(t: Transitions): void }[],
  ) {}

  header(channels: ChannelInfo[], samplePeriodSeconds: number): void {
    this.onHeader(channels, samplePeriodSeconds);
  }

  transitions(t: Transitions): void {
    for (const target of this.targets()) target.transitions(t);
  }
}

/** Line bits as an adapter hands them over (octet streams): the same three variants. */
export class LineBitTrial {
  readonly link: LinkTrial;
  constructor(
    readonly name: string,
    variants: readonly LineVariant[],
  ) {
    this.link = new LinkTrial(name, variants);
  }
  bits(chunk: BitChunk): void {
    this.link.bits(chunk);
  }
  finish(): void {
    this.link.finish();
  }
}

/** Cut frames (frame logs): only the FCS width is in question. */
export class FrameTrial {
  readonly counts = new Map<string, VariantCount>();
  frame(link: string, bytes: Uint8Array): void {
    let c = this.counts.get(link);
    if (!c) this.counts.set(link, (c = new VariantCount()));
    countFrame({ link, seq: 0, firstSample: 0, lastSample: 0, bytes, bitLength: bytes.length * 8, stuffed: [], status: bytes.length >= 4 ? 'ok' : 'short' }, c);
  }
}

export function variantIndex(v: LineVariant): number {
  return LINE_VARIANTS.indexOf(v);
}

export function linkCounts(trial: RecoveryTrial | LineBitTrial): Map<string, VariantCount[]> {
  if (trial instanceof LineBitTrial) return new Map([[trial.name, trial.link.counts]]);
  const out = new Map<string, VariantCount[]>();
  for (const [name, l] of trial.links) out.set(name, l.counts);
  return out;
}
