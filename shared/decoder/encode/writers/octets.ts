/**
 * Line bits → octets as a synchronous serial adapter delivers them: 8 bits per byte, least
 * significant bit first. A last partial byte is filled with 1s (an idle line).
 */
export function octetsFromLineBits(bits: Uint8Array): Uint8Array {
  const out = new Uint8Array(Math.ceil(bits.length / 8));
  for (let i = 0; i < out.length; i++) {
    let b = 0;
    for (let k = 0; k < 8; k++) {
      const j = i * 8 + k;
      b |= (j < bits.length ? bits[j] & 1 : 1) << k;
    }
    out[i] = b;
  }
  return out;
}
