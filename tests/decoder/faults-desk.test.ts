import { describe, expect, it } from 'vitest';
import { BitRecovery, checkFrame, Deframer, fcs16Good, createDecoder, type BitRecoveryOptions, type ChannelInfo, type RawFrame, type Transitions } from '../../shared/decoder';
import { BDOS, CPM_ENVELOPE } from '../../shared/decoder/calls';
import { readFileCalls, requestInfo, Tags, type SessionScript, encodeLineBits, type FrameFaults, type LineItem, renderWaveform, type Glitch, collect, rawChunks, vcdBytes } from '../../shared/decoder/encode';
import { AnomalyTap, callKeyFromFieldMap, FaultDesk, type FaultReport, type FaultRow } from '../../shared/decoder/faults';
import { createReader } from '../../shared/decoder/readers';
import { decodeScript } from './calls-helpers';
import { randomSplit } from './support/signals';

// Timing of the rendered capture (see encode/waveform.ts): bit cell k starts at LEAD + SPB*k and
// its clock's active edge, where bit recovery samples it, is half a cell later.
const SPB = 8;
const LEAD = 2 * SPB;
const PERIOD = 1e-7;
const edgeOf = (lineBit: number) => LEAD + SPB * lineBit + SPB / 2;

const STATION = 0x03;
/** I frame, modulo 8 (ISO/IEC 13239:2002 control octet: bit 1 = 0, N(S) in bits 2-4; from memory) */
const iFrame = (ns: number, info: number[]) => new Uint8Array([STATION, (ns & 7) << 1, ...info]);
const zeros = (n: number) => new Array<number>(n).fill(0);
const mixed = (n: number, seed: number) => Array.from({ length: n }, (_, i) => (i * 37 + seed * 11 + 5) & 0xff);

type Name =
  | 'good'
  | 'flip'
  | 'twoFlips'
  | 'abort'
  | 'short'
  | 'residue'
  | 'dataGlitch'
  | 'missingEdge'
  | 'extraEdge'
  | 'clockStop'
  | 'harmlessGlitch';

interface Scenario {
  bits: Uint8Array;
  /** frame index (= seq on the link) of each named frame */
  at: Record<Name, number>;
  startBit: number[];
  glitches: Glitch[];
  missingClockEdges: number[];
  /** line bit of the glitch laid in the trailing fill flags */
  idleGlitchBit: number;
  /** octets between the flags of each frame as sent (faults applied) */
  wire: Uint8Array[];
}

/**
 * One link, one station: every damage kind once, each damaged I frame sent again right after
 * with the same N(S) (go-back-N as HDLC does it, from memory), fill flags between frames.
 */
