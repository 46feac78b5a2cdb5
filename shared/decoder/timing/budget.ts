// The budget line beside the races: at the line's bit rate, how long one octet takes on the wire
// and how many CPU clock cycles that is on the machine that has to feed (or drain) the serial
// controller. An octet is 8 bit times before zero-bit insertion; a stuffed 0 only lengthens it.
//
// Arithmetic from the stated rates: at 800 kbit/s a bit lasts 1.25 µs and an octet 10 µs, which
// is 40 cycles of a 4 MHz CPU clock. Controllers of the period were commonly clocked from the CPU
// clock divided by 5 to reach 800 kbit/s (common practice), which is why the default CPU clock is
// 4 MHz; the rig's own setting replaces it.
import type { DecodedFrame } from '../types';

export const DEFAULT_CPU_HZ = 4_000_000;

export type BitRateSource = 'clock' | 'frames' | 'nominal';

export interface OctetBudget {
  /** bits per second the budget is worked out at */
  bitRate: number;
  /** where the rate came from: the captured clock, the frames' own lengths, or the capture settings */
  source: BitRateSource;
  bitSeconds: number;
  /** 8 bit times */
  octetSeconds: number;
  /** CPU clock the cycles are counted at (Hz) */
  cpuHz: number;
  cyclesPerBit: number;
  cyclesPerOctet: number;
}

/** Time per bit and octet, and CPU cycles per octet, at `bitRate` bit/s and a `cpuHz` CPU clock. */
export function octetBudget(bitRate: number, cpuHz: number = DEFAULT_CPU_HZ, source: BitRateSource = 'nominal'): OctetBudget {
  if (!(bitRate > 0) || !Number.isFinite(bitRate)) throw new RangeError(`a bit rate must be a positive number of bit/s, not ${bitRate}`);
  if (!(cpuHz > 0) || !Number.isFinite(cpuHz)) throw new RangeError(`a CPU clock must be a positive number of Hz, not ${cpuHz}`);
  const bitSeconds = 1 / bitRate;
  return {
    bitRate,
    source,
    bitSeconds,
    octetSeconds: 8 * bitSeconds,
    cpuHz,
    cyclesPerBit: cpuHz / bitRate,
    cyclesPerOctet: (8 * cpuHz) / bitRate,
  };
}

/** frames measured for the rate; more add nothing but time */
const KEEP = 4096;
/** frames shorter than this many line bits say too little about the rate */
const MIN_BITS = 48;

/**
 * The bit rate as the frames show it: each frame's first and last bit samples over its line bits
 * (stuffed zeros included) give its samples per bit; the median of the first few thousand frames
 * is the line's rate. Works without a clock channel; a frame log only gives back the rate its
 * times were computed with.
 */
export class BitRateMeter {
  private readonly perBit = new Float64Array(KEEP);
  private n = 0;

  frame(f: Pick<DecodedFrame, 'firstSample' | 'lastSample' | 'bitLength' | 'stuffed' | 'status'>): void {
    if (this.n >= KEEP || f.status !== 'ok') return;
    const lineBits = f.bitLength + f.stuffed.length;
    if (lineBits < MIN_BITS || f.lastSample <= f.firstSample) return;
    this.perBit[this.n++] = (f.lastSample - f.firstSample) / (lineBits - 1);
  }

  /** bits per second, or null before any frame long enough */
  bitRate(samplePeriodSeconds: number): number | null {
    if (this.n === 0 || !(samplePeriodSeconds > 0)) return null;
    const v = this.perBit.slice(0, this.n).sort();
    return 1 / (v[(this.n - 1) >> 1] * samplePeriodSeconds);
  }
}
