import type { CaptureReader, ChannelInfo, DecodeIssue, ReaderOptions, TransitionSink } from '../types';
import { IssueLog } from './issue-log';
import { Carry } from './line-splitter';
import { parseTimescale } from './timescale';
import { TransitionBatch } from './transition-batch';

/** One $var declaration as found in the header. */
export interface VcdVar {
  /** identifier code */
  id: string;
  type: string;
  width: number;
  /** reference, with its bit select if any, e.g. "data" or "bus[3]" */
  reference: string;
  /** enclosing scopes, outermost first */
  scope: string[];
  /** channel index, or -1 for buses and reals (not channels) */
  channel: number;
  /** a bus chosen through ReaderOptions.vcdBuses: one channel per bit, most significant first */
  bits?: { channel: number; index: number }[];
}

/** widest bus that can be split into channels */
const MAX_BUS = 64;

const enum Mode {
  Header,
  Body,
}

const MAX_CHANNELS = 256;
/** $var declarations kept (channels, buses and the ones beyond the channel cap, listed for the user); the rest are counted */
export const MAX_VARS = 4096;
/** a header longer than this is refused: real captures declare a few hundred signals at most */
export const MAX_HEADER_BYTES = 16 << 20;
/** scopes nested deeper than this are not named (their $var still counts) */
const MAX_SCOPE_DEPTH = 64;
/** the fast path hands the batch on at this many transitions (the batch has room for more) */
const FAST_LIMIT = 16384;
const MAX_TOKEN = 1 << 20;

/**
 * Value change dump (IEEE Std 1364-2001 clause 18): header declarations, then #time and value changes.
 * Subclause numbers here are those of IEEE Std 1364-2001 as a third-party reader annotated against
 * that edition gives them ($scope 18.2.3.4, $timescale 18.2.3.5, $upscope 18.2.3.6, $var 18.2.3.8,
 * value changes 18.2.1); not checked against the standard's own text. IEEE Std 1364-2005 keeps
 * clause 18 for VCD files (from memory).
 * The body is parsed from bytes, token by token, with identifier codes looked up by a numeric
 * key, so no strings are made per change. A token split between two chunks is carried over.
 *
 * Sample index = time in $timescale units. Scalar 1-bit variables are channels; vectors are
 * buses (listed in `vars`, their changes skipped); reals are skipped. x and z become value 2.
 */
export class VcdReader implements CaptureReader {
  bytesRead = 0;
  readonly vars: VcdVar[] = [];
  channels: ChannelInfo[] = [];
  samplePeriodSeconds = 1e-9;
  private readonly log = new IssueLog();
  private mode = Mode.Header;
  private line = 1;
  /** a token cut at a chunk's end */
  private readonly carry = new Carry(MAX_TOKEN, (offset) => this.tooLong(offset));

  // header state
  private command: string | null = null;
  private args: string[] = [];
  private scope: string[] = [];
  private scopeDepth = 0;
  private sawTimescale = false;
  /** $var declarations beyond MAX_VARS: counted, not kept */
  varsNotKept = 0;
  /** 1-bit signals declared beyond MAX_CHANNELS, and the first of them */
  private signalsNotRead = 0;
  private firstNotRead = '';

  // body state
  private batch: TransitionBatch | null = null;
  private time = 0;
  private inComment = false;
  /** 0: none; 1: the next token is the id of a vector ('b'); 2: of a real ('r') */
  private pendingVector = 0;
  private vectorLast = 0;
  /** one-byte codes at [byte], two-byte ASCII codes at [b0 * 128 + b1] (≥ 33·128, no overlap) */
  private readonly short = new Int32Array(128 * 128).fill(-1);
  private readonly longIds = new Map<number, number>();
  private readonly textIds = new Map<string, number>();
  /** per identifier: its channels, or [] for a bus or real */
  private readonly idChannels: number[][] = [];
  private readonly idFirst: number[] = [];
  private readonly reportedUnknown = new Set<number>();
  /** per identifier: its one channel, or -1 (bus, real or several channels: the general path) */
  private single = new Int32Array(0);

