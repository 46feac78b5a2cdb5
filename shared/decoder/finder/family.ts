// One way of reading the capture's bytes (a format, and for raw samples a sample width) and the
// trial decodes of each window under it. Counts add up over the windows the finder reads.
import { createReader } from '../readers';
import type { CaptureFormat, CaptureReader, ChannelInfo, ClockEdge, DecodeIssue, LineEncoding, ReaderOptions, Transitions } from '../types';
import { ChannelProbe, type EdgeTiming } from './probe';
import type { BitTimeEstimate, ClockEstimate } from './rate';
import { FrameTrial, LineBitTrial, LINE_VARIANTS, linkCounts, RecoveryTrial, TransitionFanOut, VariantCount, type LineVariant, type RecoveryPlan } from './trial';

export interface FamilySpec {
  key: string;
  format: CaptureFormat;
  rawWidth: 1 | 2 | null;
}

/** What the caller already knows; everything left out is tried. */
export interface TrialConstraints {
  sampleRate?: number;
  rawWidth?: 1 | 2;
  channelNames?: string[];
  /** nominal bit/s: the time base of octet streams, and the rate a clock is recovered at */
  bitRate?: number;
  /** a clock channel; null: the capture has no clock */
  clock?: string | null;
  data?: string[];
  edge?: ClockEdge;
  encoding?: LineEncoding;
  invert?: boolean;
  fcs?: 16 | 32;
}

/** How a plan samples the line, as the ranking reports it. */
export interface PlanInfo {
  key: string;
  clock: string | null;
  edge: ClockEdge | null;
  /** samples per bit: from the clock's period, or the recovered bit time */
  samplesPerBit: number | null;
  spread: number | null;
  /** true when the rate was given rather than estimated */
  givenRate: boolean;
  /** channels decoded as links under this plan */
  data: string[];
}

interface Acc {
  frames: number;
  good16: number;
  frames32: number;
  good32: number;
}

export interface FamilyCounts {
  plan: PlanInfo;
  variant: LineVariant;
  fcs: 16 | 32;
  links: { channel: string; frames: number; good: number }[];
}

const addInto = (a: Acc, c: VariantCount | Acc) => {
  a.frames += c.frames;
  a.good16 += c.good16;
  a.frames32 += c.frames32;
  a.good32 += c.good32;
};

export class Family {
  channels: ChannelInfo[] | null = null;
  period = 1;
  /** whether sample indices map to real time (a sample rate, a VCD timescale, a bit rate) */
  readonly timeBase: boolean;
  readonly rates = new Map<string, BitTimeEstimate>();
  readonly clocks = new Map<string, ClockEstimate>();
  readonly handshake = new Map<string, string>();
  readonly changes = new Map<string, number>();
  private readonly timing = new Map<string, EdgeTiming>();
  readonly plans = new Map<string, PlanInfo>();
  /** plan key → link → per variant counts, from finished windows */
  private readonly done = new Map<string, Map<string, Acc[]>>();
  /** line samples of finished windows */
  private doneSamples = 0;
  issue: DecodeIssue | null = null;
  /** no longer read: it found frames but none good while another way read good ones */
  retired = false;

  // the current window
  private reader: CaptureReader | null = null;
  private trials: (RecoveryTrial | LineBitTrial)[] = [];
  private frameTrial: FrameTrial | null = null;
  private first = Infinity;
  private last = -Infinity;

  constructor(
    readonly spec: FamilySpec,
    private readonly c: TrialConstraints,
  ) {
    this.timeBase =
      spec.format === 'raw' ? !!c.sampleRate : spec.format === 'octets' ? !!c.bitRate : true;
  }

  readerOptions(): ReaderOptions {
    const c = this.c;
    switch (this.spec.format) {
      case 'raw':
        return { sampleRate: c.sampleRate ?? 1, rawWidth: this.spec.rawWidth ?? 1, channelNames: c.channelNames };
      case 'octets':
        return { bitRate: c.bitRate, channelNames: c.channelNames };
      case 'framelog':
        return { bitRate: c.bitRate };
      default:
        return { sampleRate: c.sampleRate };
    }
  }

  get variants(): LineVariant[] {
    const { encoding, invert } = this.c;
    if (encoding === 'nrzi') return ['nrzi'];
    const nrz: LineVariant[] = invert === undefined ? ['nrz', 'nrz-inv'] : [invert ? 'nrz-inv' : 'nrz'];
    return encoding === 'nrz' ? nrz : [...nrz, 'nrzi'];
  }

