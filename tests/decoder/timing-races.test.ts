// Race signatures in the fault desk: transmitter under-runs at their octet offsets (FCS- or
// abort-ended, with and without the fragment that follows), receiver over-run symptoms, octet
// timing from a stretched clock, and the budget line.
import { describe, expect, it } from 'vitest';
import { checkFrame, Deframer, type DecodedFrame } from '../../shared/decoder';
import type { Exchange } from '../../shared/decoder/calls';
import { type EpisodeScript, type Underrun, encodeLineBits, randomFrame, seededRng, type LineItem } from '../../shared/decoder/encode';
import { describeRace, FaultDesk, findOverruns, type FaultRow, type OverrunDetail, type UnderrunDetail } from '../../shared/decoder/faults';
import { decodeEpisode, RATE, THREE_STATIONS, writeCalls } from './timing-helpers';

const cutRows = (rows: FaultRow[]) => rows.filter((r) => r.cause === 'tx-underrun');

/** the record of a write request starts at octet 41 (address, control, call, tag, user, 36-octet FCB) and ends at 169 */
const RECORD_FROM = 41;
const FRAME_OCTETS = 169;

describe('transmitter under-runs', () => {
  it('finds every injected under-run at its octet offset with the right end, in requests and answers, per-port and multidrop', () => {
    const rng = seededRng(1983);
    for (let trial = 0; trial < 10; trial++) {
      const script = THREE_STATIONS(rng() < 0.5 ? 'per-port' : 'multidrop');
      const end: Underrun['end'] = rng() < 0.5 ? 'fcs' : 'abort';
      const fragment = rng() < 0.7;
      // without a fragment, a cut that checks good shows only when it ends inside a field: cut in the record
      const atOctet = end === 'fcs' && !fragment ? RECORD_FROM + 1 + Math.floor(rng() * 120) : 4 + Math.floor(rng() * (FRAME_OCTETS - 5));
      const st = script.stations[Math.floor(rng() * 3)];
      const call = st.calls[Math.floor(rng() * st.calls.length)];
      const inAnswer = call.request[0] === 20; // reads carry their record in the answer
      if (inAnswer) call.responseUnderrun = { atOctet: Math.min(atOctet, 2 + call.response!.length - 1), end, fragment };
      else call.underrun = { atOctet, end, fragment };
      const d = decodeEpisode(script);
      const label = `trial ${trial}: ${script.wiring}, ${inAnswer ? 'answer' : 'request'} of 0x${st.address.toString(16)} cut at ${atOctet}, ${end}${fragment ? ' + fragment' : ''}`;
      expect(d.episode.underruns, label).toHaveLength(1);
      const u = d.episode.underruns[0];
      const rows = cutRows(d.faults.rows);
      expect(rows.map((r) => [r.link, r.seq]), label).toEqual([[u.link, u.seq]]);
      const race = rows[0].race as UnderrunDetail;
      expect(race.octetOffset, label).toBe(u.atOctet);
      expect(race.end, label).toBe(u.end);
      expect(rows[0].status, label).toBe(end === 'fcs' ? 'ok' : 'abort');
      expect(race.fragment, label).toEqual(u.fragmentSeq === null ? null : { link: u.link, seq: u.fragmentSeq });
      const frags = d.faults.rows.filter((r) => r.cause === 'underrun-fragment');
      expect(frags.map((r) => r.seq), label).toEqual(u.fragmentSeq === null ? [] : [u.fragmentSeq]);
      if (fragment) expect(race.evidence, label).toContain('rejoins');
      expect(d.faults.races.underruns.offsets, label).toEqual([{ offset: u.atOctet, count: 1 }]);
      // nothing else on the line is taken for a race
      expect(d.faults.rows.filter((r) => r.race !== null && r.cause !== 'tx-underrun' && r.cause !== 'underrun-fragment'), label).toEqual([]);
    }
  });

  it('says where in the layout a cut request stopped: the record field holds fewer than 128 octets', () => {
    const script = THREE_STATIONS('per-port');
    script.stations[0].calls[1].underrun = { atOctet: 100, end: 'fcs', fragment: false };
    const d = decodeEpisode(script);
    const [row] = cutRows(d.faults.rows);
    expect(row.race).toMatchObject({ octetOffset: 100, expectedOctets: FRAME_OCTETS, field: 'record', fieldOctets: { present: 100 - RECORD_FROM, length: 128 }, evidence: ['layout'], fragment: null });
    expect(describeRace(row.race!, d.faults.races.budget)).toMatch(/Cut short after 100 octets of the 169 its layout needs \(field “record” holds 59 of 128 octets\) and closed with a valid FCS — 1000\.0 µs into the frame at 10\.00 µs per octet/);
    // the station sent the whole request again: the retransmission of the same call and tag
    expect(row.retransmissionSearch).toBe('found');
    // and the exchange takes its record from that whole retry, not from the cut first send
    const ex = d.exchanges.find((x) => x.request.link === row.link && x.request.seq === row.seq)!;
    expect(ex.outcome).toBe('retried');
    expect(ex.requestCall.recordData).toEqual(script.stations[0].calls[1].request.subarray(39));
  });

  it('finds no race in an episode without any', () => {
    const d = decodeEpisode({ ...THREE_STATIONS('multidrop'), skips: [{ station: 0x32, rounds: 2 }] });
    expect(d.faults.rows).toEqual([]);
    expect(d.faults.races.underruns.count).toBe(0);
    expect(d.faults.races.overruns.count).toBe(0);
  });

  it('shows under-runs striking at one offset as the peak of the offset histogram', () => {
    const script = THREE_STATIONS('per-port');
    script.stations[0].calls = writeCalls(6, 0.001, 0.002);
    script.stations[0].calls.forEach((c, k) => (c.underrun = { atOctet: k < 4 ? 120 : 60 + k, end: k % 2 ? 'abort' : 'fcs' }));
    const d = decodeEpisode(script);
    const u = d.faults.races.underruns;
    expect(u.count).toBe(6);
    expect(u.endedWithAbort).toBe(3);
    expect(u.offsets).toEqual([
      { offset: 64, count: 1 },
      { offset: 65, count: 1 },
      { offset: 120, count: 4 },
    ]);
    expect(u.recurring).toEqual({ offset: 120, count: 4, share: 4 / 6 });
  });

  /** frames of one link from line items, decoded by the deframer and FCS stage (sample = line bit) */
  function deframed(items: LineItem[]): DecodedFrame[] {
    const { bits } = encodeLineBits(items);
    const out: DecodedFrame[] = [];
    const d = new Deframer('a', { frame: (f) => out.push(checkFrame(f)), event: () => {} });
    d.push({ bits, samples: Float64Array.from(bits, (_, i) => i), n: bits.length });
    d.finish();
    return out;
  }

  it('without a field map: aborts recurring at one offset are under-runs, a lone abort stays an abort', () => {
    const rng = seededRng(7);
    const items: LineItem[] = [{ kind: 'flags', count: 2 }];
    const frame = (faults?: { abortAfterBits: number }) => {
      const bytes = randomFrame(rng, 60);
      bytes[0] = 0x05;
      while (bytes.length < 40) return frame(faults);
      items.push({ kind: 'frame', bytes, faults }, { kind: 'flags', count: 3 });
    };
    for (let k = 0; k < 4; k++) frame();
    frame({ abortAfterBits: 8 * 33 });
    frame();
    frame({ abortAfterBits: 8 * 33 });
    frame({ abortAfterBits: 8 * 12 });
    frame();
    const desk = new FaultDesk({ samplePeriodSeconds: 1 / RATE });
    for (const f of deframed(items)) desk.frame(f);
    const report = desk.finish();
    expect(report.rows.map((r) => [r.cause, r.race?.kind === 'tx-underrun' ? r.race.octetOffset : null])).toEqual([
      ['tx-underrun', 33],
      ['tx-underrun', 33],
      ['abort', null],
    ]);
    expect((report.rows[0].race as UnderrunDetail).evidence).toEqual(['recurring-offset']);
    // the budget line from the frames' own bit times: one sample per bit at 800 kbit/s
    expect(report.races.budget!.source).toBe('frames');
    expect(report.races.budget!.cyclesPerOctet).toBeCloseTo(40, 9);
  });

  it('without a field map: a good frame followed at once by a frame of a foreign address is cut, the second its fragment', () => {
    const own = (n: number) => Uint8Array.from({ length: n }, (_, i) => (i === 0 ? 0x05 : i === 1 ? 0x10 : (i * 37) & 0xff));
    const whole = own(60);
    const items: LineItem[] = [{ kind: 'flags', count: 2 }];
    for (let k = 0; k < 3; k++) items.push({ kind: 'frame', bytes: own(50) }, { kind: 'flags', count: 2 });
    items.push({ kind: 'frame', bytes: whole.subarray(0, 22) }, { kind: 'frame', bytes: whole.subarray(22), sharedFlag: true }, { kind: 'flags', count: 4 });
    items.push({ kind: 'frame', bytes: own(50) }, { kind: 'flags', count: 2 });
    const desk = new FaultDesk({ samplePeriodSeconds: 1 / RATE });
    for (const f of deframed(items)) desk.frame(f);
    const report = desk.finish();
    expect(report.rows.map((r) => [r.seq, r.cause])).toEqual([
      [3, 'tx-underrun'],
      [4, 'underrun-fragment'],
    ]);
    expect(report.rows[0].race).toMatchObject({ end: 'fcs', octetOffset: 22, evidence: ['fragment'], fragment: { link: 'a', seq: 4 } });
  });
});