  /** per identifier of a chosen bus: its bit channels, most significant first */
  private readonly busChannels = new Map<number, number[]>();
  private readonly vec = new Uint8Array(MAX_BUS);
  private vecLen = 0;

  constructor(
    private readonly opts: ReaderOptions,
    private readonly sink: TransitionSink,
  ) {}

  get issues(): DecodeIssue[] {
    return this.log.issues;
  }

  fatal(): DecodeIssue | null {
    return this.log.fatalIssue;
  }

  push(chunk: Uint8Array): void {
    if (this.log.fatalIssue) return;
    const base = this.bytesRead;
    this.bytesRead += chunk.length;
    let i = 0;
    const len = chunk.length;
    if (this.carry.held) {
      // finish the token split across chunks
      while (i < len && chunk[i] > 32) i++;
      if (i === len) {
        this.carry.add(chunk);
        return;
      }
      const offset = this.carry.offset;
      const whole = this.carry.take(chunk.subarray(0, i));
      this.token(whole, 0, whole.length, offset);
    }
    this.scan(chunk, i, base);
  }

  private scan(buf: Uint8Array, from: number, base: number): void {
    const len = buf.length;
    let i = from;
    while (i < len) {
      if (this.mode === Mode.Body) {
        i = this.scanBody(buf, i, base);
        if (this.batch!.t.n >= FAST_LIMIT) this.batch!.flush();
        continue;
      }
      const c = buf[i];
      if (c <= 32) {
        if (c === 10) this.line++;
        i++;
        continue;
      }
      const start = i;
      while (i < len && buf[i] > 32) i++;
      if (i === len) {
        this.carry.start(buf.subarray(start), base + start);
        return;
      }
      this.token(buf, start, i, base + start);
      if (this.log.fatalIssue) return;
    }
  }

