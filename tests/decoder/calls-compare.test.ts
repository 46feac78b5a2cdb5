import { describe, expect, it } from 'vitest';
import { BDOS, CPM_ENVELOPE, type DecodedCall, compareExchanges, pairExchanges, type Exchange } from '../../shared/decoder/calls';
import { directoryCalls, encodeSession, readFileCalls, requestInfo, responseInfo, Tags, type ScriptCall } from '../../shared/decoder/encode';
import { BIT_RATE, framesOfSession } from './calls-helpers';

const hymns = new TextEncoder().encode('04 DEC ADVENT 2: 23, 118, 407\r\n'.repeat(6));
const listing = [
  { name: 'HYMNS.TXT', rc: 2 },
  { name: 'WRENBOOT.SYS', rc: 8, attributes: { system: true } },
];

function exchangesOf(calls: ScriptCall[]) {
  const session = encodeSession({ bitRate: BIT_RATE, stations: [{ address: 0x23, port: 'p3', start: 0.0001, calls }] });
  const { frames, period, roles } = framesOfSession(session);
  return pairExchanges(frames, [], { map: CPM_ENVELOPE, links: roles, samplePeriodSeconds: period }).exchanges;
}

function session(server: 'original' | 'replacement') {
  const tags = new Tags();
  const replacement = server === 'replacement';
  const calls = [
    ...directoryCalls('????????.???', replacement ? listing.slice(0, 1) : listing, { tags, delay: 0.0005 }),
    ...readFileCalls('HYMNS.TXT', hymns, { tags, delay: 0.0005 }),
  ];
  // the replacement takes three times as long to read the second record
  if (replacement) calls.find((c) => c.request[0] === BDOS.READ_SEQUENTIAL && c.request[3 + 32] === 1)!.serverDelay = 0.0015;
  const tag = tags.next();
  calls.push({
    request: requestInfo(BDOS.SELECT_DISK, tag, 0, { extra: new Uint8Array([1]) }),
    response: replacement ? null : responseInfo(BDOS.SELECT_DISK, tag, 0),
    serverDelay: 0.0005,
    sends: 1,
  });
  return exchangesOf(calls);
}

describe('comparing two captures at exchange level', () => {
  it('finds the answer that differs, the slower one, the one not answered and the one only one server saw', () => {
    const { rows, summary } = compareExchanges(session('original'), session('replacement'));
    const notSame = rows.filter((r) => r.kind !== 'same').map((r) => [r.callName, r.kind]);
    expect(notSame).toEqual([
      ['search next', 'answered-differently'], // the replacement hides the system file: 0xFF instead of directory code 1
      ['search next', 'only-in-a'],
      ['read sequential', 'slower'],
      ['select disk', 'outcome-differs'],
    ]);
    const slower = rows.find((r) => r.kind === 'slower')!;
    expect(slower.recordNumber).toBe(1);
    expect(slower.rttDeltaSeconds!).toBeCloseTo(0.001, 5);
    expect(summary).toMatchObject({ answeredDifferently: 1, onlyInA: 1, onlyInB: 0, slower: 1, faster: 0, outcomeDiffers: 1 });
    expect(summary.same).toBe(rows.length - 4);
  });

  it('finds nothing different between a capture and itself', () => {
    const a = session('original');
    const { summary } = compareExchanges(a, a);
    expect(summary.same).toBe(a.length);
    expect(summary.matched).toBe(a.length);
  });
});

