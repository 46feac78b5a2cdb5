// Transmitter under-runs, found frame by frame on each link: a frame cut short (valid FCS over
// fewer octets than its layout needs, or an abort) and the fragment that often follows it at once.
// The desk (index.ts) feeds every frame; a frame waits here until the next frame of its link
// shows whether a fragment follows, so memory is one frame per link.
import { applyFieldMap, chooseLayout, readCallCode, type CallDirection } from '../calls/apply';
import type { FieldMap } from '../calls/field-map';
import { decodeLink } from '../link';
import type { DecodedFrame } from '../types';
import type { FrameRef } from './anomalies';
import type { UnderrunEvidence } from './races';

/** What a field map says about the octets of one frame. */
export interface CallShape {
  /** a layout chosen by the frame's call code (not a fallback layout) reads it */
  known: boolean;
  /** octets from the address to the end of the layout's last field; null when a field has an open length */
  expectedOctets: number | null;
  /** the first field the octets end inside or before; null when every field is whole */
  truncatedField: string | null;
  /** octets of that field present, and the length the layout gives it */
  fieldOctets: { present: number; length: number } | null;
  /** true when the octets end strictly inside that field (some of it present, not all) */
  endsInsideField: boolean;
}

/**
 * The shape of a frame's octets (address first, FCS not included) on a link: null when they do not
 * carry a call (too short, not an I or UI frame).
 */
export type CallShapeLookup = (link: string, octets: Uint8Array) => CallShape | null;

/** A CallShapeLookup from a field map and the direction of each link. */
export function callShapeFromFieldMap(map: FieldMap, directionOf: (link: string) => CallDirection | null): CallShapeLookup {
  return (link, octets) => {
    const direction = directionOf(link);
    if (!direction || octets.length < 2) return null;
    const d = decodeLink(octets, octets.length);
    if (!d) return null;
    if (d.kind !== 'I' && d.command !== 'UI') return null;
    const info = octets.subarray(d.infoOffset);
    const code = readCallCode(map, info);
    const layout = chooseLayout(map, code, direction);
    const known = layout !== null && layout.when?.calls !== undefined && code !== null;
    if (!layout) return { known: false, expectedOctets: null, truncatedField: null, fieldOctets: null, endsInsideField: false };
    const call = applyFieldMap(map, info, direction);
    const open = layout.fields.some((f) => f.length === 'rest');
    let end = 0;
    for (const f of call.fields) end = Math.max(end, f.offset + f.length);
    const cut = call.fields.find((f) => f.truncated) ?? null;
    return {
      known,
      expectedOctets: open ? null : d.infoOffset + end,
      truncatedField: cut ? cut.id : null,
      fieldOctets: cut ? { present: cut.available, length: cut.length } : null,
      endsInsideField: cut !== null && cut.available > 0 && cut.available < cut.length,
    };
  };
}

/** A frame the watch decided on. */
export interface UnderrunFinding {
  frame: DecodedFrame;
  end: 'fcs' | 'abort';
  octetOffset: number;
  shape: CallShape | null;
  evidence: UnderrunEvidence[];
  fragment: DecodedFrame | null;
  rejoins: boolean;
}

export interface UnderrunWatchOptions {
  fcsOctets: 2 | 4;
  shape?: CallShapeLookup;
  /** a fragment starts at most this many bit times after the cut frame's last bit (default 40: its closing flag and up to four fill flags) */
  fragmentGapBits?: number;
}

interface Pending {
  frame: DecodedFrame;
  shape: CallShape | null;
  /** samples per line bit, from the frame itself */
  perBit: number;
}

/** Octets that went out before the cut: a partly sent octet counts (its trailing 1s merge into the abort). */
export function underrunOffset(f: Pick<DecodedFrame, 'status' | 'bytes' | 'bitLength'>, fcsOctets: number): number {
  return f.status === 'abort' ? Math.ceil(f.bitLength / 8) : Math.max(0, f.bytes.length - fcsOctets);
}

/**
 * Watches each link for cut frames. `frame()` returns what it decided about the frame before
 * this one on the same link (or null); `finish()` decides the frames still waiting.
 */
export class UnderrunWatch {
  private readonly pending = new Map<string, Pending>();
  /** good frames per address on each link: an address seen twice is the link's own */
  private readonly addresses = new Map<string, Map<number, number>>();
  private readonly gapBits: number;

