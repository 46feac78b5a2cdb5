import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { encodeLineBits, type LineItem, renderWaveform, collect, frameLogChunks, type LoggedFrame, vcdChunks } from '../../shared/decoder/encode';
import { fcs16 } from '../../shared/decoder';

// Invented traffic of our own demo scenario (stations 0x21–0x23, server 0x10).

/** HDLC control octets, modulo 8 (ISO/IEC 13239): I = N(R)<<5 | P<<4 | N(S)<<1 */
const iControl = (ns: number, nr: number, p = false) => ((nr & 7) << 5) | (p ? 0x10 : 0) | ((ns & 7) << 1);
/** RR = N(R)<<5 | P/F<<4 | 0b0001 (ISO/IEC 13239) */
const rrControl = (nr: number) => ((nr & 7) << 5) | 0x01;

function frame(address: number, control: number, info = ''): Uint8Array {
  return Uint8Array.from([address, control, ...new TextEncoder().encode(info)]);
}

export interface ClockedCapture {
  path: string;
  /** frames per link in send order, with the destuffed bit flipped where one was */
  damaged: { link: string; index: number; flippedBit: number }[];
}

/**
 * A clocked VCD: clock, two data links (desk → server "txd", server → desk "rxd") and an RTS
 * line, NRZI at 800 kbit/s sampled at 8 MHz. Two frames on txd get one flipped bit each, so
 * the decoder reports bad FCS with a single-bit diagnosis. `timescale` writes the same samples
 * with another VCD time unit (e.g. "1 ps"); `residueAt` lists requests sent with 3 bits over; `rtsOnce` leaves RTS up (one change).
 */
export function writeClockedVcd(dir: string, requests = 24, opts: { timescale?: string; residueAt?: number[]; rtsOnce?: boolean; name?: string } = {}): ClockedCapture {
  const tx: LineItem[] = [{ kind: 'flags', count: 4 }];
  const rx: LineItem[] = [{ kind: 'flags', count: 4 }];
  const damaged: ClockedCapture['damaged'] = [];
  const names = ['REGISTER.DAT', 'BAPTISMS.TXT', 'CHOIR   .LST', 'ACCOUNTS.DAT'];
  for (let i = 0; i < requests; i++) {
    const address = 0x21 + (i % 3);
    const name = names[i % names.length];
    const flip = i === 5 || i === 17 ? 21 + i : undefined;
    // a request that runs on for three bits before its closing flag: a residue frame
    const residue = opts.residueAt?.includes(i) ? { residueBits: 3 } : undefined;
    tx.push({ kind: 'frame', bytes: frame(address, iControl(i, i, true), `OPEN ${name} rec ${i}`), faults: flip === undefined ? residue : { flipBits: [flip] } });
    if (flip !== undefined) damaged.push({ link: 'txd', index: i, flippedBit: flip });
    tx.push({ kind: 'flags', count: 30 });
    // the answer comes while the request's closing flags go out
    rx.push({ kind: 'flags', count: 20 });
    rx.push({ kind: 'frame', bytes: frame(address, iControl(i, i + 1), `OK ${name} ${String(i).padStart(3, '0')}`) });
    rx.push({ kind: 'flags', count: 6 });
    rx.push({ kind: 'frame', bytes: frame(address, rrControl(i + 1)) });
  }
  tx.push({ kind: 'flags', count: 4 });
  rx.push({ kind: 'flags', count: 4 });
  const txBits = encodeLineBits(tx);
  const rxBits = encodeLineBits(rx);
  const wave = renderWaveform({
    links: [
      { name: 'txd', bits: txBits.bits },
      { name: 'rxd', bits: rxBits.bits },
    ],
    samplesPerBit: 10,
    samplePeriodSeconds: 125e-9,
    encoding: 'nrzi',
    clock: { name: 'clk', edge: 'rising' },
    handshake: [{ name: 'rts', initial: 0, edges: opts.rtsOnce ? [{ bit: 8, level: 1 }] : [{ bit: 8, level: 1 }, { bit: txBits.bits.length - 8, level: 0 }] }],
  });
  const path = join(dir, opts.name ?? 'wrenfield-desk-session.vcd');
  writeFileSync(path, collect(vcdChunks(wave, { timescale: opts.timescale ?? '1 ns' })));
  return { path, damaged };
}

/**
 * A hex frame log with `count` short frames (FCS appended, as the log format carries it), a
 * few of them with a wrong FCS: the fastest format to decode, for the scale test.
 */
export function writeLargeFrameLog(dir: string, count: number): string {
  function* frames(): Generator<LoggedFrame> {
    for (let i = 0; i < count; i++) {
      const address = 0x21 + (i % 3);
      const body = Uint8Array.from([address, i % 2 ? rrControl(i) : iControl(i, i), 0x30 + (i % 10), 0x41 + (i % 26)]);
      const fcs = fcs16(body) ^ (i % 9973 === 0 ? 0x0100 : 0);
      const bytes = Uint8Array.from([...body, fcs & 0xff, fcs >> 8]);
      yield { seconds: i * 0.0005, bytes, link: i % 2 ? 'rx' : 'tx' };
    }
  }
  const path = join(dir, `busy-evening-${count}.log`);
  writeFileSync(path, collect(frameLogChunks(frames(), { comment: 'invented load for the timeline scale test' })));
  return path;
}
