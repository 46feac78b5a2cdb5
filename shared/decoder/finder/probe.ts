// The first look at a window of a sample capture: which channels change, which change like a
// clock, the bit time of the others, and where data changes fall within a clock period.
import type { ChannelInfo, TransitionSink, Transitions } from '../types';
import { estimateBitTime, estimateClock, type BitTimeEstimate, type ClockEstimate } from './rate';

/** level changes kept per channel: enough for a rate estimate to well below 1 % */
const MAX_CHANGES = 8192;

const HANDSHAKE_NAME = /(^|[^a-z])(rts|cts|dcd|dtr|dsr)([^a-z]|$)/i;

export interface ProbedChannel {
  index: number;
  name: string;
  /** level changes seen */
  changes: number;
  /** named like a handshake line (RTS, CTS, DCD, DTR, DSR): not tried as clock or data */
  handshake: 'rts' | 'cts' | 'dcd' | 'dtr' | 'dsr' | null;
  /** a regular period: a clock candidate */
  clock: ClockEstimate | null;
  /** bit time as a data line */
  bitTime: BitTimeEstimate | null;
}

export interface EdgeTiming {
  clock: string;
  data: string;
  /** mean distance of data changes from the nearest rising / falling clock edge, in periods (0 … 0.5) */
  fromRising: number;
  fromFalling: number;
  changes: number;
}

export interface ProbeResult {
  channels: ProbedChannel[];
  samplePeriodSeconds: number;
  /** first and last sample the probe saw */
  firstSample: number;
  lastSample: number;
  /** per clock candidate and data channel: where data changes fall within the clock period */
  edgeTiming: EdgeTiming[];
}

/** A TransitionSink that keeps the first changes of every channel. */
export class ChannelProbe implements TransitionSink {
  private channels: ChannelInfo[] = [];
  private period = 1;
  private samples: Float64Array[] = [];
  private values: Uint8Array[] = [];
  private counts: Int32Array = new Int32Array(0);
  private kept: Int32Array = new Int32Array(0);
  private level: Uint8Array = new Uint8Array(0);
  private first = -1;
  private last = 0;

  header(channels: ChannelInfo[], samplePeriodSeconds: number): void {
    this.channels = channels;
    this.period = samplePeriodSeconds;
    this.samples = channels.map(() => new Float64Array(MAX_CHANGES));
    this.values = channels.map(() => new Uint8Array(MAX_CHANGES));
    this.counts = new Int32Array(channels.length);
    this.kept = new Int32Array(channels.length);
    this.level = new Uint8Array(channels.length).fill(255);
  }

  transitions(t: Transitions): void {
    const { channel, sample, value } = t;
    for (let i = 0; i < t.n; i++) {
      const c = channel[i];
      const v = value[i];
      const s = sample[i];
      if (this.first < 0) this.first = s;
      if (s > this.last) this.last = s;
      const old = this.level[c];
      if (v === old || v === 2) continue;
      this.level[c] = v;
      if (old === 255) continue;
      this.counts[c]++;
      const k = this.kept[c];
      if (k < MAX_CHANGES) {
        this.samples[c][k] = s;
        this.values[c][k] = v;
        this.kept[c] = k + 1;
      }
    }
  }

  get seenSamples(): number {
    return this.first < 0 ? 0 : this.last - this.first;
  }

  result(): ProbeResult {
    const channels: ProbedChannel[] = this.channels.map((ch, c) => {
      const n = this.kept[c];
      const s = this.samples[c];
      const iv = new Float64Array(Math.max(0, n - 1));
      for (let i = 1; i < n; i++) iv[i - 1] = s[i] - s[i - 1];
      const m = HANDSHAKE_NAME.exec(ch.name);
      const clock = estimateClock(iv);
      return {
        index: ch.index,
        name: ch.name,
        changes: this.counts[c],
        handshake: m ? (m[2].toLowerCase() as ProbedChannel['handshake']) : null,
        clock: clock && clock.regularity >= 0.8 ? clock : null,
        bitTime: estimateBitTime(iv),
      };
    });
    // A clock changes twice per bit; a data line never changes faster than once per bit. A
    // "regular" channel slower than some data line (a data line sending fill flags repeats every
    // eight bits) is not the bit clock.
    for (const ch of channels) {
      if (!ch.clock) continue;
      const faster = channels.some((d) => d !== ch && !d.handshake && d.bitTime !== null && d.bitTime.samplesPerBit < ch.clock!.period * 0.7 && !(d.clock && d.clock.period < ch.clock!.period));
      if (faster) ch.clock = null;
    }
    const edgeTiming: EdgeTiming[] = [];
    for (const ck of channels) {
      if (!ck.clock || ck.handshake) continue;
      for (const d of channels) {
        if (d === ck || d.handshake || d.changes === 0 || d.clock) continue;
        edgeTiming.push(this.timing(ck, d));
      }
    }
    return { channels, samplePeriodSeconds: this.period, firstSample: Math.max(0, this.first), lastSample: this.last, edgeTiming };
  }

  /** mean circular distance of the data channel's changes from each polarity of clock edge */
  private timing(ck: ProbedChannel, d: ProbedChannel): EdgeTiming {
    const cs = this.samples[ck.index];
    const cv = this.values[ck.index];
    const cn = this.kept[ck.index];
    const ds = this.samples[d.index];
    const dn = this.kept[d.index];
    const period = ck.clock!.period;
    let j = 0;
    let lastRise = -Infinity;
    let lastFall = -Infinity;
    let sumR = 0;
    let sumF = 0;
    let used = 0;
    for (let i = 0; i < dn; i++) {
      const s = ds[i];
      // clock edges at or before the data change (an edge at the same sample launched it)
      while (j < cn && cs[j] <= s) {
        if (cv[j] === 1) lastRise = cs[j];
        else lastFall = cs[j];
        j++;
      }
      if (j >= cn || lastRise === -Infinity || lastFall === -Infinity) continue;
      const dist = (edge: number) => {
        const x = ((s - edge) / period) % 1;
        return Math.min(x, 1 - x);
      };
      sumR += dist(lastRise);
      sumF += dist(lastFall);
      used++;
    }
    return { clock: ck.name, data: d.name, fromRising: used ? sumR / used : 0.25, fromFalling: used ? sumF / used : 0.25, changes: used };
  }
}