describe('comparison thresholds and summary', () => {
  const ex = (station: number, at: number, rtt: number | null, over: Partial<Exchange> = {}): Exchange => {
    const call = { fileName: 'A.B', recordNumber: 1, fields: [{ id: 'status', role: 'status', display: '0' }] } as unknown as DecodedCall;
    return {
      station,
      request: { link: 'x', seq: at },
      requestCall: call,
      retries: [],
      responses: [],
      damagedResponses: [],
      responseCall: rtt === null ? null : call,
      callCode: 20,
      callName: 'read sequential',
      tag: 1,
      recordNumber: 1,
      fileName: 'A.B',
      status: 0,
      statusMeaning: 'ok',
      firstSample: at,
      answeredSendLastSample: at,
      responseFirstSample: null,
      rttSeconds: rtt,
      outcome: rtt === null ? 'unanswered' : 'answered',
      serviceDelaySeconds: null,
      ...over,
    };
  };

  it('calls a round trip slower or faster only past both the relative and the absolute margin', () => {
    const a = [ex(1, 0, 0.001), ex(1, 10, 0.001), ex(1, 20, 0.001), ex(1, 30, 0.001)];
    // +10 % (inside the 20 % margin), +30 % (0.3 ms), +100 %, −50 %; default margins 20 % and 0.2 ms
    const b = [ex(1, 0, 0.0011), ex(1, 10, 0.0013), ex(1, 20, 0.002), ex(1, 30, 0.0005)];
    const kinds = (o?: Parameters<typeof compareExchanges>[2]) => compareExchanges(a, b, o).rows.map((r) => r.kind);
    expect(kinds()).toEqual(['same', 'slower', 'slower', 'faster']);
    expect(kinds({ absolute: 0.0005 })).toEqual(['same', 'same', 'slower', 'same']);
    expect(kinds({ relative: 0.5 })).toEqual(['same', 'same', 'slower', 'same']);
    const { rows, summary } = compareExchanges(a, b);
    expect(rows.map((r) => r.rttDeltaSeconds)).toEqual([0.0011 - 0.001, 0.0013 - 0.001, 0.002 - 0.001, 0.0005 - 0.001]);
    expect(summary).toMatchObject({ matched: 4, same: 1, slower: 2, faster: 1, meanRttA: 0.001 });
    expect(summary.meanRttB).toBeCloseTo((0.0011 + 0.0013 + 0.002 + 0.0005) / 4, 12);
  });

  it('pairs the k-th same request of each capture, lists extra ones as only in one, ordered by station and time', () => {
    const a = [ex(2, 5, 0.001), ex(1, 50, 0.001), ex(1, 70, null)];
    const b = [ex(1, 40, 0.001), ex(2, 3, 0.001), ex(2, 9, 0.001), ex(1, 60, 0.001)];
    const { rows, summary } = compareExchanges(a, b);
    expect(rows.map((r) => [r.station, r.a?.firstSample ?? null, r.b?.firstSample ?? null, r.kind])).toEqual([
      [1, 50, 40, 'same'],
      [1, 70, 60, 'outcome-differs'],
      [2, 5, 3, 'same'],
      [2, null, 9, 'only-in-b'],
    ]);
    expect(rows[1].rttDeltaSeconds).toBeNull();
    expect(summary).toMatchObject({ matched: 3, onlyInA: 0, onlyInB: 1, outcomeDiffers: 1, meanRttA: 0.001, meanRttB: 0.001 });
    expect(compareExchanges([], []).summary).toMatchObject({ matched: 0, meanRttA: null, meanRttB: null });
  });

  it('tells answers apart by every field but the tag', () => {
    const answer = (status: string, tag: string) => ({ fileName: 'A.B', recordNumber: 1, fields: [{ id: 'tag', role: 'tag', display: tag }, { id: 'status', role: 'status', display: status }] }) as unknown as DecodedCall;
    const a = [ex(1, 0, 0.001, { responseCall: answer('0', '7') })];
    expect(compareExchanges(a, [ex(1, 0, 0.001, { responseCall: answer('0', '9') })]).rows[0].kind).toBe('same');
    expect(compareExchanges(a, [ex(1, 0, 0.001, { responseCall: answer('1', '7') })]).rows[0].kind).toBe('answered-differently');
  });
});

