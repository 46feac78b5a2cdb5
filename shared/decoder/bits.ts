import { ClockRecovery } from './clock-recovery';
import { BIT_CHUNK_SIZE as CHUNK, LinkBits } from './link-bits';
import type { BitRecoveryOptions, BitRecoverySink, LineEvent, Transitions } from './types';

/** module-local copy: imported bindings cost a lookup in some module systems' hot loops */
const BIT_CHUNK_SIZE = CHUNK;

/** channel roles; 0 = not used */
const CLOCK = 1;
const DATA = 2;
const HANDSHAKE = 3;

/**
 * Transitions → line bits per link.
 *
 * Clocked: each data channel is sampled on the chosen edge of the clock channel. Data that
 * changes at the very sample of the edge counts as changing after it: the edge takes the
 * level from before (the data must be set up before the edge — common practice for
 * synchronous serial controllers, which change data on the other clock edge).
 *
 * Without a clock: each data channel gets its own clock recovered from its transitions at
 * the nominal bit rate (see clock-recovery.ts).
 *
 * Bits go to the sink in chunks of up to 8192 per link; the chunk's arrays are reused.
 *
 * Unknown levels (VCD x/z, value 2): a data line keeps its last known level and a line event
 * of kind 'unknown' marks where it started; a clock that passes through unknown gives no edge.
 * Handshake channels become 'rise'/'fall' line events (their initial level gives none).
 */
export class BitRecovery {
  private readonly role: Uint8Array;
  /** per channel: link index for data, handshake index for handshake channels */
  private readonly slot: Int32Array;
  /** per channel: its level as last seen (0/1/2), 255 before the first value */
  private readonly raw: Uint8Array;
  private readonly outs: LinkBits[];
  /** clocked mode: per link, last known level, the level before the last change and its sample */
  private readonly level: Uint8Array;
  private readonly before: Uint8Array;
  private readonly changedAt: Float64Array;
  private readonly trackers: ClockRecovery[] = [];
  private clockLevel = 255;
  private readonly activeLevel: number;
  private readonly clocked: boolean;
  private readonly handshake: { channel: number; name: string; link?: string }[];
  /** channel names for events, by channel index */
  private readonly names: Map<number, { name: string; link: string | null }> = new Map();

  constructor(
    private readonly opts: BitRecoveryOptions,
    private readonly sink: BitRecoverySink,
  ) {
    const maxChannel = Math.max(
      opts.clock ?? 0,
      ...opts.data.map((d) => d.channel),
      ...(opts.handshake ?? []).map((h) => h.channel),
    );
    this.role = new Uint8Array(Math.max(256, maxChannel + 1));
    this.slot = new Int32Array(this.role.length);
    this.raw = new Uint8Array(this.role.length).fill(255);
    this.clocked = opts.clock !== undefined;
    if (this.clocked) this.role[opts.clock!] = CLOCK;
    else if (!(opts.bitRate && opts.bitRate > 0)) {
      throw new Error('BitRecovery needs a clock channel or a nominal bit rate to recover the clock from');
    }
    this.activeLevel = opts.edge === 'rising' ? 1 : 0;
    this.outs = opts.data.map((d, k) => {
      this.role[d.channel] = DATA;
      this.slot[d.channel] = k;
      this.names.set(d.channel, { name: d.link, link: d.link });
      return new LinkBits(d.link, opts.encoding, opts.invert, sink);
    });
    this.handshake = opts.handshake ?? [];
    this.handshake.forEach((h, k) => {
      this.role[h.channel] = HANDSHAKE;
      this.slot[h.channel] = k;
      this.names.set(h.channel, { name: h.name, link: h.link ?? null });
    });
    const links = opts.data.length;
    this.level = new Uint8Array(links).fill(255);
    this.before = new Uint8Array(links).fill(255);
    this.changedAt = new Float64Array(links).fill(-1);
    if (!this.clocked) {
      const samplesPerBit = 1 / (opts.bitRate! * opts.samplePeriodSeconds);
      for (const out of this.outs) this.trackers.push(new ClockRecovery(samplesPerBit, out));
    }
  }

  transitions(t: Transitions): void {
    if (!this.clocked) {
      this.recoveredBatch(t);
      return;
    }
    // the loop stops when a link's chunk is full; it is handed on here, outside the hot loop
    let i = 0;
    while (i < t.n) {
      i = this.clockedBatch(t, i);
      for (const out of this.outs) if (out.full) out.flush();
    }
  }

