// The decode CLI's output: one JSON line per frame (and per line event when asked), assembled in
// one reused byte buffer that goes to `write` whenever it fills. Frame lines have a fixed shape,
// so they are written byte by byte instead of building an object and a string per frame for
// JSON.stringify (that was the CLI's largest cost after the decoder itself). frameRecord() is the
// same shape as an object: the reference the writer is tested against, field for field.
import type { DecodedFrame, LineEvent } from '../../shared/decoder';

/** Seconds with float noise trimmed (sample × period gives e.g. 0.30000000000000004). */
export const seconds = (sample: number, period: number) => Number((sample * period).toPrecision(12));

const hexDigits = (value: number, digits: number) => value.toString(16).padStart(digits, '0');

/** A frame line as an object; `fcsDigits` is 4 for FCS-16, 8 for FCS-32. */
export function frameRecord(f: DecodedFrame, period: number, fcsDigits: number): Record<string, unknown> {
  const hasFcs = f.fcsReceived !== null;
  const d = f.decode;
  const end = hasFcs ? f.bytes.length - fcsDigits / 2 : f.bytes.length;
  let hex = '';
  for (let i = 0; i < end; i++) hex += hexDigits(f.bytes[i], 2);
  const out: Record<string, unknown> = {
    link: f.link,
    seq: f.seq,
    t: seconds(f.firstSample, period),
    tEnd: seconds(f.lastSample, period),
    status: f.status,
    bits: f.bitLength,
    hex,
    fcs: hasFcs ? hexDigits(f.fcsReceived!, fcsDigits) : null,
    address: d ? d.address : null,
    kind: d ? d.kind : null,
    command: d ? d.command : null,
    ns: d ? d.ns : null,
    nr: d ? d.nr : null,
    pf: d ? d.pf : null,
  };
  if (f.status === 'bad-fcs') {
    out.fcsComputed = hexDigits(f.fcsComputed!, fcsDigits);
    out.flippedBit = f.flippedBit;
  }
  return out;
}

/** A line event as an object. */
export function eventRecord(e: LineEvent, period: number): Record<string, unknown> {
  return {
    event: e.kind,
    link: e.link,
    channel: e.channel,
    t: seconds(e.sample, period),
    ...(e.endSample !== undefined ? { tEnd: seconds(e.endSample, period) } : {}),
    ...(e.count !== undefined ? { count: e.count } : {}),
  };
}

const encoder = new TextEncoder();
const ascii = (s: string) => encoder.encode(s);

const K_T = ascii(',"t":');
const K_TEND = ascii(',"tEnd":');
const K_HEX = ascii(',"hex":"');
const K_FCS = ascii('","fcs":');
const K_ADDRESS = ascii(',"address":');
/** kind and command of a frame without a link decode */
const K_NO_LINK = ascii(',"kind":null,"command":null,"ns":');
const K_NR = ascii(',"nr":');
const K_PF = ascii(',"pf":');
const K_FCS_COMPUTED = ascii(',"fcsComputed":"');
const K_FLIPPED = ascii('","flippedBit":');
const NULL = ascii('null');
const TRUE = ascii('true');
const FALSE = ascii('false');
/** ASCII codes of the hex digits */
const NIBBLE = ascii('0123456789abcdef');
/** both hex digits of an octet as one 16-bit value, first digit in the low byte */
const OCTET = new Uint16Array(256);
for (let i = 0; i < 256; i++) OCTET[i] = NIBBLE[i >> 4] | (NIBBLE[i & 15] << 8);

/** 10^k for k = 0…22, parsed from decimal (correctly rounded, and exact as doubles up to 10^22) */
const POW10 = Array.from({ length: 23 }, (_, k) => Number(`1e${k}`));

/** x × 10^(11 - e) by an exact power of ten: one rounding */
function scaled(x: number, e: number): number {
  return e <= 11 ? x * POW10[11 - e] : x / POW10[e - 11];
}

/** strings a JsonStrings remembers by identity before asking its map */
const RECENT = 8;

/**
 * JSON strings (quoted, escaped, UTF-8) of the values of one field. A field holds a few values
 * again and again (each link's name, the statuses, kinds, commands): comparing against the last
 * ones seen is cheaper than hashing into the map every time.
 */
class JsonStrings {
  private readonly all = new Map<string, Uint8Array>();
  private readonly keys: string[] = [];
  private readonly values: Uint8Array[] = [];
  private next = 0;

  /** each value is kept with the fixed text around it in the line, so that goes out in the same copy */
  constructor(
    private readonly before = '',
    private readonly after = '',
  ) {}