describe('comparison margins at their edges (binary fractions, so the sums are exact)', () => {
  const ex = (at: number, rtt: number | null, answer = '0'): Exchange =>
    ({
      station: 1,
      request: { link: 'x', seq: at },
      requestCall: { fileName: 'A.B', recordNumber: at },
      responseCall: rtt === null ? null : { fields: [{ id: 'status', role: 'status', display: answer }] },
      callCode: 20,
      callName: 'read random',
      fileName: 'A.B',
      recordNumber: at,
      firstSample: at,
      rttSeconds: rtt,
      outcome: rtt === null ? 'unanswered' : 'answered',
    }) as unknown as Exchange;

  it('calls a round trip slower only when it is more than the absolute margin longer, not when it is exactly that', () => {
    // 0.5 s → 0.625 s: 0.125 s longer, 25 % (past the 10 % relative margin)
    const at = (absolute: number) => compareExchanges([ex(1, 0.5)], [ex(1, 0.625)], { absolute, relative: 0.1 }).rows[0].kind;
    expect(at(0.125)).toBe('same');
    expect(at(0.0625)).toBe('slower');
  });

  it('calls a round trip faster only when it is more than the relative margin shorter, not when it is exactly that', () => {
    // 0.5 s → 0.375 s: 0.125 s = 25 % shorter (past the 0.01 s absolute margin)
    const at = (relative: number) => compareExchanges([ex(1, 0.5)], [ex(1, 0.375)], { absolute: 0.01, relative }).rows[0].kind;
    expect(at(0.25)).toBe('same');
    expect(at(0.125)).toBe('faster');
  });

  it('gives the round-trip difference of two answered exchanges even when their answers differ', () => {
    const { rows } = compareExchanges([ex(1, 0.5, '0')], [ex(1, 0.75, '255')]);
    expect(rows.map((r) => [r.kind, r.rttDeltaSeconds])).toEqual([['answered-differently', 0.25]]);
  });

  it('pairs requests by their own file, so another file is another request', () => {
    const named = (at: number, file: string) => {
      const e = ex(at, 0.5);
      return { ...e, fileName: file, requestCall: { ...e.requestCall, fileName: file } } as Exchange;
    };
    expect(compareExchanges([named(1, 'A.B')], [named(1, 'C.D')]).rows.map((r) => [r.kind, r.fileName])).toEqual([
      ['only-in-a', 'A.B'],
      ['only-in-b', 'C.D'],
    ]);
  });

  it('calls two unanswered sends of the same request the same, with no round-trip difference', () => {
    expect(compareExchanges([ex(1, null)], [ex(1, null)]).rows.map((r) => [r.kind, r.rttDeltaSeconds])).toEqual([['same', null]]);
  });

  it('tells apart answers whose fields would read alike run together', () => {
    const answer = (fields: { id: string; display: string }[]) => ({ ...ex(1, 0.5), responseCall: { fields } }) as unknown as Exchange;
    const a = answer([{ id: 'x', display: '1' }, { id: 'y', display: '2' }]);
    const b = answer([{ id: 'x', display: '1y=2' }]);
    expect(compareExchanges([a], [b]).rows[0].kind).toBe('answered-differently');
  });

  it('pairs the k-th send of a request in time order whatever order the lists come in, and lists rows by time', () => {
    const { rows } = compareExchanges([ex(1, 0.5), ex(1, 0.5)].map((e, k) => ({ ...e, firstSample: 20 - 10 * k, request: { link: 'x', seq: k } })), [
      { ...ex(1, 0.5), firstSample: 11 },
      { ...ex(1, 0.75), firstSample: 21 },
      { ...ex(9, 0.5), firstSample: 5 },
      { ...ex(8, 0.5), firstSample: 3 },
    ]);
    expect(rows.map((r) => [r.a?.firstSample ?? null, r.b?.firstSample ?? null, r.kind])).toEqual([
      [null, 3, 'only-in-b'],
      [null, 5, 'only-in-b'],
      [10, 11, 'same'],
      [20, 21, 'slower'],
    ]);
  });

  it('pairs requests by their own file and record, so another record is another request', () => {
    const { rows } = compareExchanges([ex(1, 0.5)], [ex(2, 0.5)]);
    expect(rows.map((r) => [r.kind, r.recordNumber])).toEqual([
      ['only-in-a', 1],
      ['only-in-b', 2],
    ]);
  });
});