  get fcsWidths(): (16 | 32)[] {
    return this.c.fcs ? [this.c.fcs] : [16, 32];
  }

  /** Starts a window: probes its first bytes (sample formats) and sets up the trial decodes. */
  startWindow(probeInput: Uint8Array[]): void {
    this.first = Infinity;
    this.last = -Infinity;
    this.trials = [];
    this.frameTrial = null;
    if (this.issue || this.retired) return;
    const f = this.spec.format;
    if (f === 'framelog') {
      const trial = (this.frameTrial = new FrameTrial());
      this.reader = createReader(f, this.readerOptions(), {
        header: (_links: ChannelInfo[], period: number) => (this.period = period),
        frame: (link: string, firstSample: number, lastSample: number, bytes: Uint8Array) => {
          this.span(firstSample, lastSample);
          trial.frame(link, bytes);
        },
      });
      return;
    }
    if (f === 'octets') {
      let trial: LineBitTrial | null = null;
      this.reader = createReader(f, this.readerOptions(), {
        header: (links: ChannelInfo[], period: number) => {
          this.period = period;
          this.channels = links;
          const plan: PlanInfo = { key: 'line', clock: null, edge: null, samplesPerBit: 1, spread: null, givenRate: !!this.c.bitRate, data: [links[0].name] };
          this.plans.set(plan.key, plan);
          trial = new LineBitTrial(links[0].name, this.variants);
          this.trials = [trial];
        },
        bits: (_link: string, chunk) => {
          if (chunk.n > 0) this.span(chunk.samples[0], chunk.samples[chunk.n - 1]);
          trial!.bits(chunk);
        },
      });
      return;
    }
    // sample formats: probe, then one recovery per way of sampling the line
    const probe = new ChannelProbe();
    const probeReader = createReader(f, this.readerOptions(), probe);
    for (const b of probeInput) probeReader.push(b);
    if (probeReader.fatal()) {
      this.issue = probeReader.fatal();
      return;
    }
    // readers hand on transitions in batches: finish() flushes the last one (a line cut at the
    // probe's end may read wrong; one change more or less does not move the estimates)
    probeReader.finish();
    const probed = probe.result();
    this.learn(probed.channels, probed.edgeTiming);
    const fanOut = new TransitionFanOut(
      (channels, period) => {
        this.channels = channels;
        this.period = period;
        this.trials = this.planWindow(channels).map((p) => new RecoveryTrial(p, period, this.variants));
      },
      () => this.trials as RecoveryTrial[],
    );
    const spanning = {
      header: (channels: ChannelInfo[], period: number) => fanOut.header(channels, period),
      transitions: (t: Transitions) => {
        if (t.n > 0) this.span(t.sample[0], t.sample[t.n - 1]);
        fanOut.transitions(t);
      },
    };
    this.reader = createReader(f, this.readerOptions(), spanning);
  }

  private span(a: number, b: number): void {
    if (a < this.first) this.first = a;
    if (b > this.last) this.last = b;
  }

  push(bytes: Uint8Array): void {
    if (!this.reader || this.issue || this.retired) return;
    this.reader.push(bytes);
    const fatal = this.reader.fatal();
    if (fatal) this.issue = fatal;
  }

  /** Ends the window: its counts join the totals. */
  endWindow(): void {
    if (this.reader && !this.issue && !this.retired) {
      this.reader.finish();
      for (const t of this.trials) t.finish();
    }
    this.merge(this.done, this.liveCounts());
    this.doneSamples += this.windowSamples();
    this.reader = null;
    this.trials = [];
    this.frameTrial = null;
  }

  private windowSamples(): number {
    return this.last >= this.first ? this.last - this.first : 0;
  }

  /** seconds of line time read so far (sample units when there is no time base) */
  lineSeconds(): number {
    return (this.doneSamples + this.windowSamples()) * this.period;
  }

  windowSeconds(): number {
    return this.windowSamples() * this.period;
  }