  get(s: string): Uint8Array {
    const keys = this.keys;
    for (let k = 0; k < keys.length; k++) if (keys[k] === s) return this.values[k];
    let b = this.all.get(s);
    if (!b) this.all.set(s, (b = encoder.encode(this.before + JSON.stringify(s) + this.after)));
    this.keys[this.next] = s;
    this.values[this.next] = b;
    this.next = (this.next + 1) % RECENT;
    return b;
  }
}

/** bytes a frame line needs besides its hex and its strings (keys, numbers, FCS fields) */
const FIXED_ROOM = 512;

export class NdjsonWriter {
  private buf: Uint8Array;
  private at = 0;
  private readonly links = new JsonStrings('{"link":', ',"seq":');
  private readonly statuses = new JsonStrings(',"status":', ',"bits":');
  private readonly kinds = new JsonStrings(',"kind":', ',"command":');
  private readonly commands = new JsonStrings('', ',"ns":');
  private readonly digits = new Uint8Array(12);

  /**
   * `write` gets a view of the buffer that is valid only during the call (the buffer is reused):
   * it must write or copy the bytes before returning.
   */
  constructor(
    private readonly write: (bytes: Uint8Array) => void,
    private readonly fcsDigits: number,
    capacity = 1 << 20,
  ) {
    this.buf = new Uint8Array(capacity);
  }

  frame(f: DecodedFrame, period: number): void {
    const bytes = f.bytes;
    const hasFcs = f.fcsReceived !== null;
    const hexEnd = hasFcs ? bytes.length - (this.fcsDigits >> 1) : bytes.length;
    const d = f.decode;
    const link = this.links.get(f.link);
    const command = d ? this.commands.get(d.command) : K_NO_LINK;
    const status = this.statuses.get(f.status);
    this.room(FIXED_ROOM + 2 * Math.max(0, hexEnd) + link.length + command.length + status.length);
    // {"link":…,"seq":
    this.put(link);
    this.integer(f.seq);
    this.put(K_T);
    this.seconds(f.firstSample, period);
    this.put(K_TEND);
    this.seconds(f.lastSample, period);
    // ,"status":…,"bits":
    this.put(status);
    this.integer(f.bitLength);
    this.put(K_HEX);
    const buf = this.buf;
    let at = this.at;
    for (let i = 0; i < hexEnd; i++) {
      const pair = OCTET[bytes[i]];
      buf[at] = pair;
      buf[at + 1] = pair >> 8;
      at += 2;
    }
    this.at = at;
    this.put(K_FCS);
    if (hasFcs) this.hex(f.fcsReceived!);
    else this.put(NULL);
    this.put(K_ADDRESS);
    if (d) this.integer(d.address);
    else this.put(NULL);
    // ,"kind":…,"command":…,"ns":
    if (d) this.put(this.kinds.get(d.kind));
    this.put(command);
    this.nullableInteger(d ? d.ns : null);
    this.put(K_NR);
    this.nullableInteger(d ? d.nr : null);
    this.put(K_PF);
    this.put(d ? (d.pf ? TRUE : FALSE) : NULL);
    if (f.status === 'bad-fcs') {
      this.put(K_FCS_COMPUTED);
      this.hexDigits(f.fcsComputed!);
      this.put(K_FLIPPED);
      this.nullableInteger(f.flippedBit);
    }
    this.buf[this.at++] = 0x7d; // }
    this.buf[this.at++] = 0x0a; // newline
  }

  /** line events are few: they go through JSON.stringify */
  event(e: LineEvent, period: number): void {
    const line = JSON.stringify(eventRecord(e, period)) + '\n';
    this.room(line.length * 3);
    this.at += encoder.encodeInto(line, this.buf.subarray(this.at)).written;
  }

  /** hands on what the buffer holds */
  flush(): void {
    if (this.at === 0) return;
    const n = this.at;
    this.at = 0;
    this.write(this.buf.subarray(0, n));
  }

  private room(need: number): void {
    if (this.at + need <= this.buf.length) return;
    this.flush();
    if (need > this.buf.length) {
      let size = this.buf.length * 2;
      while (size < need) size *= 2;
      this.buf = new Uint8Array(size);
    }
  }

  private put(src: Uint8Array): void {
    const buf = this.buf;
    let at = this.at;
    for (let i = 0; i < src.length; i++) buf[at++] = src[i];
    this.at = at;
  }

  private ascii(s: string): void {
    const buf = this.buf;
    let at = this.at;
    for (let i = 0; i < s.length; i++) buf[at++] = s.charCodeAt(i);
    this.at = at;
  }

