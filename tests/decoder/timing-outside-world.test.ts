// The timing figures checked against published sources and plain arithmetic, each named beside
// its check.
import { describe, expect, it } from 'vitest';
import { checkFrame, Deframer, fcs16, type DecodedFrame, type LineEvent } from '../../shared/decoder';
import { encodeLineBits, randomFrame, seededRng, type LineItem } from '../../shared/decoder/encode';
import { FaultDesk, type UnderrunDetail } from '../../shared/decoder/faults';
import { octetBudget } from '../../shared/decoder/timing';

function deframe(items: LineItem[]): { frames: DecodedFrame[]; events: LineEvent[] } {
  const { bits } = encodeLineBits(items);
  const frames: DecodedFrame[] = [];
  const events: LineEvent[] = [];
  const d = new Deframer('a', { frame: (f) => frames.push(checkFrame(f)), event: (e) => events.push(e) });
  d.push({ bits, samples: Float64Array.from(bits, (_, i) => i), n: bits.length });
  d.finish();
  return { frames, events };
}

/** a random frame of `n` octets from station 0x05; octets full of 1s are favoured, so a cut often comes after 1s that merge into the abort */
function frameOf(rng: () => number, n: number): Uint8Array {
  const bytes = randomFrame(rng, n);
  const out = new Uint8Array(n);
  out.set(bytes.subarray(0, n));
  for (let i = bytes.length; i < n; i++) out[i] = Math.floor(rng() * 256);
  out[0] = 0x05;
  out[1] = 0x10;
  return out;
}

describe('ISO/IEC 13239:2002 (HDLC procedures), frame abort and closing flag', () => {
  // ISO/IEC 13239:2002, 3rd edition, frame structure: a frame is aborted by sending at least seven
  // contiguous 1 bits (no 0 inserted), and a frame ends with the closing flag 01111110 — from
  // memory of the text; the clause numbers are not at hand.
  it('reads seven to fourteen contiguous 1s as an abort and finds the under-run at the octet it struck', () => {
    const rng = seededRng(13239);
    for (let trial = 0; trial < 200; trial++) {
      const bytes = frameOf(rng, 8 + Math.floor(rng() * 60));
      const at = 2 + Math.floor(rng() * (bytes.length - 2));
      const ones = 7 + Math.floor(rng() * 8);
      const items: LineItem[] = [{ kind: 'flags', count: 2 }];
      // two earlier cuts at the same octet make the desk call it an under-run without a field map
      for (let k = 0; k < 3; k++) items.push({ kind: 'frame', bytes, faults: { abortAfterBits: 8 * at, abortOnes: ones } }, { kind: 'flags', count: 2 });
      const { frames } = deframe(items);
      expect(frames.map((f) => f.status), `${ones} ones`).toEqual(['abort', 'abort', 'abort']);
      const desk = new FaultDesk({ samplePeriodSeconds: 1 });
      for (const f of frames) desk.frame(f);
      const rows = desk.finish().rows;
      expect(rows.map((r) => (r.race as UnderrunDetail).octetOffset), `cut at ${at}, ${ones} ones`).toEqual([at, at, at]);
    }
  });

  it('reads six 1s between 0s as a flag: the frame ends there with its FCS, no abort', () => {
    const rng = seededRng(6);
    for (let trial = 0; trial < 100; trial++) {
      const bytes = frameOf(rng, 4 + Math.floor(rng() * 40));
      const { frames } = deframe([{ kind: 'flags', count: 1 }, { kind: 'frame', bytes }, { kind: 'flags', count: 1 }]);
      expect(frames).toHaveLength(1);
      expect(frames[0].status).toBe('ok');
    }
  });

  it('ends a frame cut short by an under-run at its closing flag: the FCS there covers exactly the octets before it', () => {
    const rng = seededRng(7);
    for (let trial = 0; trial < 100; trial++) {
      const whole = frameOf(rng, 12 + Math.floor(rng() * 120));
      const at = 3 + Math.floor(rng() * (whole.length - 4));
      // the controller closes the frame with the FCS over what it sent, then the flag
      const { frames } = deframe([{ kind: 'flags', count: 1 }, { kind: 'frame', bytes: whole.subarray(0, at) }, { kind: 'flags', count: 1 }]);
      expect(frames).toHaveLength(1);
      expect(frames[0].status).toBe('ok');
      expect(frames[0].bytes.length).toBe(at + 2);
      expect(frames[0].fcsReceived).toBe(fcs16(whole.subarray(0, at)));
    }
  });

  it('tells an abort (seven or more 1s) from an idle line (fifteen or more): a longer run after the abort is an idle line event', () => {
    const bytes = frameOf(seededRng(15), 20);
    const { frames, events } = deframe([{ kind: 'flags', count: 1 }, { kind: 'frame', bytes, faults: { abortAfterBits: 80, abortOnes: 20 } }, { kind: 'flags', count: 1 }]);
    expect(frames.map((f) => f.status)).toEqual(['abort']);
    expect(events.some((e) => e.kind === 'idle')).toBe(true);
  });
});

describe('the budget line (arithmetic from the stated rates)', () => {
  it('gives 10 µs and 40 CPU cycles per octet at 800 kbit/s with a 4 MHz CPU clock', () => {
    // 8 bits / 800 000 bit/s = 10 µs; 10 µs × 4 000 000 Hz = 40 cycles
    const b = octetBudget(800_000, 4_000_000);
    expect(b.bitSeconds).toBeCloseTo(1.25e-6, 15);
    expect(b.octetSeconds).toBeCloseTo(10e-6, 15);
    expect(b.cyclesPerOctet).toBeCloseTo(40, 12);
    expect(b.cyclesPerBit).toBeCloseTo(5, 12);
  });

  it('takes 4 MHz ÷ 5 = 800 kbit/s as the top rate of a controller clocked from the CPU (common practice), and any other clock the rig sets', () => {
    expect(octetBudget(4_000_000 / 5).cyclesPerBit).toBeCloseTo(5, 12);
    expect(octetBudget(800_000, 6_000_000).cyclesPerOctet).toBeCloseTo(60, 12);
    expect(octetBudget(500_000, 2_500_000)).toMatchObject({ octetSeconds: 16e-6, cyclesPerOctet: 40 });
    expect(() => octetBudget(0)).toThrow(/bit rate/);
    expect(() => octetBudget(800_000, -1)).toThrow(/CPU clock/);
  });
});