describe('receiver over-run symptoms', () => {
  it('finds a request lost in the server although it crossed the line intact, and an error answer that went away', () => {
    const script = THREE_STATIONS('per-port');
    script.stations[0].calls[1].overrun = { lost: 1 };
    script.stations[0].calls[2].overrun = { lost: 1 };
    script.stations[2].calls[0].overrun = { errorStatus: 2 };
    const d = decodeEpisode(script);
    const rows = d.faults.rows.filter((r) => r.cause === 'rx-overrun');
    const details = rows.map((r) => r.race as OverrunDetail);
    expect(details).toHaveLength(3);
    const byStation = (a: number) => details.filter((x) => x.station === a);
    expect(byStation(0x31).map((x) => x.symptom)).toEqual(['retried-clean', 'retried-clean']);
    expect(byStation(0x33)).toMatchObject([{ symptom: 'error-answer', status: 2, callName: 'write sequential' }]);
    // the two lost requests are writes of one size: the symptom repeats at that size
    expect(byStation(0x31).every((x) => x.sameSize >= 2 && x.requestOctets === 167)).toBe(true);
    expect(d.faults.races.overruns).toMatchObject({ count: 3, bySymptom: { 'error-answer': 1, 'retried-clean': 2, 'unanswered-clean': 0 }, repeating: true });
    expect(d.faults.races.overruns.bySize[0]).toEqual({ octets: 167, count: 3 });
  });

  it('does not take a retry for an over-run when a frame of the exchange was damaged on the wire', () => {
    const e = {
      station: 7,
      request: { link: 'up', seq: 1 },
      retries: [{ link: 'up', seq: 3 }],
      responses: [{ link: 'down', seq: 2 }],
      requestCall: { fields: [{ offset: 0, available: 40 }], unexplained: 0, fileName: 'X.DAT', recordNumber: 3 },
      callCode: 21,
      callName: 'write sequential',
      fileName: 'X.DAT',
      recordNumber: 3,
      status: 0,
      firstSample: 100,
      answeredSendLastSample: 300,
      responseFirstSample: 400,
      outcome: 'retried',
    } as unknown as Exchange;
    expect(findOverruns([e], () => false).map((o) => o.detail.symptom)).toEqual(['retried-clean']);
    expect(findOverruns([e], (station, from, to) => station === 7 && from <= 250 && 250 <= to)).toEqual([]);
  });
});