  private nullableInteger(v: number | null): void {
    if (v === null) this.put(NULL);
    else this.integer(v);
  }

  /** decimal digits of a non-negative safe integer; anything else as JSON.stringify writes it */
  private integer(v: number): void {
    if (!(v >= 0 && v <= Number.MAX_SAFE_INTEGER && Math.floor(v) === v)) {
      this.ascii(JSON.stringify(v));
      return;
    }
    if (v < 10) {
      this.buf[this.at++] = 48 + v;
      return;
    }
    let digits = 1;
    for (let p = 10; p <= v; p *= 10) digits++;
    const buf = this.buf;
    let at = this.at + digits;
    this.at = at;
    while (v >= 10) {
      const q = Math.floor(v / 10);
      buf[--at] = 48 + (v - q * 10);
      v = q;
    }
    buf[at - 1] = 48 + v;
  }

  /**
   * sample × period in seconds, as JSON.stringify writes seconds(sample, period): the value rounded
   * to 12 significant digits, which is also its shortest form (12 digits always name one double),
   * in fixed notation without trailing zeros. Worked out in integers where the rounding is certain;
   * toPrecision otherwise (exponent forms, a value within a hair of half a unit in the 12th digit).
   */
  private seconds(sample: number, period: number): void {
    const x = sample * period;
    if (x >= 1e-6 && x < 1e15) {
      let e = Math.floor(Math.log10(x));
      let m = scaled(x, e);
      if (m < 1e11) m = scaled(x, --e);
      else if (m >= 1e12) m = scaled(x, ++e);
      // m carries at most ~2e-4 of rounding error from scaling, far from the .5 that decides
      const f = m - Math.floor(m);
      if (m >= 1e11 && m < 1e12 && (f < 0.499 || f > 0.501)) {
        let r = Math.floor(m + 0.5);
        if (r === 1e12) {
          r = 1e11;
          e++;
        }
        this.fixed(r, e);
        return;
      }
    }
    const p = x.toPrecision(12);
    this.ascii(JSON.stringify(Number(p)));
  }

  /** the 12-digit integer r (10^11 ≤ r < 10^12) times 10^(e - 11), in fixed notation without trailing zeros */
  private fixed(r: number, e: number): void {
    const digits = this.digits;
    // both halves below 10^6, so the digit loops run on 32-bit integers (no floating-point remainder)
    const hi = Math.floor(r / 1e6);
    let lo = (r - hi * 1e6) | 0;
    let h = hi | 0;
    for (let k = 11; k >= 6; k--) {
      digits[k] = 48 + (lo % 10);
      lo = (lo / 10) | 0;
    }
    for (let k = 5; k >= 0; k--) {
      digits[k] = 48 + (h % 10);
      h = (h / 10) | 0;
    }
    let end = 12;
    while (end > 0 && digits[end - 1] === 48) end--;
    const buf = this.buf;
    let at = this.at;
    if (e >= 11) {
      for (let k = 0; k < 12; k++) buf[at++] = digits[k];
      for (let k = 11; k < e; k++) buf[at++] = 48;
    } else if (e >= 0) {
      for (let k = 0; k <= e; k++) buf[at++] = digits[k];
      if (end > e + 1) {
        buf[at++] = 46;
        for (let k = e + 1; k < end; k++) buf[at++] = digits[k];
      }
    } else {
      buf[at++] = 48;
      buf[at++] = 46;
      for (let k = -1; k > e; k--) buf[at++] = 48;
      for (let k = 0; k < end; k++) buf[at++] = digits[k];
    }
    this.at = at;
  }

  /** an FCS value as lowercase hex, at least fcsDigits digits (as toString(16).padStart would) */
  private hexDigits(v: number): void {
    if (!(v >= 0 && v <= 0xffffffff && Math.floor(v) === v)) {
      this.ascii(hexDigits(v, this.fcsDigits));
      return;
    }
    let digits = this.fcsDigits;
    // v >= 16^digits, by shifting (v is a whole number below 2^32; Math.pow per digit was a tenth of the writer)
    while (digits < 8 && v >>> (4 * digits) !== 0) digits++;
    const buf = this.buf;
    const at = this.at;
    for (let k = 0; k < digits; k++) buf[at + k] = NIBBLE[(v >>> (4 * (digits - 1 - k))) & 15];
    this.at = at + digits;
  }

  /** a quoted FCS value */
  private hex(v: number): void {
    this.buf[this.at++] = 0x22;
    this.hexDigits(v);
    this.buf[this.at++] = 0x22;
  }
}