  /**
   * The body's common tokens — 0/1 changes of one- and two-character identifiers and #time — handled
   * inline on locals; everything else goes through token(). Returns where it stopped: the end
   * of the chunk (a cut token is carried over) or earlier when the batch is full.
   */
  private scanBody(buf: Uint8Array, from: number, base: number): number {
    const len = buf.length;
    const batch = this.batch!;
    const t = batch.t;
    const cur = batch.current;
    const chs = t.channel;
    const sms = t.sample;
    const vls = t.value;
    const short = this.short;
    const single = this.single;
    let n = t.n;
    let line = this.line;
    let time = this.time;
    // reader state the general path (token) may change, in locals between its calls
    let plain = this.pendingVector === 0 && !this.inComment;
    let filled = this.filled;
    let anyValue = this.anyValue;
    let i = from;
    while (i < len) {
      const c = buf[i];
      if (c <= 32) {
        if (c === 10) line++;
        i++;
        continue;
      }
      // The two commonest tokens, read in place without first scanning for the token's end.
      if (plain && (c === 48 || c === 49) && i + 2 < len) {
        // a scalar change with a one- or two-character identifier
        const b1 = buf[i + 1];
        const b2 = buf[i + 2];
        let key = -1;
        let tokenLength = 0;
        if (b2 <= 32) {
          if (b1 > 32 && b1 < 128) {
            key = short[b1];
            tokenLength = 2;
          }
        } else if (b1 > 32 && b1 < 128 && b2 < 128 && i + 3 < len && buf[i + 3] <= 32) {
          key = short[b1 * 128 + b2];
          tokenLength = 3;
        }
        const ch = key >= 0 ? single[key] : -1;
        if (ch >= 0) {
          const v = c - 48;
          anyValue = true;
          i += tokenLength;
          if (cur[ch] !== v) {
            cur[ch] = v;
            chs[n] = ch;
            sms[n] = time;
            vls[n] = v;
            n++;
            if (n >= FAST_LIMIT) break;
          }
          continue;
        }
      } else if (c === 35 && plain && filled) {
        let v = 0;
        let k = i + 1;
        for (; k < len; k++) {
          const d = buf[k] - 48;
          if (d < 0 || d > 9) break;
          v = v * 10 + d;
        }
        if (k < len && buf[k] <= 32 && k - i > 1 && k - i < 17 && v >= time) {
          time = v;
          i = k;
          continue;
        }
      }
      const start = i;
      i++;
      while (i < len && buf[i] > 32) i++;
      if (i === len) {
        this.carry.start(buf.subarray(start), base + start);
        break;
      }
      if (plain) {
        if ((c === 48 || c === 49) && (i - start === 2 || (i - start === 3 && buf[start + 1] < 128 && buf[start + 2] < 128))) {
          const key = i - start === 2 ? short[buf[start + 1]] : short[buf[start + 1] * 128 + buf[start + 2]];
          const ch = key >= 0 ? single[key] : -1;
          if (ch >= 0) {
            const v = c - 48;
            anyValue = true;
            if (cur[ch] !== v) {
              cur[ch] = v;
              chs[n] = ch;
              sms[n] = time;
              vls[n] = v;
              n++;
              if (n >= FAST_LIMIT) break;
            }
            continue;
          }
        } else if (c === 35 && filled && i - start > 1 && i - start < 17) {
          let v = 0;
          let k = start + 1;
          for (; k < i; k++) {
            const d = buf[k] - 48;
            if (d < 0 || d > 9) break;
            v = v * 10 + d;
          }
          if (k === i && v >= time) {
            time = v;
            continue;
          }
        }
      }
      // the general path
      t.n = n;
      this.line = line;
      this.time = time;
      this.anyValue = anyValue;
      this.token(buf, start, i, base + start);
      n = t.n;
      time = this.time;
      plain = this.pendingVector === 0 && !this.inComment;
      filled = this.filled;
      anyValue = this.anyValue;
      if (this.log.fatalIssue || n >= FAST_LIMIT) break;
    }
    t.n = n;
    this.line = line;
    this.time = time;
    this.anyValue = anyValue;
    return i;
  }

  finish(): void {
    if (this.log.fatalIssue) return;
    if (this.carry.held) {
      const offset = this.carry.offset;
      const whole = this.carry.take(new Uint8Array(0));
      this.token(whole, 0, whole.length, offset);
    }
    if (this.mode === Mode.Header) {
      this.log.fatal({
        offset: this.bytesRead,
        line: this.line,
        expected: '$enddefinitions $end',
        message: 'The value change dump ends before its header does ($enddefinitions is missing).',
        code: 'no-enddefinitions',
      });
      return;
    }
    this.fillUnset();
    this.batch!.end(this.time);
  }

  private tooLong(offset: number): void {
    this.log.fatal({
      offset,
      line: this.line,
      expected: 'a token shorter than 1 MiB',
      message: 'A single word of the file is longer than 1 MiB; this is not a value change dump.',
    });
  }

  private token(buf: Uint8Array, start: number, end: number, offset: number): void {
    if (this.mode === Mode.Body) this.bodyToken(buf, start, end, offset);
    else if (offset >= MAX_HEADER_BYTES) this.headerTooLong(offset);
    else this.headerToken(latin1(buf, start, end), offset);
  }

  private headerTooLong(offset: number): void {
    this.log.fatal({
      offset,
      line: this.line,
      expected: `$enddefinitions within the first ${MAX_HEADER_BYTES >> 20} MiB`,
      message: `The value change dump's header runs past ${MAX_HEADER_BYTES >> 20} MiB without $enddefinitions (${this.vars.length + this.varsNotKept} $var declarations so far); Flagline refuses headers this long. Dump only the serial lines' signals.`,
      code: 'header-too-long',
    });
  }

  // ---- header ----