function scenario(): Scenario {
  const items: LineItem[] = [{ kind: 'flags', count: 4 }];
  const at = {} as Record<Name, number>;
  let frames = 0;
  const send = (bytes: Uint8Array, faults?: FrameFaults, name?: Name) => {
    if (name) at[name] = frames;
    frames++;
    items.push({ kind: 'frame', bytes, faults }, { kind: 'flags', count: 2 });
  };
  const damaged = (name: Name, bytes: Uint8Array, faults?: FrameFaults) => {
    send(bytes, faults, name);
    send(bytes); // the retransmission: same octets, good FCS
  };
  send(iFrame(0, mixed(6, 1)), undefined, 'good');
  // 0xFF 0xFF puts three stuffed zeros before the flipped bit 36
  damaged('flip', iFrame(1, [0xff, 0xff, 0x12, 0x34, 0x56]), { flipBits: [36] });
  damaged('twoFlips', iFrame(2, mixed(12, 2)), { flipBits: [20, 70] });
  damaged('abort', iFrame(3, mixed(8, 3)), { abortAfterBits: 40 });
  // address and control only, no FCS: fewer octets than address + control + FCS-16
  damaged('short', iFrame(4, []), { noFcs: true });
  damaged('residue', iFrame(5, mixed(6, 5)), { residueBits: 3 });
  damaged('dataGlitch', iFrame(6, zeros(6)));
  damaged('missingEdge', iFrame(7, zeros(6)));
  damaged('extraEdge', iFrame(0, zeros(6)));
  damaged('clockStop', iFrame(1, zeros(8)));
  send(iFrame(2, zeros(6)), undefined, 'harmlessGlitch');
  items.push({ kind: 'flags', count: 4 });
  const enc = encodeLineBits(items);
  const startBit = enc.frames.map((f) => f.startBit);
  const s = (name: Name) => startBit[at[name]];
  const idleGlitchBit = enc.frames[enc.frames.length - 1].endBit + 20;
  const glitches: Glitch[] = [
    // covers the sampling edge of the frame's line bit 27 (a 0 among 0s): one bit flipped on the line
    { channel: 'a', sample: edgeOf(s('dataGlitch') + 27) - 1, width: 3 },
    // a falling-rising pair in the clock's active half: an extra active edge two samples after a real one
    { channel: 'clk', sample: edgeOf(s('extraEdge') + 30) + 1, width: 1 },
    // between two sampling edges: on the line, but no bit changes
    { channel: 'a', sample: LEAD + SPB * (s('harmlessGlitch') + 20) + 1, width: 2 },
    { channel: 'a', sample: LEAD + SPB * idleGlitchBit + 1, width: 2 },
  ];
  const missingClockEdges = [s('missingEdge') + 30];
  for (let k = 20; k < 40; k++) missingClockEdges.push(s('clockStop') + k);
  return { bits: enc.bits, at, startBit, glitches, missingClockEdges, idleGlitchBit, wire: enc.frames.map((f) => f.wire) };
}

function capture(sc: Scenario): Uint8Array {
  const w = renderWaveform({
    links: [{ name: 'a', bits: sc.bits }],
    samplesPerBit: SPB,
    samplePeriodSeconds: PERIOD,
    encoding: 'nrz',
    clock: { name: 'clk', edge: 'rising' },
    faults: { glitches: sc.glitches, missingClockEdges: sc.missingClockEdges },
  });
  return vcdBytes(w);
}

/** VCD bytes → reader → (bit recovery → deframer → FCS stage) and the anomaly tap → fault desk */
function faultReport(bytes: Uint8Array, seed: number, tapBitRate?: number): FaultReport {
  const desk = new FaultDesk({ samplePeriodSeconds: PERIOD });
  const deframer = new Deframer('a', { frame: (raw: RawFrame) => desk.frame(checkFrame(raw)), event: (e) => desk.event(e) });
  let recovery: BitRecovery | null = null;
  let tap: AnomalyTap | null = null;
  const reader = createReader(
    'vcd',
    {},
    {
      header(channels: ChannelInfo[], samplePeriodSeconds: number) {
        const index = (name: string) => channels.find((c) => c.name === name)!.index;
        const opts: BitRecoveryOptions = {
          samplePeriodSeconds,
          clock: index('clk'),
          data: [{ channel: index('a'), link: 'a' }],
          edge: 'rising',
          encoding: 'nrz',
          invert: false,
        };
        recovery = new BitRecovery(opts, { bits: (_link, chunk) => deframer.push(chunk), event: (e) => desk.event(e) });
        tap = new AnomalyTap({ ...opts, clockName: 'clk', bitRate: tapBitRate }, desk);
      },
      transitions(t: Transitions) {
        recovery!.transitions(t);
        tap!.transitions(t);
      },
    },
  );
  for (const piece of randomSplit(bytes, seed, 4096)) reader.push(piece);
  reader.finish();
  expect(reader.fatal()).toBeNull();
  recovery!.finish();
  tap!.finish();
  deframer.finish();
  return desk.finish();
}

