// Echoes: which octets of an answer repeat an octet of the request it answers. A request pairs
// with the next answer to the same station (a station has one call outstanding, or a tag says
// which). The full matrix of request × answer offsets is counted over the first pairs; after
// that only the cells that could be echoes are, so a million frames stay cheap.
import type { FrameRef } from '../calls/exchanges';

export const ECHO_SPAN = 24;
/** pairs over which every cell is counted */
const EARLY = 4096;
/** pairs kept to list the frames behind an echo */
const KEPT = 1500;

export interface EchoPair {
  request: Uint8Array;
  response: Uint8Array;
  ref: FrameRef;
}

export class EchoStats {
  pairs = 0;
  private readonly cells = new Uint32Array(ECHO_SPAN * ECHO_SPAN);
  /** cells still counted after the early pairs; null while every cell is */
  private watched: Int32Array | null = null;
  /** per request offset during the early pairs: its first value, and whether it ever changed */
  private readonly firstValue = new Int16Array(ECHO_SPAN).fill(-1);
  private readonly varies = new Uint8Array(ECHO_SPAN);
  readonly kept: EchoPair[] = [];
  /** answers whose selector octet equals the request's */
  sameSelector = 0;

  push(request: Uint8Array, response: Uint8Array, ref: FrameRef, selectorOffset: number | null): void {
    this.pairs++;
    if (selectorOffset !== null && request[selectorOffset] === response[selectorOffset]) this.sameSelector++;
    if (this.kept.length < KEPT) this.kept.push({ request, response, ref });
    const ni = Math.min(ECHO_SPAN, request.length);
    const nj = Math.min(ECHO_SPAN, response.length);
    const c = this.cells;
    const w = this.watched;
    if (w) {
      for (let x = 0; x < w.length; x++) {
        const cell = w[x];
        const i = (cell / ECHO_SPAN) | 0;
        const j = cell - i * ECHO_SPAN;
        if (i < ni && j < nj && request[i] === response[j]) c[cell]++;
      }
      return;
    }
    for (let i = 0; i < ni; i++) {
      const v = request[i];
      if (this.firstValue[i] < 0) this.firstValue[i] = v;
      else if (this.firstValue[i] !== v) this.varies[i] = 1;
      const row = i * ECHO_SPAN;
      for (let j = 0; j < nj; j++) if (response[j] === v) c[row + j]++;
    }
    if (this.pairs === EARLY) {
      // an octet that never changed over the early pairs echoes nothing worth a hint
      const keep: number[] = [];
      for (let cell = 0; cell < c.length; cell++) if (c[cell] >= EARLY * 0.5 && this.varies[(cell / ECHO_SPAN) | 0]) keep.push(cell);
      this.watched = Int32Array.from(keep);
    }
  }

  /** share of pairs in which answer octet j repeats request octet i */
  count(i: number, j: number): number {
    return this.cells[i * ECHO_SPAN + j];
  }
}