  private headerToken(tok: string, offset: number): void {
    if (this.command === null) {
      if (tok[0] !== '$') {
        this.malformed(offset, 'a $keyword of the header', `"${tok.slice(0, 40)}" is not a header keyword; it was skipped.`);
        return;
      }
      this.command = tok;
      this.args = [];
      if (tok === '$end') this.command = null;
      return;
    }
    if (tok !== '$end') {
      this.args.push(tok);
      if (this.args.length > 10000) {
        this.log.fatal({ offset, line: this.line, expected: `${this.command} with at most 10000 words`, message: `The header's ${this.command} runs past 10000 words without $end; this is not a value change dump.` });
      }
      return;
    }
    const cmd = this.command;
    const args = this.args;
    this.command = null;
    switch (cmd) {
      case '$timescale': {
        const seconds = parseTimescale(args.join(' '));
        if (seconds === null) {
          this.log.fatal({
            offset,
            line: this.line,
            expected: '1, 10 or 100 followed by s, ms, us, ns, ps or fs',
            message: `The $timescale "${args.join(' ')}" is not one IEEE 1364 allows (1, 10 or 100 of s, ms, us, ns, ps, fs).`,
          });
          return;
        }
        this.samplePeriodSeconds = seconds;
        this.sawTimescale = true;
        return;
      }
      case '$scope':
        if (this.scopeDepth++ < MAX_SCOPE_DEPTH) this.scope.push(args[1] ?? args[0] ?? '?');
        return;
      case '$upscope':
        if (this.scopeDepth > 0 && this.scopeDepth-- <= MAX_SCOPE_DEPTH) this.scope.pop();
        return;
      case '$var':
        this.declare(args, offset);
        return;
      case '$enddefinitions':
        this.startBody(offset);
        return;
      default:
        // $date, $version, $comment and unknown sections carry nothing we need
        return;
    }
  }

  private declare(args: string[], offset: number): void {
    const [type, size, id, ref, select] = args;
    const width = Number(size);
    if (!type || !id || !ref || !(width >= 1)) {
      this.malformed(offset, '$var type size identifier reference $end', `A $var declaration "${args.join(' ')}" is incomplete; it was skipped.`);
      return;
    }
    if (this.vars.length >= MAX_VARS && this.lookupText(id) < 0) {
      // kept: at most MAX_VARS, so a header of millions of signals costs no memory per signal
      this.varsNotKept++;
      return;
    }
    const reference = select && select.startsWith('[') ? ref + select : ref;
    let channel = -1;
    const scalar = width === 1 && type !== 'real' && type !== 'realtime' && type !== 'event';
    let key = this.lookupText(id);
    if (key < 0) {
      key = this.idChannels.length;
      this.idChannels.push([]);
      this.idFirst.push(-1);
      this.register(id, key);
    }
    const bus = !scalar && width > 1 && type !== 'real' && type !== 'realtime' && type !== 'event' && this.busWanted(ref, reference);
    if (bus) {
      this.declareBus(key, { id, type, width, reference, scope: [...this.scope], channel: -1 }, select, offset);
      return;
    }
    if (scalar) {
      if (this.channels.length >= MAX_CHANNELS) {
        if (this.signalsNotRead++ === 0) this.firstNotRead = reference;
      } else {
        channel = this.channels.length;
        this.channels.push({ index: channel, name: reference });
        this.idChannels[key].push(channel);
        if (this.idFirst[key] < 0) this.idFirst[key] = channel;
      }
    }
    this.vars.push({ id, type, width, reference, scope: [...this.scope], channel });
  }

  private busWanted(ref: string, reference: string): boolean {
    const wanted = this.opts.vcdBuses;
    if (!wanted || wanted.length === 0) return false;
    const path = this.scope.join('.');
    return [ref, reference, `${path}.${ref}`, `${path}.${reference}`].some((n) => wanted.includes(n));
  }