const rowOf = (r: FaultReport, seq: number): FaultRow | undefined => r.rows.find((x) => x.link === 'a' && x.seq === seq);
const groupSeqs = (r: FaultReport, cause: string) => r.groups.find((g) => g.cause === cause)!.rows.map((i) => r.rows[i].seq);
const kindSeqs = (r: FaultReport, kind: string) => r.anomalyGroups.find((g) => g.kind === kind)!.rows.map((i) => r.rows[i].seq);

describe('fault desk over an encoded capture with every damage kind', () => {
  const sc = scenario();
  const bytes = capture(sc);
  const report = faultReport(bytes, 7);
  const at = sc.at;

  it('puts each damaged frame in the group of its cause', () => {
    expect(groupSeqs(report, 'bad-fcs-explained')).toEqual([at.flip, at.dataGlitch]);
    expect(groupSeqs(report, 'bad-fcs-unexplained')).toEqual([at.twoFlips]);
    // ISO/IEC 13239:2002 (from memory): seven or more 1s in a row inside a frame abort it
    expect(groupSeqs(report, 'abort')).toEqual([at.abort]);
    expect(groupSeqs(report, 'short')).toEqual([at.short]);
    // a lost bit (missing clock edge, stopped clock) or a doubled one (extra edge) leaves a bit count that is no multiple of 8
    expect(groupSeqs(report, 'residue')).toEqual([at.residue, at.missingEdge, at.extraEdge, at.clockStop]);
    expect(groupSeqs(report, 'line-anomaly')).toEqual([at.harmlessGlitch]);
    expect(report.rows.some((r) => r.seq === at.good)).toBe(false);
  });

  it('reports a bad FCS and locates the flipped bit on the line, across the stuffed zeros before it', () => {
    const row = rowOf(report, at.flip)!;
    // the CRC syndrome names one flipped bit in frames shorter than the generator's period, 32 767 bits for FCS-16 (textbook CRC property, from memory)
    expect(row.flippedBit).toBe(36);
    // ISO/IEC 13239:2002 zero-bit insertion: 0xFF 0xFF after address and control put three 0s before bit 36 (from memory)
    expect(row.suspect!.lineBit).toBe(39);
    expect(row.suspect!.exact).toBe(false);
    // interpolation over a steady clock lands on the bit's own sampling edge
    expect(Math.abs(row.suspect!.sample - edgeOf(sc.startBit[at.flip] + 39))).toBeLessThanOrEqual(1);
    expect(row.focusSample).toBe(row.suspect!.sample);
    expect(row.corrected).toBe(true);
    expect(row.station).toBe(STATION);
    expect(row.ns).toBe(1);
  });

  it('gives no single-bit explanation for two flips far apart', () => {
    const row = rowOf(report, at.twoFlips)!;
    // two errors leave a syndrome that can equal a single-bit one in general; for these two positions in this
    // frame it does not (a property of the chosen positions, checked by the decoder's own locator)
    expect(row.status).toBe('bad-fcs');
    expect(row.flippedBit).toBeNull();
    expect(row.suspect).toBeNull();
    expect(row.fcsReceived).not.toBe(row.fcsComputed);
    // independently: no single flip of the received octets gives the good residue 0xF0B8 (RFC 1662 §C)
    const wire = sc.wire[at.twoFlips];
    for (let i = 0; i < wire.length * 8; i++) {
      const copy = wire.slice();
      copy[i >> 3] ^= 1 << (i & 7);
      expect(fcs16Good(copy)).toBe(false);
    }
  });

  it('attaches a data-line glitch to the frame it damaged and points at the bit it flipped', () => {
    const row = rowOf(report, at.dataGlitch)!;
    expect(row.anomalies.map((a) => a.kind)).toEqual(['glitch']);
    const g = row.anomalies[0];
    expect(g.link).toBe('a');
    expect(g.sample).toBe(edgeOf(sc.startBit[at.dataGlitch] + 27) - 1);
    expect(g.endSample - g.sample).toBe(3);
    expect(row.flippedBit).toBe(27);
    expect(Math.abs(row.suspect!.sample - edgeOf(sc.startBit[at.dataGlitch] + 27))).toBeLessThanOrEqual(1);
  });

  it('finds a missing clock edge, an extra one and a stopped clock inside their frames', () => {
    expect(kindSeqs(report, 'clock-missing')).toEqual([at.missingEdge]);
    expect(kindSeqs(report, 'clock-extra')).toEqual([at.extraEdge]);
    expect(kindSeqs(report, 'silence')).toEqual([at.clockStop]);
    const missing = rowOf(report, at.missingEdge)!.anomalies[0];
    expect(missing).toMatchObject({ kind: 'clock-missing', link: null, channel: 'clk', count: 1 });
    // the edge was due one period after the last one that came
    expect(missing.sample).toBe(edgeOf(sc.startBit[at.missingEdge] + 30));
    const extra = rowOf(report, at.extraEdge)!.anomalies[0];
    expect(extra.sample).toBe(edgeOf(sc.startBit[at.extraEdge] + 30) + 2);
    const stop = rowOf(report, at.clockStop)!.anomalies[0];
    expect(stop.kind).toBe('silence');
    expect(Math.round(stop.bits)).toBe(21);
  });

  it('lists a glitch that changed no bit as a good frame with a line anomaly, and one on the idle line as outside', () => {
    const row = rowOf(report, at.harmlessGlitch)!;
    expect(row.status).toBe('ok');
    expect(row.anomalies.map((a) => a.kind)).toEqual(['glitch']);
    expect(report.outside).toHaveLength(1);
    expect(report.outside[0]).toMatchObject({ kind: 'glitch', link: 'a' });
    // within a bit of where the glitch was put on the idle line
    expect(Math.abs(report.outside[0].sample - (LEAD + SPB * sc.idleGlitchBit))).toBeLessThanOrEqual(SPB);
    const glitches = report.anomalyGroups.find((g) => g.kind === 'glitch')!;
    expect(glitches).toMatchObject({ inFrames: 2, outside: 1 });
  });

  it('finds the retransmission that followed each damaged I frame', () => {
    for (const name of ['flip', 'twoFlips', 'abort', 'short', 'residue', 'dataGlitch', 'missingEdge', 'extraEdge', 'clockStop'] as const) {
      const row = rowOf(report, at[name])!;
      expect(row.next?.seq, name).toBe(at[name] + 1);
      expect(row.retransmission, name).toMatchObject({ link: 'a', seq: at[name] + 1, status: 'ok', by: 'ns' });
      expect(row.retransmissionSearch, name).toBe('found');
    }
  });

  it('counts damage over time in bins that add up to the rows', () => {
    const bins = report.bins;
    expect(bins.frames.reduce((a, b) => a + b, 0)).toBe(report.rows.length);
    expect(bins.anomalies.reduce((a, b) => a + b, 0)).toBe(6);
    expect(bins.byCause.residue.reduce((a, b) => a + b, 0)).toBe(4);
    expect(bins.binSeconds).toBeCloseTo(bins.binSamples * PERIOD, 15);
    // damage sits in the bins where its frames are
    const flip = rowOf(report, at.flip)!;
    expect(bins.byCause['bad-fcs-explained'][Math.floor(flip.firstSample / bins.binSamples)]).toBeGreaterThan(0);
  });

  it('gives the same report for any split of the input and with the period given instead of learned', () => {
    const json = JSON.stringify(report);
    expect(JSON.stringify(faultReport(bytes, 99))).toBe(json);
    expect(JSON.stringify(faultReport(bytes, 3, 1 / (SPB * PERIOD)))).toBe(json);
  });
});