  constructor(private readonly options: UnderrunWatchOptions) {
    this.gapBits = options.fragmentGapBits ?? 40;
  }

  frame(f: DecodedFrame): UnderrunFinding | null {
    const prev = this.pending.get(f.link);
    let found: UnderrunFinding | null = null;
    let consumed = false;
    if (prev) {
      this.pending.delete(f.link);
      const gap = f.firstSample - prev.frame.lastSample;
      const fragment = gap >= 0 && gap <= this.gapBits * prev.perBit && this.isFragment(f, prev) ? f : null;
      found = this.decide(prev, fragment);
      consumed = found?.fragment === f;
    }
    if (f.status === 'ok' && f.bytes.length > 0 && !consumed) {
      let seen = this.addresses.get(f.link);
      if (!seen) this.addresses.set(f.link, (seen = new Map()));
      seen.set(f.bytes[0], (seen.get(f.bytes[0]) ?? 0) + 1);
    }
    // a fragment is not itself cut from something else
    if (!consumed && (f.status === 'ok' || f.status === 'abort') && f.bytes.length >= 1) {
      const lineBits = f.bitLength + f.stuffed.length;
      const perBit = lineBits > 1 ? (f.lastSample - f.firstSample) / (lineBits - 1) : 1;
      this.pending.set(f.link, { frame: f, shape: this.shapeOf(f), perBit: perBit > 0 ? perBit : 1 });
    }
    return found;
  }

  finish(): UnderrunFinding[] {
    const out: UnderrunFinding[] = [];
    for (const p of this.pending.values()) {
      const d = this.decide(p, null);
      if (d) out.push(d);
    }
    this.pending.clear();
    return out;
  }

  private dataOctets(f: DecodedFrame): Uint8Array {
    return f.status === 'abort' ? f.bytes : f.bytes.subarray(0, Math.max(0, f.bytes.length - this.options.fcsOctets));
  }

  private shapeOf(f: DecodedFrame): CallShape | null {
    if (!this.options.shape) return null;
    const octets = this.dataOctets(f);
    return octets.length >= 2 ? this.options.shape(f.link, octets) : null;
  }

  private known(link: string, address: number): boolean {
    return (this.addresses.get(link)?.get(address) ?? 0) >= 2;
  }

  /** right after a frame that may be cut: sent by a transmitter (good FCS or abort) but not the station's own */
  private isFragment(f: DecodedFrame, prev: Pending): boolean {
    // a fragment of a few octets reads as a short frame; residue and bad FCS are the line's doing
    if ((f.status !== 'ok' && f.status !== 'abort' && f.status !== 'short') || f.bytes.length === 0) return false;
    const address = prev.frame.bytes[0];
    if (!this.known(f.link, address)) return false;
    if (f.bytes[0] !== address && !this.known(f.link, f.bytes[0])) return true;
    // the same first octet by chance: the map decides, when there is one and it knows the cut frame's call
    if (prev.shape?.known && prev.shape.truncatedField !== null) {
      const own = this.shapeOf(f);
      return own !== null && !own.known;
    }
    return false;
  }

  private decide(p: Pending, fragment: DecodedFrame | null): UnderrunFinding | null {
    const f = p.frame;
    const shape = p.shape;
    const evidence: UnderrunEvidence[] = [];
    const cutInLayout = shape !== null && shape.known && shape.truncatedField !== null;
    // a good frame ending exactly at a field boundary may be a shorter variant of the message; an
    // abort always cuts, so any truncated layout of a known call counts
    if (cutInLayout && (f.status === 'abort' || shape.endsInsideField)) evidence.push('layout');
    if (fragment) evidence.push('fragment');
    let rejoins = false;
    if (fragment && this.options.shape) {
      const a = this.dataOctets(f);
      const b = this.dataOctets(fragment);
      const joined = new Uint8Array(a.length + b.length);
      joined.set(a);
      joined.set(b, a.length);
      const whole = this.options.shape(f.link, joined);
      rejoins = whole !== null && whole.known && whole.truncatedField === null;
      if (rejoins) evidence.push('rejoins');
    }
    if (evidence.length === 0) return null;
    return { frame: f, end: f.status === 'abort' ? 'abort' : 'fcs', octetOffset: underrunOffset(f, this.options.fcsOctets), shape, evidence, fragment, rejoins };
  }
}

export const refOf = (f: { link: string; seq: number }): FrameRef => ({ link: f.link, seq: f.seq });