  /** a chosen vector: one channel per bit, named reference[bit] with the declared bit numbers */
  private declareBus(key: number, v: VcdVar, select: string | undefined, offset: number): void {
    if (v.width > MAX_BUS || this.channels.length + v.width > MAX_CHANNELS) {
      this.issue(offset, `a bus of at most ${MAX_BUS} bits within ${MAX_CHANNELS} channels`, `Bus "${v.reference}" is too wide to read bit by bit; it was skipped.`);
      this.vars.push(v);
      return;
    }
    if (this.busChannels.has(key)) {
      this.vars.push(v);
      return;
    }
    // IEEE Std 1364-2001 §18.2.3.8 ($var): the reference may carry its range, e.g. data [7:0]
    const range = /^\[(\d+):(\d+)\]$/.exec(select ?? '') ?? /\[(\d+):(\d+)\]$/.exec(v.reference);
    const msb = range ? Number(range[1]) : v.width - 1;
    const lsb = range ? Number(range[2]) : 0;
    const step = msb >= lsb ? -1 : 1;
    const bits: { channel: number; index: number }[] = [];
    for (let i = 0; i < v.width; i++) {
      const channel = this.channels.length;
      this.channels.push({ index: channel, name: '' });
      bits.push({ channel, index: msb + i * step });
    }
    v.bits = bits;
    this.busChannels.set(key, bits.map((b) => b.channel));
    this.vars.push(v);
  }

  private startBody(offset: number): void {
    if (this.signalsNotRead > 0) {
      this.issue(offset, `at most ${MAX_CHANNELS} 1-bit signals`, `Only the first ${MAX_CHANNELS} 1-bit signals are read; ${this.signalsNotRead} more, from "${this.firstNotRead}" on, were skipped.`);
    }
    if (this.varsNotKept > 0) {
      this.issue(offset, `at most ${MAX_VARS} $var declarations`, `The header declares ${this.vars.length + this.varsNotKept} signals; only the first ${MAX_VARS} were read and the changes of the other ${this.varsNotKept} are skipped.`);
    }
    if (!this.sawTimescale) {
      this.issue(offset, '$timescale', 'The header has no $timescale; 1 ns per time unit was assumed (common practice).');
    }
    // plain reference when unique, else scope.path.reference
    const counts = new Map<string, number>();
    const base = (v: VcdVar) => (v.bits ? v.reference.replace(/\[\d+:\d+\]$/, '') : v.reference);
    for (const v of this.vars) if (v.channel >= 0 || v.bits) counts.set(base(v), (counts.get(base(v)) ?? 0) + 1);
    for (const v of this.vars) {
      if (v.channel < 0 && !v.bits) continue;
      const name = counts.get(base(v))! > 1 ? [...v.scope, base(v)].join('.') : base(v);
      if (v.bits) for (const b of v.bits) this.channels[b.channel].name = `${name}[${b.index}]`;
      else this.channels[v.channel].name = name;
    }
    this.mode = Mode.Body;
    this.batch = new TransitionBatch(this.sink, this.channels.length, FAST_LIMIT + 1024);
    this.single = new Int32Array(this.idChannels.length);
    this.idChannels.forEach((chans, key) => (this.single[key] = chans.length === 1 ? chans[0] : -1));
    this.sink.header(this.channels, this.samplePeriodSeconds);
  }

  // ---- identifier codes ----

  private register(id: string, key: number): void {
    this.textIds.set(id, key);
    if (id.length === 1 && id.charCodeAt(0) < 256) {
      this.short[id.charCodeAt(0)] = key;
      return;
    }
    let k = 0;
    if (id.length > 7) return;
    for (let i = 0; i < id.length; i++) {
      const c = id.charCodeAt(i);
      if (c >= 128) return;
      k = k * 128 + c;
    }
    if (id.length <= 2) this.short[k] = key;
    else this.longIds.set(k, key);
  }

  private lookupText(id: string): number {
    return this.textIds.get(id) ?? -1;
  }

  private lookup(buf: Uint8Array, start: number, end: number): number {
    const len = end - start;
    if (len === 1) return this.short[buf[start]];
    if (len <= 7) {
      let k = 0;
      for (let i = start; i < end; i++) {
        const c = buf[i];
        if (c >= 128) return this.lookupText(latin1(buf, start, end));
        k = k * 128 + c;
      }
      return len === 2 ? this.short[k] : (this.longIds.get(k) ?? -1);
    }
    return this.lookupText(latin1(buf, start, end));
  }

