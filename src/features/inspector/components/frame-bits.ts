import type { FrameDetail } from '../../../../shared/schemas';

type Frame = FrameDetail['frame'];

export function octetsOf(hex: string): number[] {
  const out: number[] = [];
  for (let i = 0; i + 1 < hex.length; i += 2) out.push(Number.parseInt(hex.slice(i, i + 2), 16));
  return out;
}

export type FieldName = 'address' | 'control' | 'info' | 'fcs';

/** Which part of the frame an octet belongs to (address, control, information, FCS). */
export function fieldOf(index: number, length: number, hasFcs: boolean): FieldName {
  if (hasFcs && index >= length - 2) return 'fcs';
  if (index === 0) return 'address';
  if (index === 1) return 'control';
  return 'info';
}

export interface LineBit {
  /** 0 or 1 as on the wire (after NRZI decoding) */
  value: number;
  /** a zero the sender inserted after five 1s, deleted by the receiver */
  stuffed: boolean;
  /** index among the destuffed bits, -1 for a stuffed zero */
  bit: number;
}

/**
 * The frame's bits as they went over the line, rebuilt from the destuffed octets and the
 * positions of the deleted zeros (counted in line bits from the first bit after the flag).
 */
export function lineBits(frame: Frame): LineBit[] {
  const octets = octetsOf(frame.hexAll);
  const stuffed = new Set(frame.stuffed);
  const out: LineBit[] = [];
  let d = 0;
  for (let p = 0; d < frame.bitLength; p++) {
    if (stuffed.has(p)) out.push({ value: 0, stuffed: true, bit: -1 });
    else {
      const octet = octets[d >> 3] ?? 0;
      out.push({ value: (octet >> (d & 7)) & 1, stuffed: false, bit: d });
      d++;
    }
    if (p > frame.bitLength * 2 + 16) break;
  }
  return out;
}

/** The line-bit position of a destuffed bit (for marking the suspect bit on the waveform). */
export function linePositionOf(bits: LineBit[], destuffed: number): number {
  return bits.findIndex((b) => b.bit === destuffed);
}