describe('fault desk over a decoded call-layer session', () => {
  const tags = new Tags();
  const calls = readFileCalls('PSALMS.TXT', new TextEncoder().encode('Make a joyful noise. '.repeat(20)), { tags, delay: 0.0006 });
  calls[1].damagedRequests = 1;
  calls[2].damagedResponses = 1;
  const script: SessionScript = { bitRate: 800_000, stations: [{ address: 0x21, port: 'p1', start: 0.0002, calls }] };
  const decoded = decodeScript(script, { clocked: true });
  const direction = (link: string) => (link.endsWith('_txd') ? 'request' : 'response') as 'request' | 'response';

  const run = (withCalls: boolean) => {
    const desk = new FaultDesk({ samplePeriodSeconds: decoded.period, callKey: withCalls ? callKeyFromFieldMap(CPM_ENVELOPE, direction) : undefined });
    for (const f of decoded.frames) desk.frame(f);
    return desk.finish();
  };

  it('finds the resent request and the repeated answer, by call and tag when the call layer is known', () => {
    const report = run(true);
    const request = report.rows.find((r) => r.link === 'p1_txd')!;
    const answer = report.rows.find((r) => r.link === 'p1_rxd')!;
    expect(report.rows).toHaveLength(2);
    expect(request.cause).toBe('bad-fcs-explained');
    expect(request.callKey).toBe(`${calls[1].request[0]}:${calls[1].request[1]}`);
    const up = decoded.session.links.find((l) => l.name === 'p1_txd')!;
    const resent = up.frames.find((f) => f.seq > request.seq && !f.damaged && f.kind === 'I')!;
    expect(request.retransmission).toMatchObject({ seq: resent.seq, by: 'call', status: 'ok' });
    const down = decoded.session.links.find((l) => l.name === 'p1_rxd')!;
    const again = down.frames.find((f) => f.seq > answer.seq && f.kind === 'I')!;
    expect(answer.retransmission).toMatchObject({ seq: again.seq, by: 'call' });
    // the poll the server sent in between is the next frame to that station, not the retransmission
    expect(answer.next!.seq).toBeLessThan(again.seq);
  });

  it('falls back to the link layer: the same N(S) from the same station', () => {
    const report = run(false);
    for (const row of report.rows) {
      expect(row.callKey).toBeNull();
      expect(row.retransmission?.by).toBe('ns');
    }
  });
});