  /** runs from transition `from` until the batch ends or a link's chunk is full; returns where it stopped */
  private clockedBatch(t: Transitions, from: number): number {
    const { channel, sample, value } = t;
    const role = this.role;
    const raw = this.raw;
    const active = this.activeLevel;
    const idle = 1 - active;
    const level = this.level;
    const before = this.before;
    const changedAt = this.changedAt;
    const outs = this.outs;
    const links = outs.length;
    const n = t.n;
    let clockLevel = this.clockLevel;
    let full = false;
    let i = from;
    // the common case, one or two links, with their output arrays in locals
    const out0 = outs[0];
    const out1 = links > 1 ? outs[1] : out0;
    for (; i < n && !full; i++) {
      const c = channel[i];
      const v = value[i];
      const r = role[c];
      if (r === CLOCK) {
        if (v === clockLevel) continue;
        const old = clockLevel;
        clockLevel = v;
        if (v === active && old === idle) {
          const s = sample[i];
          if (links <= 2) {
            const l0 = changedAt[0] === s ? before[0] : level[0];
            if (l0 < 2) {
              out0.put(l0, s);
              if (out0.chunk.n >= BIT_CHUNK_SIZE) full = true;
            }
            if (links === 2) {
              const l1 = changedAt[1] === s ? before[1] : level[1];
              if (l1 < 2) {
                out1.put(l1, s);
                if (out1.chunk.n >= BIT_CHUNK_SIZE) full = true;
              }
            }
            continue;
          }
          for (let k = 0; k < links; k++) {
            const lv = changedAt[k] === s ? before[k] : level[k];
            if (lv < 2) {
              const out = outs[k];
              out.put(lv, s);
              if (out.chunk.n >= BIT_CHUNK_SIZE) full = true;
            }
          }
        } else if (v === 2) {
          this.clockLevel = clockLevel;
          this.unknown(c, sample[i]);
        }
      } else if (r === DATA) {
        const old = raw[c];
        if (v === old) continue;
        raw[c] = v;
        const k = this.slot[c];
        if (v === 2) {
          this.unknown(c, sample[i]);
          continue;
        }
        const lk = level[k];
        if (lk === 255) {
          // initial level: also the NRZI reference for the first bit
          level[k] = v;
          before[k] = v;
          outs[k].ref = v;
          continue;
        }
        if (v !== lk) {
          const s = sample[i];
          if (changedAt[k] !== s) before[k] = lk;
          level[k] = v;
          changedAt[k] = s;
        }
      } else if (r === HANDSHAKE) {
        this.clockLevel = clockLevel;
        this.handshakeChange(c, sample[i], v);
      }
    }
    this.clockLevel = clockLevel;
    return i;
  }

  private recoveredBatch(t: Transitions): void {
    const { channel, sample, value } = t;
    const role = this.role;
    const raw = this.raw;
    const n = t.n;
    for (let i = 0; i < n; i++) {
      const c = channel[i];
      const v = value[i];
      const r = role[c];
      if (r === DATA) {
        const tracker = this.trackers[this.slot[c]];
        if (v === raw[c]) {
          // readers repeat a level only to mark the end of the capture
          tracker.reach(sample[i], true);
          continue;
        }
        raw[c] = v;
        if (v === 2) this.unknown(c, sample[i]);
        else tracker.change(sample[i], v);
      } else if (r === HANDSHAKE) {
        this.handshakeChange(c, sample[i], v);
      }
    }
    // every line is known up to the batch's last sample: hand on the bits that are certain
    if (n > 0) {
      const last = sample[n - 1];
      for (const tracker of this.trackers) tracker.reach(last, false);
    }
  }

  private handshakeChange(c: number, s: number, v: number): void {
    const old = this.raw[c];
    if (v === old) return;
    this.raw[c] = v;
    if (old === 255) return;
    if (v === 2) {
      this.unknown(c, s);
      return;
    }
    const who = this.names.get(c)!;
    this.emit({ link: who.link, channel: who.name, kind: v === 1 ? 'rise' : 'fall', sample: s });
  }

  private unknown(c: number, s: number): void {
    const who = this.names.get(c);
    const name = who?.name ?? (c === this.opts.clock ? 'clock' : String(c));
    this.emit({ link: who?.link ?? null, channel: name, kind: 'unknown', sample: s });
  }

  private emit(e: LineEvent): void {
    // Bits sampled before the event reach the sink first, so a consumer sees them in time order.
    // Without a clock, every line is known up to the event's sample (transitions come in time
    // order), so each tracker first hands on its cells up to there. The exception: a data change
    // less than 35 % of a bit before the event (or the first of two such changes in a row) may
    // still turn out to be a glitch, and the cells after it wait for that verdict; the first of
    // them can be sampled before the event and still follow it.
    for (const tracker of this.trackers) tracker.reach(e.sample, false);
    for (const out of this.outs) out.flush();
    this.sink.event(e);
  }

  finish(): void {
    for (const out of this.outs) out.flush();
  }
}
