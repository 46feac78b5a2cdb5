import type { CaptureFormat, DecodeIssue, ReaderOptions, Transitions } from '../types';
import { CsvReader, SAMPLE_COLUMN, TIME_COLUMN } from './csv';
import { FrameLogReader } from './framelog';
import { RawReader } from './raw';
import { VcdReader } from './vcd';

/** the head is looked at only this far */
const LOOK = 1 << 20;

export interface Detection {
  format: CaptureFormat | null;
  /** why, in words a user can check */
  reason: string;
  /**
   * Other formats the content fits too (binary heads in doubt between samples and line bits):
   * a caller that can trial-decode, the settings finder, tries them after `format`.
   */
  alternatives?: CaptureFormat[];
  /** raw samples: the bytes per sample the content suggests */
  rawWidth?: 1 | 2;
}

/**
 * Guesses the format from the first bytes of a file (never from its name).
 * Text: VCD keywords; "<seconds> <hex bytes>" lines → frame log; a header row of names over
 * rows of numbers → CSV. Binary: line bits are full of flag octets (01111110) in some bit
 * alignment and change on most bytes; samples take few distinct values that repeat from one
 * byte to the next.
 */
export function detectFormat(head: Uint8Array): Detection {
  const bytes = head.subarray(0, LOOK);
  if (bytes.length === 0) return { format: null, reason: 'The file is empty.' };
  if (isText(bytes)) return detectText(new TextDecoder().decode(bytes), bytes.length === head.length);
  return detectBinary(bytes);
}

function isText(bytes: Uint8Array): boolean {
  let printable = 0;
  for (const b of bytes) if ((b >= 32 && b < 127) || b === 9 || b === 10 || b === 13) printable++;
  return printable >= bytes.length * 0.98;
}

function detectText(text: string, whole: boolean): Detection {
  if (/^\s*\$(date|version|timescale|scope|var|comment|enddefinitions)\b/.test(text) || /\$enddefinitions\b/.test(text)) {
    return { format: 'vcd', reason: 'Text with value change dump keywords ($timescale, $var, $enddefinitions).' };
  }
  let lines = text.split('\n');
  if (!whole && lines.length > 1) lines.pop(); // the head may cut the last line
  lines = lines.map((l) => l.replace(/\r$/, '')).filter((l) => l.trim() !== '');
  const data = lines.filter((l) => !l.trimStart().startsWith('#')).slice(0, 200);
  if (data.length === 0) return { format: null, reason: 'Text without any data lines.' };
  const frameLine = /^\s*\+?\d+(\.\d*)?([eE][-+]?\d+)?\s+(\S+:\s+)?([0-9A-Fa-f]{2}\s*)+$/;
  const frames = data.filter((l) => frameLine.test(l)).length;
  if (frames >= Math.max(1, data.length * 0.8)) {
    return { format: 'framelog', reason: `${frames} of ${data.length} lines read "<seconds> <hex bytes>": a frame log.` };
  }
  const [first, ...rows] = data;
  const delim = [',', ';', '\t'].reduce((best, d) => (first.split(d).length > first.split(best).length ? d : best), ',');
  const names = first.split(delim).map((s) => s.trim().replace(/^"(.*)"$/, '$1'));
  if (names.length >= 2 && names.some((n) => /[A-Za-z]/.test(n))) {
    const numeric = /^"?[-+]?(\d+(\.\d*)?|\.\d+)([eE][-+]?\d+)?"?$/;
    const good = rows.filter((r) => {
      const cells = r.split(delim).map((s) => s.trim());
      return cells.length === names.length && cells.every((c) => numeric.test(c) || /^"?[xXzZ]"?$/.test(c));
    }).length;
    if (rows.length === 0 || good >= rows.length * 0.8) {
      const time = names.find((n) => TIME_COLUMN.test(n) || SAMPLE_COLUMN.test(n));
      return {
        format: 'csv',
        reason: `A header row (${names.slice(0, 4).join(', ')}${names.length > 4 ? ', …' : ''}) over rows of numbers: a CSV sample table${time ? ` with time column "${time}"` : ''}.`,
      };
    }
  }
  return { format: null, reason: 'Text that is neither a value change dump, a CSV table with a header row, nor a "<seconds> <hex bytes>" frame log.' };
}