describe('retransmission by call layer where the link layer cannot show it', () => {
  it('matches a repeat of the same call and tag sent with the next N(S)', () => {
    const tag = 9;
    const req = (ns: number) => new Uint8Array([0x21, (ns & 7) << 1, ...requestInfo(BDOS.OPEN_FILE, tag, 0, { fcb: { name: 'HYMNS.TXT' } })]);
    const rr = new Uint8Array([0x21, 0x01 | (2 << 5)]);
    const enc = encodeLineBits([
      { kind: 'flags', count: 1 },
      { kind: 'frame', bytes: req(2), faults: { flipBits: [40] } },
      { kind: 'frame', bytes: rr, sharedFlag: true },
      { kind: 'frame', bytes: req(3), sharedFlag: true },
      { kind: 'flags', count: 1 },
    ]);
    const frames = enc.frames.map((f, seq) =>
      checkFrame({ link: 'up', seq, firstSample: f.startBit, lastSample: f.endBit - 1, bytes: f.wire, bitLength: f.bitLength, stuffed: f.stuffedPositions, status: 'ok' }),
    );
    const report = (withCalls: boolean) => {
      const desk = new FaultDesk({ samplePeriodSeconds: 1 / 800_000, lookahead: 2, callKey: withCalls ? callKeyFromFieldMap(CPM_ENVELOPE, () => 'request') : undefined });
      frames.forEach((f) => desk.frame(f));
      return desk.finish().rows[0];
    };
    const linkOnly = report(false);
    expect(linkOnly.next!.seq).toBe(1);
    expect(linkOnly.retransmission).toBeNull();
    expect(linkOnly.retransmissionSearch).toBe('not-found');
    expect(report(true).retransmission).toMatchObject({ seq: 2, by: 'call' });
  });
});