  // ---- body ----

  private bodyToken(buf: Uint8Array, start: number, end: number, offset: number): void {
    const c = buf[start];
    if (this.pendingVector !== 0) {
      const kind = this.pendingVector;
      this.pendingVector = 0;
      if (kind === 1) {
        const key = this.lookup(buf, start, end);
        if (key < 0) this.unknownId(buf, start, end, offset);
        else if (this.idFirst[key] >= 0) this.change(key, this.vectorLast, offset);
        else if (this.busChannels.size > 0) this.busChange(key, offset);
      }
      return;
    }
    if (this.inComment) {
      if (end - start === 4 && isEnd(buf, start)) this.inComment = false;
      return;
    }
    switch (c) {
      case 35: // '#'
        this.timeToken(buf, start, end, offset);
        return;
      case 48: // '0'
      case 49: // '1'
      case 120: // x
      case 88: // X
      case 122: // z
      case 90: {
        // Z
        const key = end - start === 2 ? this.short[buf[start + 1]] : this.lookup(buf, start + 1, end);
        if (key < 0) {
          this.unknownId(buf, start + 1, end, offset);
          return;
        }
        if (this.idFirst[key] >= 0) this.change(key, c === 48 ? 0 : c === 49 ? 1 : 2, offset);
        return;
      }
      case 98: // b
      case 66: {
        // B: the value's last digit is what a 1-bit signal takes
        const last = buf[end - 1];
        this.vectorLast = last === 48 ? 0 : last === 49 ? 1 : 2;
        this.pendingVector = 1;
        if (this.busChannels.size > 0) {
          // keep the value's last MAX_BUS digits for a chosen bus
          const from = Math.max(start + 1, end - MAX_BUS);
          this.vecLen = end - from;
          for (let k = 0; k < this.vecLen; k++) this.vec[k] = buf[from + k];
        }
        return;
      }
      case 114: // r
      case 82: // R
        this.pendingVector = 2;
        return;
      case 36: {
        // '$'
        const word = latin1(buf, start, end);
        if (word === '$comment') this.inComment = true;
        // $dumpvars, $dumpon, $dumpoff, $dumpall and $end only bracket ordinary changes
        else if (!['$dumpvars', '$dumpon', '$dumpoff', '$dumpall', '$end'].includes(word)) {
          this.malformed(offset, 'a value change or #time', `Unexpected "${word}" among the value changes; it was skipped.`);
        }
        return;
      }
      default:
        this.malformed(offset, 'a value change or #time', `"${latin1(buf, start, Math.min(end, start + 40))}" is not a value change; it was skipped.`);
    }
  }

  private timeToken(buf: Uint8Array, start: number, end: number, offset: number): void {
    let t = 0;
    for (let i = start + 1; i < end; i++) {
      const d = buf[i] - 48;
      if (d < 0 || d > 9) {
        this.malformed(offset, '#<decimal time>', `"${latin1(buf, start, Math.min(end, start + 40))}" is not a time; it was skipped.`);
        return;
      }
      t = t * 10 + d;
    }
    if (end - start === 1) {
      this.malformed(offset, '#<decimal time>', 'A "#" without a time was skipped.');
      return;
    }
    if (!Number.isSafeInteger(t)) {
      // no sample index holds it exactly, and nothing after it could be placed
      this.log.fatal({
        offset,
        line: this.line,
        expected: `a time below 2^53 ${this.timeUnit()}`,
        message: `The time "${latin1(buf, start, Math.min(end, start + 40))}" is beyond what can be placed (2^53 time units); the value change dump is malformed.`,
        code: 'time-range',
      });
      return;
    }
    if (t < this.time) {
      // IEEE Std 1364-2001 §18.2.1 gives simulation_time ::= # decimal_number; that times only
      // increase follows from the dump being written as simulation time advances (from memory)
      this.log.add({
        offset,
        line: this.line,
        expected: `a time of at least ${this.time}`,
        message: `Time goes back from ${this.time} to ${t} on line ${this.line}; times must increase. The changes that follow were placed at ${this.time}.`,
        skipped: true,
        code: 'time-back',
      });
      return;
    }
    // leaving the first time that gave values: the channels it left out start unknown
    if (t > this.time && this.anyValue && !this.filled) this.fillUnset();
    this.time = t;
  }