/** runs of 1s in the bit stream read LSB first: exactly six long, and seven to fourteen long */
export function onesRuns(bytes: Uint8Array): { six: number; sevenToFourteen: number } {
  let six = 0;
  let seven = 0;
  let run = 0;
  let started = false;
  for (const b of bytes) {
    for (let k = 0; k < 8; k++) {
      if ((b >> k) & 1) run++;
      else {
        // the run before the first 0 may have started before the head
        if (started) {
          if (run === 6) six++;
          else if (run >= 7 && run <= 14) seven++;
        }
        started = true;
        run = 0;
      }
    }
  }
  return { six, sevenToFourteen: seven };
}

/** most flags found in one bit alignment, reading bits LSB first */
export function countFlags(bytes: Uint8Array): number {
  // bit stream LSB first; a flag is 0 1 1 1 1 1 1 0 in time order, i.e. the byte 0x7E in any alignment
  let best = 0;
  const counts = new Int32Array(8);
  let window = 0;
  let bitIndex = 0;
  for (const b of bytes) {
    for (let k = 0; k < 8; k++) {
      window = ((window >> 1) | (((b >> k) & 1) << 7)) & 0xff;
      bitIndex++;
      if (bitIndex >= 8 && window === 0x7e) counts[bitIndex & 7]++;
    }
  }
  for (const c of counts) best = Math.max(best, c);
  return best;
}

/** the bit stream read as it is, inverted, and NRZI-decoded (a 0 is a change of level, ISO/IEC 13239) */
type BitReading = 'as it is' | 'inverted' | 'as NRZI';

/**
 * Line bits: flags (six 1s between 0s) and few other runs of 7 to 14 1s, as zero-bit insertion
 * leaves them (ISO/IEC 13239, from memory), in the stream as it is, inverted (a swapped pair of
 * wires) or NRZI-decoded (flags are then runs of seven equal levels).
 */
function lineBitEvidence(bytes: Uint8Array): { reading: BitReading; six: number; other: number; strong: boolean; weak: boolean } {
  const readings: [BitReading, Uint8Array][] = [
    ['as it is', bytes],
    ['inverted', bytes.map((b) => b ^ 0xff)],
    ['as NRZI', nrziDecode(bytes)],
  ];
  let best = { reading: 'as it is' as BitReading, six: 0, other: 0, strong: false, weak: false };
  let bestScore = -1;
  for (const [reading, b] of readings) {
    const runs = onesRuns(b);
    const strong = runs.six >= 2 && runs.sevenToFourteen <= Math.max(1, runs.six / 10);
    const weak = runs.six >= 4 && runs.sevenToFourteen <= runs.six / 3;
    const score = (strong ? 2 : weak ? 1 : 0) * 1e9 + runs.six - runs.sevenToFourteen;
    if (score > bestScore) {
      bestScore = score;
      best = { reading, six: runs.six, other: runs.sevenToFourteen, strong, weak: strong || weak };
    }
  }
  return best;
}

/** NRZI to bits, LSB first: a bit is 1 when the level stays, 0 when it changes; the line starts at 1 */
function nrziDecode(bytes: Uint8Array): Uint8Array {
  const out = new Uint8Array(bytes.length);
  let last = 1;
  for (let i = 0; i < bytes.length; i++) {
    const b = bytes[i];
    let x = 0;
    for (let k = 0; k < 8; k++) {
      const level = (b >> k) & 1;
      if (level === last) x |= 1 << k;
      last = level;
    }
    out[i] = x;
  }
  return out;
}

/**
 * Samples: each bit of a sample is one channel, so some bit positions never change (unused
 * inputs) while others do, or change at very different rates (a clock bit beside data lines),
 * read one or two bytes per sample. In line bits every position changes, and at about the same
 * rate: each carries every eighth bit of the data.
 */