describe('fault desk on a capture without a clock', () => {
  it('finds a glitch on an NRZI data line at the nominal bit rate and attaches it to the frame it hit', () => {
    const spb = 10;
    const enc = encodeLineBits([
      { kind: 'flags', count: 3 },
      { kind: 'frame', bytes: iFrame(0, mixed(10, 4)) },
      { kind: 'flags', count: 3 },
    ]);
    const f = enc.frames[0];
    const glitchAt = 2 * spb + spb * (f.startBit + 40) + 4;
    const w = renderWaveform({
      links: [{ name: 'a', bits: enc.bits }],
      samplesPerBit: spb,
      samplePeriodSeconds: 1e-6,
      encoding: 'nrzi',
      faults: { glitches: [{ channel: 'a', sample: glitchAt, width: 2 }] },
    });
    const bytes = collect(rawChunks(w, { width: 1 }));
    const bitRate = 1 / (spb * 1e-6);
    const desk = new FaultDesk({ samplePeriodSeconds: 1e-6 });
    const dec = createDecoder(
      { format: 'raw', sampleRate: 1e6, channelNames: ['a'], data: ['a'], encoding: 'nrzi', bitRate },
      { frame: (fr) => desk.frame(fr), event: (e) => desk.event(e) },
    );
    dec.push(bytes);
    dec.finish();
    expect(dec.fatal()).toBeNull();
    // the same bytes through a reader into the tap alone, as the pipeline would tap them
    let tap: AnomalyTap | null = null;
    const reader = createReader('raw', { sampleRate: 1e6, channelNames: ['a'], rawWidth: 1 }, {
      header: (_c: ChannelInfo[], period: number) => {
        tap = new AnomalyTap({ samplePeriodSeconds: period, data: [{ channel: 0, link: 'a' }], encoding: 'nrzi', bitRate }, desk);
      },
      transitions: (t: Transitions) => tap!.transitions(t),
    });
    for (const piece of randomSplit(bytes, 5, 300)) reader.push(piece);
    reader.finish();
    tap!.finish();
    const report = desk.finish();
    expect(report.outside).toEqual([]);
    expect(report.rows).toHaveLength(1);
    expect(report.rows[0].seq).toBe(0);
    expect(report.rows[0].anomalies).toHaveLength(1);
    const g = report.rows[0].anomalies[0];
    expect(g).toMatchObject({ kind: 'glitch', link: 'a', channel: 'a' });
    // the pulse splits its bit cell into pieces all shorter than half a bit: the burst spans them, within the one cell
    expect(g.sample).toBeLessThanOrEqual(glitchAt);
    expect(g.endSample).toBeGreaterThanOrEqual(glitchAt + 2);
    expect(g.endSample - g.sample).toBeLessThanOrEqual(spb);
    // NRZI: the line rests at one level before the first flag and after the last; no silence is inside the frame
    expect(report.anomalyGroups.find((g) => g.kind === 'silence')).toMatchObject({ inFrames: 0, outside: 0 });
  });
});

describe('fault desk fed by the decoder pipeline', () => {
  it('gets the same groups and anomalies from createDecoder with the anomaly tap as from the stages by hand', () => {
    const sc = scenario();
    const bytes = capture(sc);
    const byHand = faultReport(bytes, 7);
    const desk = new FaultDesk({ samplePeriodSeconds: PERIOD });
    const decoder = createDecoder({ format: 'vcd', clock: 'clk', data: ['a'], encoding: 'nrz', anomalies: desk }, desk);
    for (const piece of randomSplit(bytes, 11, 4096)) decoder.push(piece);
    decoder.finish();
    expect(decoder.fatal()).toBeNull();
    const viaPipeline = desk.finish();
    const shape = (r: FaultReport) => ({
      groups: r.groups.map((g) => [g.cause, g.count]),
      anomalies: r.anomalyGroups.map((g) => [g.kind, g.inFrames, g.outside]),
    });
    expect(shape(viaPipeline)).toEqual(shape(byHand));
    expect(viaPipeline.anomalyGroups.some((g) => g.inFrames > 0)).toBe(true);
  });
});