describe('octet timing', () => {
  it('reports stretched clock periods inside a good frame at the octet where they struck, with the clock spread and the budget', () => {
    const script: EpisodeScript = THREE_STATIONS('per-port');
    const probe = decodeEpisode(script);
    // the request of station 0x31's first call: stretch the clock at its octet 50 (no stuffing before it: text and FCB)
    const req = probe.episode.links.find((l) => l.name === 'p1_txd')!.frames.find((f) => f.role === 'request')!;
    const bit = req.startBit + 8 * 50 + 3;
    const d = decodeEpisode(script, { faults: { stretchedClock: [{ bit, by: 0.4 }] } });
    const rows = d.faults.rows.filter((r) => r.cause === 'octet-timing');
    expect(rows.map((r) => [r.link, r.seq])).toEqual([['p1_txd', req.seq]]);
    expect(rows[0].race).toMatchObject({ kind: 'octet-timing', stretched: 1, missing: 0, octets: [50] });
    expect((rows[0].race as { longestBits: number }).longestBits).toBeCloseTo(1.4, 1);
    const clock = d.faults.races.octetTiming.clock!;
    expect(clock.stretched).toBe(1);
    expect(clock.medianSeconds).toBeCloseTo(1 / RATE, 9);
    expect(clock.maxSeconds).toBeCloseTo(1.4 / RATE, 9);
    expect(d.faults.races.budget).toMatchObject({ source: 'clock', cpuHz: 4_000_000 });
    expect(d.faults.races.budget!.cyclesPerOctet).toBeCloseTo(40, 6);
    // and nothing is damaged: the bits were all sampled as sent
    expect(d.frames.every((f) => f.status === 'ok')).toBe(true);
  });
});