function sampleEvidence(bytes: Uint8Array): { width: 1 | 2; fixed: number; active: number; uneven: boolean } | null {
  const found: { width: 1 | 2; fixed: number; active: number; uneven: boolean }[] = [];
  const counts = new Int32Array(16);
  for (const width of [1, 2] as const) {
    const n = Math.floor(bytes.length / width);
    if (n < 256) continue;
    counts.fill(0);
    let prev = width === 1 ? bytes[0] : bytes[0] | (bytes[1] << 8);
    for (let i = 1; i < n; i++) {
      const v = width === 1 ? bytes[i] : bytes[2 * i] | (bytes[2 * i + 1] << 8);
      let d = v ^ prev;
      prev = v;
      while (d !== 0) {
        const low = d & -d;
        counts[31 - Math.clz32(low)]++;
        d ^= low;
      }
    }
    let active = 0;
    let most = 0;
    let least = Infinity;
    for (let k = 0; k < width * 8; k++) {
      if (counts[k] === 0) continue;
      active++;
      most = Math.max(most, counts[k]);
      least = Math.min(least, counts[k]);
    }
    const fixed = width * 8 - active;
    // a clock bit changes every one or two samples, data a few times per bit cell
    const uneven = active > 1 && most >= 4 * least && most >= n * 0.2;
    if (active > 0 && (fixed > 0 || uneven)) found.push({ width, fixed, active, uneven: fixed === 0 });
  }
  if (found.length === 0) return null;
  if (found.length === 1) return found[0];
  // both widths fit: two-byte samples repeat at a distance of two bytes rather than one
  let one = 0;
  let two = 0;
  for (let i = 2; i < bytes.length; i++) {
    if (bytes[i] === bytes[i - 1]) one++;
    if (bytes[i] === bytes[i - 2]) two++;
  }
  return two > one * 1.2 + bytes.length * 0.05 ? found[1] : found[0];
}

function detectBinary(bytes: Uint8Array): Detection {
  const seen = new Uint8Array(256);
  let distinct = 0;
  let repeats = 0;
  for (let i = 0; i < bytes.length; i++) {
    if (!seen[bytes[i]]) {
      seen[bytes[i]] = 1;
      distinct++;
    }
    if (i > 0 && bytes[i] === bytes[i - 1]) repeats++;
  }
  const repeatRate = bytes.length > 1 ? repeats / (bytes.length - 1) : 1;
  const lines = lineBitEvidence(bytes);
  const samples = sampleEvidence(bytes);
  const fewValues = distinct <= 64 && (repeatRate >= 0.3 || distinct <= 16);
  const flagsText = `${lines.six} flag patterns (01111110) in the bits read ${lines.reading}, with ${lines.other} other runs of seven or more 1s`;
  const doubt = (other: CaptureFormat) => ` It fits ${other === 'raw' ? 'raw samples' : 'line bits'} too, so the settings finder tries both.`;
  // every bit changing at uneven rates is the weaker sign: it decides only between samples and
  // line bits (a counter or other structured data has uneven bits too), and line bits stay in the running
  if (samples && (!samples.uneven || lines.weak)) {
    // bits that never change do not happen in line bits: no doubt then
    const alternatives: CaptureFormat[] = samples.uneven ? ['octets'] : [];
    const how = samples.uneven
      ? `every bit changes, some at least four times as often as others (a clock beside data lines)`
      : `${samples.active} bits change and ${samples.fixed} never do`;
    return {
      format: 'raw',
      rawWidth: samples.width,
      alternatives,
      reason: `Read ${samples.width === 1 ? 'one byte' : 'two bytes'} per sample, ${how}, as the channels of a logic analyzer's samples do: raw binary samples.${alternatives.length ? doubt('octets') : ''}`,
    };
  }
  if (lines.strong) {
    const alternatives: CaptureFormat[] = fewValues ? ['raw'] : [];
    return { format: 'octets', alternatives, reason: `${flagsText}, as zero-bit insertion leaves them: raw line bits.${alternatives.length ? doubt('raw') : ''}` };
  }
  if (fewValues) {
    const alternatives: CaptureFormat[] = lines.weak ? ['octets'] : [];
    return {
      format: 'raw',
      alternatives,
      reason: `Only ${distinct} distinct byte values, ${Math.round(repeatRate * 100)} % of bytes equal to the one before: raw binary samples.${alternatives.length ? doubt('octets') : ''}`,
    };
  }
  if (lines.weak) {
    return { format: 'octets', alternatives: ['raw'], reason: `${flagsText}: probably raw line bits.${doubt('raw')}` };
  }
  return {
    format: null,
    reason: `Binary data with ${distinct} distinct byte values that change on ${Math.round((1 - repeatRate) * 100)} % of bytes, every bit of it changing, and only ${lines.six} flag patterns against ${lines.other} other runs of seven or more 1s: neither samples nor line bits.`,
  };
}