  private liveCounts(): Map<string, Map<string, Acc[]>> {
    const out = new Map<string, Map<string, Acc[]>>();
    for (const t of this.trials) {
      const key = t instanceof LineBitTrial ? 'line' : t.plan.key;
      const m = new Map<string, Acc[]>();
      for (const [link, counts] of linkCounts(t)) m.set(link, counts.map((c) => ({ frames: c.frames, good16: c.good16, frames32: c.frames32, good32: c.good32 })));
      out.set(key, m);
    }
    if (this.frameTrial) {
      const m = new Map<string, Acc[]>();
      for (const [link, c] of this.frameTrial.counts) {
        const acc = LINE_VARIANTS.map(() => ({ frames: 0, good16: 0, frames32: 0, good32: 0 }));
        addInto(acc[0], c);
        m.set(link, acc);
      }
      out.set('frames', m);
      if (!this.plans.has('frames')) this.plans.set('frames', { key: 'frames', clock: null, edge: null, samplesPerBit: null, spread: null, givenRate: false, data: [] });
      const plan = this.plans.get('frames')!;
      for (const link of m.keys()) if (!plan.data.includes(link)) plan.data.push(link);
    }
    return out;
  }

  private merge(into: Map<string, Map<string, Acc[]>>, from: Map<string, Map<string, Acc[]>>): void {
    for (const [plan, links] of from) {
      let m = into.get(plan);
      if (!m) into.set(plan, (m = new Map()));
      for (const [link, accs] of links) {
        let have = m.get(link);
        if (!have) m.set(link, (have = LINE_VARIANTS.map(() => ({ frames: 0, good16: 0, frames32: 0, good32: 0 }))));
        accs.forEach((a, k) => addInto(have![k], a));
      }
    }
  }

  /** Counts per candidate (plan × line variant × FCS width), finished windows and the current one. */
  counts(): FamilyCounts[] {
    const all = new Map<string, Map<string, Acc[]>>();
    this.merge(all, this.done);
    this.merge(all, this.liveCounts());
    const out: FamilyCounts[] = [];
    const variants: LineVariant[] = this.spec.format === 'framelog' ? ['nrz'] : this.variants;
    for (const [key, links] of all) {
      const plan = this.plans.get(key);
      if (!plan) continue;
      for (const variant of variants) {
        const k = LINE_VARIANTS.indexOf(variant);
        for (const fcs of this.fcsWidths) {
          out.push({
            plan,
            variant,
            fcs,
            links: [...links].map(([channel, accs]) => ({
              channel,
              frames: fcs === 16 ? accs[k].frames : accs[k].frames32,
              good: fcs === 16 ? accs[k].good16 : accs[k].good32,
            })),
          });
        }
      }
    }
    return out;
  }

  /** Estimates from a probe: the first estimate of each channel is kept, so plans stay the same across windows. */
  private learn(channels: { name: string; changes: number; handshake: string | null; clock: ClockEstimate | null; bitTime: BitTimeEstimate | null }[], timing: EdgeTiming[]): void {
    for (const ch of channels) {
      this.changes.set(ch.name, (this.changes.get(ch.name) ?? 0) + ch.changes);
      if (ch.handshake) this.handshake.set(ch.name, ch.handshake);
      if (ch.clock && !this.clocks.has(ch.name)) this.clocks.set(ch.name, ch.clock);
      if (ch.bitTime && !this.rates.has(ch.name) && !ch.clock) this.rates.set(ch.name, ch.bitTime);
    }
    for (const t of timing) {
      const key = `${t.clock}\u0000${t.data}`;
      const have = this.timing.get(key);
      if (!have) this.timing.set(key, { ...t });
      else {
        const n = have.changes + t.changes;
        if (n > 0) {
          have.fromRising = (have.fromRising * have.changes + t.fromRising * t.changes) / n;
          have.fromFalling = (have.fromFalling * have.changes + t.fromFalling * t.changes) / n;
          have.changes = n;
        }
      }
    }
  }

  /** Where data changes fall in a clock's period, over all data channels: mean distance from each edge. */
  edgeTiming(clock: string): { fromRising: number; fromFalling: number; changes: number } | null {
    let r = 0;
    let f = 0;
    let n = 0;
    for (const t of this.timing.values()) {
      if (t.clock !== clock || t.changes === 0) continue;
      r += t.fromRising * t.changes;
      f += t.fromFalling * t.changes;
      n += t.changes;
    }
    return n ? { fromRising: r / n, fromFalling: f / n, changes: n } : null;
  }

  /** Channels resolved by name, exact first, then ignoring case. */
  resolve(name: string): ChannelInfo | null {
    const chs = this.channels ?? [];
    return chs.find((c) => c.name === name) ?? (chs.filter((c) => c.name.toLowerCase() === name.toLowerCase()).length === 1 ? chs.find((c) => c.name.toLowerCase() === name.toLowerCase())! : null);
  }

