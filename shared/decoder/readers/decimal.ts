/**
 * A decimal number as integer mantissa × 10^-scale, read from bytes without floating-point
 * rounding: "0.000000125" → { mantissa: 125, scale: 9 }; "1.250e-07" → the same.
 * Trailing zeros are dropped so the scale says how fine the number really is.
 */
export interface Decimal {
  mantissa: number;
  scale: number;
}

/** returns false when bytes [start, end) are not a decimal number */
export function parseDecimal(buf: Uint8Array, start: number, end: number, out: Decimal): boolean {
  let i = start;
  let neg = false;
  if (buf[i] === 45 || buf[i] === 43) {
    neg = buf[i] === 45;
    i++;
  }
  let mantissa = 0;
  let scale = 0;
  let digits = 0;
  let dot = false;
  for (; i < end; i++) {
    const c = buf[i];
    if (c >= 48 && c <= 57) {
      mantissa = mantissa * 10 + (c - 48);
      digits++;
      if (dot) scale++;
    } else if (c === 46 && !dot) dot = true;
    else break;
  }
  if (digits === 0) return false;
  if (i < end) {
    if (buf[i] !== 101 && buf[i] !== 69) return false;
    i++;
    let eneg = false;
    if (buf[i] === 45 || buf[i] === 43) {
      eneg = buf[i] === 45;
      i++;
    }
    let e = 0;
    let ed = 0;
    for (; i < end; i++) {
      const c = buf[i];
      if (c < 48 || c > 57) return false;
      e = e * 10 + (c - 48);
      ed++;
    }
    if (ed === 0) return false;
    scale += eneg ? e : -e;
  }
  while (scale > 0 && mantissa !== 0 && mantissa % 10 === 0) {
    mantissa /= 10;
    scale--;
  }
  if (mantissa === 0) scale = 0;
  while (scale < 0) {
    mantissa *= 10;
    scale++;
  }
  out.mantissa = neg ? -mantissa : mantissa;
  out.scale = scale;
  return true;
}

export const POW10: number[] = Array.from({ length: 23 }, (_, i) => Number(`1e${i}`));