/**
 * A problem of the file as a whole, found in its head: a time that goes back or cannot be placed,
 * a VCD header without $enddefinitions (when the head is the whole file) or one far too long.
 * Uploads are refused with it, naming the line, instead of being stored and failing at decode.
 * Problems of settings not given yet (a sample rate) are not the file's and are not reported.
 */
export function checkHead(head: Uint8Array, format: CaptureFormat, whole: boolean): DecodeIssue | null {
  if (format !== 'vcd' && format !== 'csv') return null;
  const sink = { header: () => {}, transitions: () => {} };
  const reader = format === 'vcd' ? new VcdReader({}, sink) : new CsvReader({}, sink);
  reader.push(whole ? head : wholeLines(head));
  if (whole && !reader.fatal()) reader.finish();
  return reader.issues.find((i) => i.code !== undefined && !i.setting) ?? null;
}

// ---- channels and roles ----

export interface HeadChannel {
  index: number;
  /** name used to address the channel (scope.name when ambiguous) */
  name: string;
  /** VCD: enclosing scopes */
  scope?: string[];
  /** changes seen in the head */
  toggles: number;
  /** share of intervals between changes within ±25 % of the typical one (1 = a perfect clock) */
  regularity: number;
  /** typical (median) interval between changes, in samples (0 when fewer than two changes) */
  typicalInterval: number;
  /** a short interval (10th percentile): about one bit on a data line */
  shortInterval: number;
}

export interface HeadInspection {
  format: CaptureFormat;
  channels: HeadChannel[];
  /** VCD vectors wider than one bit: not channels, listed so a user sees them */
  buses: { name: string; scope: string[]; width: number }[];
  samplePeriodSeconds: number | null;
  /** raw binary: bits per sample */
  rawBits?: number;
  roles: {
    clock: string | null;
    data: string[];
    handshake: { name: string; role: 'rts' | 'cts' | 'dcd' | 'dtr' | 'dsr' }[];
  };
  /** bit/s estimated from the clock (or from the shortest regular data interval) */
  bitRateEstimate: number | null;
  issues: DecodeIssue[];
}

const HANDSHAKE = /(^|[^a-z])(rts|cts|dcd|dtr|dsr)([^a-z]|$)/i;
const CLOCK_NAME = /(clk|clock|txc|rxc|trxc|rtxc|sclk)/i;