  /** The ways of sampling the line in this window. */
  private planWindow(channels: ChannelInfo[]): RecoveryPlan[] {
    const c = this.c;
    const byName = (n: string) => {
      const found = channels.find((ch) => ch.name === n) ?? channels.find((ch) => ch.name.toLowerCase() === n.toLowerCase());
      if (!found) {
        this.issue = {
          offset: 0,
          expected: `a channel named one of: ${channels.map((ch) => ch.name).join(', ')}`,
          message: `The capture has no channel "${n}"; its channels are ${channels.map((ch) => ch.name).join(', ')}.`,
        };
      }
      return found ?? null;
    };
    const active = (ch: ChannelInfo) => (this.changes.get(ch.name) ?? 0) > 0 && !this.handshake.has(ch.name);
    let clocks: ChannelInfo[];
    if (c.clock === null) clocks = [];
    else if (c.clock !== undefined) {
      const ck = byName(c.clock);
      clocks = ck ? [ck] : [];
    } else clocks = channels.filter((ch) => this.clocks.has(ch.name) && !this.handshake.has(ch.name) && !(c.data ?? []).includes(ch.name));
    let data: ChannelInfo[];
    if (c.data && c.data.length) data = c.data.map(byName).filter((d): d is ChannelInfo => d !== null);
    else data = channels.filter((ch) => active(ch) && !clocks.includes(ch) && !this.clocks.has(ch.name));
    if (this.issue) return [];
    data = data.filter((d) => !clocks.includes(d));
    if (data.length === 0) return [];
    const plans: RecoveryPlan[] = [];
    const edges: ClockEdge[] = c.edge ? [c.edge] : ['rising', 'falling'];
    for (const ck of clocks) {
      const est = this.clocks.get(ck.name);
      for (const edge of edges) {
        const key = `clock:${ck.name}:${edge}`;
        plans.push({ key, clock: { channel: ck, edge }, samplesPerBit: null, data });
        if (!this.plans.has(key)) {
          this.plans.set(key, { key, clock: ck.name, edge, samplesPerBit: est?.period ?? null, spread: est?.spread ?? null, givenRate: false, data: data.map((d) => d.name) });
        }
      }
    }
    if (c.clock === undefined || c.clock === null) {
      if (c.bitRate && this.timeBase) {
        const spb = 1 / (c.bitRate * this.period);
        plans.push({ key: 'rate:given', clock: null, samplesPerBit: spb, data });
        if (!this.plans.has('rate:given')) this.plans.set('rate:given', { key: 'rate:given', clock: null, edge: null, samplesPerBit: spb, spread: null, givenRate: true, data: data.map((d) => d.name) });
      } else {
        for (const group of rateGroups(data, this.rates)) {
          const key = `rate:${group.members[0].name}`;
          plans.push({ key, clock: null, samplesPerBit: group.samplesPerBit, data: group.members });
          if (!this.plans.has(key)) {
            this.plans.set(key, { key, clock: null, edge: null, samplesPerBit: group.samplesPerBit, spread: group.spread, givenRate: false, data: group.members.map((d) => d.name) });
          }
        }
      }
    }
    return plans;
  }
}

/** Data channels whose bit times agree within 5 %, each group with its weighted mean bit time. */
function rateGroups(data: ChannelInfo[], rates: Map<string, BitTimeEstimate>): { members: ChannelInfo[]; samplesPerBit: number; spread: number }[] {
  const groups: { members: ChannelInfo[]; est: BitTimeEstimate[] }[] = [];
  for (const d of data) {
    const r = rates.get(d.name);
    if (!r) continue;
    const g = groups.find((x) => Math.abs(x.est[0].samplesPerBit / r.samplesPerBit - 1) < 0.05);
    if (g) {
      g.members.push(d);
      g.est.push(r);
    } else groups.push({ members: [d], est: [r] });
  }
  return groups.map((g) => {
    const w = g.est.reduce((n, e) => n + e.intervals, 0);
    const spb = g.est.reduce((n, e) => n + e.samplesPerBit * e.intervals, 0) / w;
    const spread = Math.sqrt(g.est.reduce((n, e) => n + e.spread * e.spread * e.intervals, 0) / w);
    return { members: g.members, samplesPerBit: spb, spread };
  });
}