  private anyValue = false;

  private timeUnit(): string {
    return `units of ${this.samplePeriodSeconds} s`;
  }

  /** channels that got no value at the first time start as unknown */
  private fillUnset(): void {
    if (this.filled) return;
    this.filled = true;
    const cur = this.batch!.current;
    for (let ch = 0; ch < this.channels.length; ch++) if (cur[ch] === 255) this.batch!.set(ch, this.time, 2);
  }

  private filled = false;

  private change(key: number, value: number, offset: number): void {
    this.anyValue = true;
    const chans = this.idChannels[key];
    const batch = this.batch!;
    if (chans.length === 1) {
      if (batch.set(chans[0], this.time, value) && value === 2) this.reportUnknown(chans[0], offset);
    } else {
      for (const ch of chans) if (batch.set(ch, this.time, value) && value === 2) this.reportUnknown(ch, offset);
    }
  }

  /**
   * a vector value for a chosen bus: right-aligned, extended on the left with 0 for a leading 0/1,
   * else with x or z (IEEE Std 1364-2001 §18.2.2 "Formats of variable values", Table 83 "Rules for
   * left-extending vector values"; table number from a secondary source, subclause from memory)
   */
  private busChange(key: number, offset: number): void {
    const chans = this.busChannels.get(key);
    if (!chans) return;
    const width = chans.length;
    const len = this.vecLen;
    const lead = len > 0 ? this.vec[0] : 48;
    const fill = lead === 48 || lead === 49 ? 0 : 2;
    for (let i = 0; i < width; i++) {
      const k = len - width + i;
      const c = k >= 0 ? this.vec[k] : -1;
      const v = k < 0 ? fill : c === 48 ? 0 : c === 49 ? 1 : 2;
      this.anyValue = true;
      if (this.batch!.set(chans[i], this.time, v) && v === 2) this.reportUnknown(chans[i], offset);
    }
  }

  private reportUnknown(ch: number, offset: number): void {
    if (this.reportedUnknown.has(ch)) return;
    this.reportedUnknown.add(ch);
    this.issue(
      offset,
      '0 or 1',
      `Signal "${this.channels[ch].name}" is unknown (x or z) at time ${this.time}; bits there are not trusted. Later unknown stretches of this signal are not reported again.`,
    );
  }

  private unknownId(buf: Uint8Array, start: number, end: number, offset: number): void {
    // most likely one of the declarations beyond MAX_VARS, already reported once
    if (this.varsNotKept > 0) return;
    this.malformed(offset, 'an identifier code declared by $var', `Identifier code "${latin1(buf, start, Math.min(end, start + 40))}" was never declared; the change was skipped.`);
  }

  private issue(offset: number, expected: string, message: string, skipped = false): void {
    this.log.add({ offset, line: this.line, expected, message, ...(skipped ? { skipped } : {}) });
  }

  /** input that could not be read and was dropped */
  private malformed(offset: number, expected: string, message: string): void {
    this.issue(offset, expected, message, true);
  }
}

function isEnd(buf: Uint8Array, i: number): boolean {
  return buf[i] === 36 && buf[i + 1] === 101 && buf[i + 2] === 110 && buf[i + 3] === 100;
}

function latin1(buf: Uint8Array, start: number, end: number): string {
  let s = '';
  for (let i = start; i < end; i++) s += String.fromCharCode(buf[i]);
  return s;
}