/** Lists the channels of a capture's first bytes and suggests which is clock, data and handshake. */
export function inspectHead(head: Uint8Array, format: CaptureFormat, opts: ReaderOptions = {}): HeadInspection {
  const result: HeadInspection = {
    format,
    channels: [],
    buses: [],
    samplePeriodSeconds: null,
    roles: { clock: null, data: [], handshake: [] },
    bitRateEstimate: null,
    issues: [],
  };
  if (format === 'octets') {
    result.channels = [{ index: 0, name: opts.channelNames?.[0] ?? 'line', toggles: 0, regularity: 0, typicalInterval: 0, shortInterval: 0 }];
    result.roles.data = [result.channels[0].name];
    result.samplePeriodSeconds = opts.bitRate ? 1 / opts.bitRate : null;
    return result;
  }
  if (format === 'framelog') {
    const links: string[] = [];
    const reader = new FrameLogReader(opts, {
      header: () => {},
      frame: (link) => {
        if (!links.includes(link)) links.push(link);
      },
    });
    reader.push(wholeLines(head));
    reader.finish();
    result.channels = links.map((name, index) => ({ index, name, toggles: 0, regularity: 0, typicalInterval: 0, shortInterval: 0 }));
    result.roles.data = links;
    result.samplePeriodSeconds = 1e-9;
    result.issues = reader.issues;
    return result;
  }

  // sample formats: run the reader over the head and measure each channel's changes
  const intervals: number[][] = [];
  const lastChange: number[] = [];
  const lastValue: number[] = [];
  const sink = {
    header: (channels: { index: number; name: string }[], period: number) => {
      result.channels = channels.map((c) => ({ index: c.index, name: c.name, toggles: 0, regularity: 0, typicalInterval: 0, shortInterval: 0 }));
      result.samplePeriodSeconds = format === 'raw' && !opts.sampleRate ? null : period;
      for (let i = 0; i < channels.length; i++) {
        intervals.push([]);
        lastChange.push(-1);
        lastValue.push(-1);
      }
    },
    transitions: (t: Transitions) => {
      for (let i = 0; i < t.n; i++) {
        const c = t.channel[i];
        if (t.value[i] === lastValue[c]) continue;
        const first = lastValue[c] < 0;
        lastValue[c] = t.value[i];
        if (first) {
          lastChange[c] = t.sample[i];
          continue;
        }
        result.channels[c].toggles++;
        if (intervals[c].length < 4096) intervals[c].push(t.sample[i] - lastChange[c]);
        lastChange[c] = t.sample[i];
      }
    },
  };
  let reader: VcdReader | CsvReader | RawReader;
  let input: Uint8Array;
  if (format === 'vcd') {
    reader = new VcdReader(opts, sink);
    input = wholeLines(head);
  } else if (format === 'csv') {
    reader = new CsvReader(opts, sink);
    input = wholeLines(head);
  } else {
    reader = new RawReader({ ...opts, sampleRate: opts.sampleRate ?? 1 }, sink);
    const width = opts.rawWidth ?? 1;
    result.rawBits = width * 8;
    input = head.subarray(0, head.length - (head.length % width));
  }
  reader.push(input);
  reader.finish();
  // a head cut inside the VCD header is not a problem of the file
  result.issues = reader.issues.filter((i) => i !== reader.fatal() || format !== 'vcd' || !i.message.includes('$enddefinitions'));
  if (reader instanceof VcdReader) {
    if (result.channels.length === 0) {
      // the head ended inside the header: still list what was declared
      result.channels = reader.channels.map((c) => ({ index: c.index, name: c.name, toggles: 0, regularity: 0, typicalInterval: 0, shortInterval: 0 }));
      result.samplePeriodSeconds = reader.samplePeriodSeconds;
    }
    for (const v of reader.vars) {
      if (v.channel >= 0 && result.channels[v.channel]) result.channels[v.channel].scope = v.scope;
      else if (v.channel < 0) result.buses.push({ name: v.reference, scope: v.scope, width: v.width });
    }
  }
  for (const ch of result.channels) {
    const iv = intervals[ch.index] ?? [];
    if (iv.length < 2) continue;
    const sorted = [...iv].sort((a, b) => a - b);
    const typical = sorted[Math.floor(sorted.length / 2)];
    ch.typicalInterval = typical;
    ch.shortInterval = sorted[Math.floor(sorted.length / 10)];
    ch.regularity = iv.filter((x) => x >= typical * 0.75 && x <= typical * 1.25).length / iv.length;
  }
  suggestRoles(result);
  return result;
}

function suggestRoles(r: HeadInspection): void {
  const handshake: HeadInspection['roles']['handshake'] = [];
  for (const ch of r.channels) {
    const m = HANDSHAKE.exec(ch.name);
    if (m) handshake.push({ name: ch.name, role: m[2].toLowerCase() as 'rts' });
  }
  const isHandshake = (name: string) => handshake.some((h) => h.name === name);
  const candidates = r.channels.filter((c) => !isHandshake(c.name) && c.toggles >= 16 && c.regularity >= 0.9);
  candidates.sort((a, b) => b.regularity * b.toggles - a.regularity * a.toggles);
  let clock: HeadChannel | null = candidates[0] ?? null;
  if (!clock) clock = r.channels.find((c) => CLOCK_NAME.test(c.name) && c.toggles > 0) ?? null;
  r.roles.clock = clock?.name ?? null;
  r.roles.handshake = handshake;
  r.roles.data = r.channels.filter((c) => c !== clock && !isHandshake(c.name) && c.toggles > 0).map((c) => c.name);
  const period = r.samplePeriodSeconds;
  if (period) {
    if (clock && clock.typicalInterval > 0) r.bitRateEstimate = 1 / (2 * clock.typicalInterval * period);
    else {
      const data = r.channels.filter((c) => r.roles.data.includes(c.name) && c.shortInterval > 0);
      const shortest = Math.min(...data.map((c) => c.shortInterval));
      if (Number.isFinite(shortest)) r.bitRateEstimate = 1 / (shortest * period);
    }
  }
}

/** the head up to its last line break: a cut line would read as a bad row */
function wholeLines(head: Uint8Array): Uint8Array {
  const nl = head.lastIndexOf(10);
  return nl < 0 ? head : head.subarray(0, nl + 1);
}
