import { describe, expect, it } from 'vitest';
import { BDOS, CPM_ENVELOPE } from '../../shared/decoder/calls/cpm-envelope';
import { compareExchanges, pairExchanges } from '../../shared/decoder/calls/exchanges';
import { directoryCalls, encodeSession, readFileCalls, requestInfo, responseInfo, Tags, type ScriptCall } from '../../shared/decoder/encode/calls';
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
