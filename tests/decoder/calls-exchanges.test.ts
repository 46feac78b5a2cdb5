import { describe, expect, it } from 'vitest';
import { type DecodedCall, BDOS, CPM_ENVELOPE, CPM_ENVELOPE_DOCUMENT, CallLayer, callLayerRoles, ExchangeTracker, pairExchanges, type CallFrame, type Exchange, parseFieldMap, type FieldMapInput } from '../../shared/decoder/calls';
import { handshakeRoleSchema, linkRoleSchema } from '../../shared/schemas/captures';
import { bootCalls, directoryCalls, readFileCalls, readRandomCalls, requestInfo, Tags, type SessionScript } from '../../shared/decoder/encode';
import { BIT_RATE, decodeScript, framesOfSession, pairDecoded, type DecodedSession } from './calls-helpers';
import { checkFrame, type DecodedFrame } from '../../shared/decoder';
import { encodeLineBits, responseInfo } from '../../shared/decoder/encode';

const BIT = 1 / BIT_RATE;
const text = (n: number) => new TextEncoder().encode('The Lord is my shepherd. '.repeat(Math.ceil(n / 25)).slice(0, n));

/** Two stations, one with RTS; delays from 0.3 to 3 ms, a damaged request, a lost answer, an unanswered call. */
function script(): SessionScript {
  const t1 = new Tags();
  const t2 = new Tags();
  const reg = [
    ...bootCalls('WRENBOOT.SYS', text(300), { tags: t1, delay: 0.0007 }),
    ...directoryCalls('????????.???', [{ name: 'HYMNS.TXT', rc: 3 }, { name: 'BAPTISMS.DAT', rc: 9, attributes: { readOnly: true } }], { tags: t1, delay: 0.0013 }),
  ];
  reg[1].damagedRequests = 1;
  reg[2].damagedResponses = 1;
  reg[4].serverDelay = 0.0031;
  const tag = t1.next();
  reg.push({ request: requestInfo(BDOS.SELECT_DISK, tag, 0, { extra: new Uint8Array([1]) }), response: null, serverDelay: 0, sends: 2 });
  const choir = readFileCalls('HYMNS.TXT', text(200), { tags: t2, delay: 0.0004 });
  choir[2].serverDelay = 0.0019;
  return {
    bitRate: BIT_RATE,
    stations: [
      { address: 0x21, port: 'p1', start: 0.0002, rts: true, calls: reg },
      { address: 0x23, port: 'p3', start: 0.0005, calls: choir },
    ],
  };
}

function checkAgainstScript(d: DecodedSession, exchanges: Exchange[], rttTolerance: number) {
  const expected = d.session.exchanges;
  expect(exchanges).toHaveLength(expected.length);
  for (const want of expected) {
    const got = exchanges.find((e) => e.request.link === want.link && e.request.seq === want.requestSeq);
    expect(got, `exchange of station ${want.station} at request ${want.requestSeq}`).toBeDefined();
    expect(got!.callCode).toBe(want.callCode);
    expect(got!.tag).toBe(want.tag);
    expect(got!.outcome).toBe(want.outcome);
    expect(got!.retries).toHaveLength(want.goodSends - 1);
    expect(got!.responses[0]?.seq ?? null).toBe(want.responseSeq);
    if (want.delaySeconds === null) expect(got!.rttSeconds).toBeNull();
    else expect(Math.abs(got!.rttSeconds! - want.delaySeconds)).toBeLessThanOrEqual(rttTolerance);
    if (want.serviceDelaySeconds === null) expect(got!.serviceDelaySeconds).toBeNull();
    else expect(Math.abs(got!.serviceDelaySeconds! - want.serviceDelaySeconds)).toBeLessThanOrEqual(rttTolerance);
  }
}

describe('exchanges on encoded sessions with known delays, retries and drops', () => {
  it('pairs every exchange of a clocked capture, each round trip within one bit time of the encoded delay', () => {
    const d = decodeScript(script(), { clocked: true });
    const { exchanges, orphans } = pairDecoded(d);
    expect(orphans).toEqual([]);
    checkAgainstScript(d, exchanges, BIT);
    const outcomes = exchanges.map((e) => e.outcome);
    expect(outcomes.filter((o) => o === 'retried')).toHaveLength(1);
    expect(outcomes.filter((o) => o === 'unanswered')).toHaveLength(1);
  });

  it('pairs every exchange of a capture without a clock (jitter 0.15 bit), round trips within one bit time', () => {
    const d = decodeScript(script(), { clocked: false, faults: { jitter: 0.15, seed: 4 } });
    expect(d.frames.filter((f) => f.status !== 'ok')).toHaveLength(2); // the damaged request and the lost answer
    const { exchanges } = pairDecoded(d);
    checkAgainstScript(d, exchanges, BIT);
  });

  // ISO/IEC 13239:2002 (from memory): a 0 is stuffed after five 1s, the FCS included, so some
  // requests end in a stuffed 0 and some do not; the round trip must not depend on it.
  it('times a round trip from the request’s last FCS bit whether or not a zero was stuffed after it', () => {
    const tags = new Tags();
    const calls = readRandomCalls('PARISH.DAT', text(128 * 4), Array.from({ length: 120 }, (_, i) => (i * 7) % 4), { tags, delay: 0.0003 });
    const d = decodeScript({ bitRate: BIT_RATE, stations: [{ address: 0x22, port: 'p2', start: 0.0001, calls }] }, { clocked: true });
    const up = d.session.links.find((l) => l.direction === 'to-server')!;
    const endsStuffed = (seq: number) => up.frames[seq].lastBit !== up.frames[seq].endBit - 1;
    const { exchanges } = pairDecoded(d);
    expect(exchanges).toHaveLength(120);
    const kinds = new Set(exchanges.map((e) => endsStuffed(e.request.seq)));
    expect(kinds).toEqual(new Set([true, false]));
    for (const e of exchanges) expect(e.rttSeconds).toBeCloseTo(0.0003, 9);
  });

  it('lists a damaged answer that the station answered with a retry with its exchange', () => {
    const d = decodeScript(script(), { clocked: true });
    const { exchanges } = pairDecoded(d);
    const down = d.session.links.find((l) => l.station === 0x21 && l.direction === 'from-server')!;
    const damagedAnswers = down.frames.filter((f) => f.damaged && f.kind === 'I').map((f) => ({ link: down.name, seq: f.seq }));
    expect(damagedAnswers).toHaveLength(1);
    const retried = exchanges.filter((e) => e.outcome === 'retried');
    expect(retried).toHaveLength(1);
    expect(retried[0].damagedResponses).toEqual(damagedAnswers);
    expect(exchanges.filter((e) => e !== retried[0]).every((e) => e.damagedResponses.length === 0)).toBe(true);
  });

  it('measures the service delay from RTS rising to the server’s poll', () => {
    const d = decodeScript(script(), { clocked: true });
    const { serviceDelays } = pairDecoded(d);
    const polls = d.session.exchanges.filter((e) => e.station === 0x21);
    expect(serviceDelays).toHaveLength(polls.length);
    for (const s of serviceDelays) expect(Math.abs(s.seconds - 0.0005)).toBeLessThanOrEqual(BIT);
  });

  it('measures each station’s service delay on a multidrop line, where RTS lines name stations, not links', () => {
    const a = readFileCalls('HYMNS.TXT', text(300), { tags: new Tags(), delay: 0.0004 });
    const b = readFileCalls('PSALMS.TXT', text(200), { tags: new Tags(), delay: 0.0006 });
    const d = decodeScript(
      {
        bitRate: BIT_RATE,
        stations: [
          { address: 0x31, port: 'm', rtsName: 'm_rts_31', start: 0.0001, rts: true, calls: a },
          { address: 0x32, port: 'm', rtsName: 'm_rts_32', start: 0.03, rts: true, calls: b },
        ],
      },
      { clocked: true },
    );
    expect(d.session.links.map((l) => [l.name, l.station])).toEqual([
      ['m_txd', null],
      ['m_rxd', null],
    ]);
    // the channel-role form's shapes: shared data lines without a station, one RTS per station
    const { links, rts } = callLayerRoles({
      links: [
        linkRoleSchema.parse({ channel: 'm_txd', direction: 'to-server' }),
        linkRoleSchema.parse({ channel: 'm_rxd', direction: 'from-server' }),
      ],
      handshake: [
        handshakeRoleSchema.parse({ channel: 'm_rts_31', name: 'RTS', stationAddress: 0x31 }),
        handshakeRoleSchema.parse({ channel: 'm_rts_32', name: 'RTS', stationAddress: 0x32 }),
      ],
    });
    expect(rts).toEqual([
      { channel: 'm_rts_31', station: 0x31 },
      { channel: 'm_rts_32', station: 0x32 },
    ]);
    const { exchanges, serviceDelays } = pairExchanges(d.frames, d.events, { map: CPM_ENVELOPE, links, rts, samplePeriodSeconds: d.period });
    checkAgainstScript(d, exchanges, BIT);
    for (const station of [0x31, 0x32]) {
      const delays = serviceDelays.filter((x) => x.station === station);
      expect(delays).toHaveLength(d.session.exchanges.filter((e) => e.station === station).length);
      // the encoder polls 0.5 ms after RTS rises (SessionScript.pollDelay default)
      for (const x of delays) expect(Math.abs(x.seconds - 0.0005)).toBeLessThanOrEqual(BIT);
    }
  });

  it('marks a request unanswered when no response comes within the timeout', () => {
    const { session } = decodeScript(script(), { clocked: true });
    const fast = framesOfSession(session);
    const { exchanges, orphans } = pairExchanges(fast.frames, [], { map: CPM_ENVELOPE, links: fast.roles, samplePeriodSeconds: fast.period, timeoutSeconds: 0.0005 });
    // with a 0.5 ms timeout every answer slower than that is too late, and its response an orphan
    const slow = session.exchanges.filter((e) => e.delaySeconds !== null && e.delaySeconds > 0.0005);
    expect(slow.length).toBeGreaterThan(3);
    const byRequest = (e: (typeof session.exchanges)[number]) => exchanges.find((x) => x.request.link === e.link && x.request.seq === e.requestSeq)!;
    for (const want of session.exchanges) {
      const got = byRequest(want);
      const inTime = want.delaySeconds !== null && want.delaySeconds <= 0.0005;
      expect(got.outcome === 'unanswered', `request ${want.link} #${want.requestSeq}`).toBe(!inTime);
    }
    expect(exchanges.filter((e) => e.rttSeconds !== null).every((e) => e.rttSeconds! <= 0.0005)).toBe(true);
    const down = (e: (typeof slow)[number]) => session.links.find((l) => l.station === e.station && l.direction === 'from-server')!.name;
    expect(orphans.map((o) => o.ref).sort((a, b) => a.link.localeCompare(b.link) || a.seq - b.seq)).toEqual(
      slow.map((e) => ({ link: down(e), seq: e.responseSeq! })).sort((a, b) => a.link.localeCompare(b.link) || a.seq - b.seq),
    );
  });
});

// ---- the pairing rules on hand-made call frames ----

const period = 1e-6; // 1 µs per sample
function callOf(code: number, tag: number | null, direction: 'request' | 'response'): DecodedCall {
  return {
    direction,
    layout: 'x',
    callCode: code,
    callName: null,
    tag,
    user: 0,
    fileName: null,
    attributes: null,
    recordNumber: null,
    extent: null,
    module: null,
    recordCount: null,
    fileSize: null,
    status: direction === 'response' ? 0 : null,
    statusMeaning: null,
    recordData: null,
    fields: [],
    truncated: false,
    unexplained: 0,
    problems: [],
  };
}
let seq = 0;
const req = (at: number, code: number, tag: number | null, station = 1): CallFrame => ({
  ref: { link: 'up', seq: seq++ },
  station,
  direction: 'to-server',
  firstSample: at,
  lastSample: at + 100,
  call: callOf(code, tag, 'request'),
});
const resp = (at: number, code: number, tag: number | null, station = 1): CallFrame => ({
  ref: { link: 'down', seq: seq++ },
  station,
  direction: 'from-server',
  firstSample: at,
  lastSample: at + 100,
  call: callOf(code, tag, 'response'),
});
function run(frames: CallFrame[], byTag = true, timeoutSeconds = 0.5) {
  const exchanges: Exchange[] = [];
  const orphans: CallFrame[] = [];
  const t = new ExchangeTracker({ samplePeriodSeconds: period, timeoutSeconds, byTag }, { exchange: (e) => exchanges.push(e), orphan: (f) => orphans.push(f) });
  for (const f of frames) t.push(f);
  t.finish();
  return { exchanges: exchanges.sort((a, b) => a.firstSample - b.firstSample), orphans };
}

describe('pairing rules', () => {
  it('pairs out-of-order responses by tag', () => {
    const { exchanges } = run([req(0, 20, 1), req(200, 20, 2), resp(400, 20, 2), resp(600, 20, 1)]);
    expect(exchanges.map((e) => [e.tag, e.rttSeconds])).toEqual([
      [1, (600 - 100) * period],
      [2, (400 - 300) * period],
    ]);
  });

  it('counts the same call and tag sent again before the answer as a retry, timed from the last send', () => {
    const { exchanges } = run([req(0, 20, 7), req(5000, 20, 7), resp(6000, 20, 7)]);
    expect(exchanges).toHaveLength(1);
    expect(exchanges[0]).toMatchObject({ outcome: 'retried', rttSeconds: (6000 - 5100) * period });
    expect(exchanges[0].retries).toHaveLength(1);
  });

  it('closes a request unanswered after the timeout; the same tag later opens a new exchange', () => {
    const { exchanges } = run([req(0, 20, 7), req(600_000, 20, 7), resp(600_500, 20, 7)]);
    expect(exchanges.map((e) => e.outcome)).toEqual(['unanswered', 'answered']);
  });

  it('adds a second answer to an answered exchange, and reports an answer nobody asked for', () => {
    const { exchanges, orphans } = run([req(0, 15, 3), resp(500, 15, 3), resp(900, 15, 3), resp(1200, 16, 9)]);
    expect(exchanges[0].responses).toHaveLength(2);
    expect(orphans.map((o) => o.call!.callCode)).toEqual([16]);
  });

  it('pairs in order per call code when the map has no tag', () => {
    const answer33 = resp(300, 33, null);
    const answer20 = resp(400, 20, null);
    const { exchanges } = run([req(0, 20, null), req(150, 33, null), answer33, answer20], false);
    // each request gets the answer of its own call code, not the next answer in time
    expect(exchanges.map((e) => [e.callCode, e.responses])).toEqual([
      [20, [answer20.ref]],
      [33, [answer33.ref]],
    ]);
    expect(exchanges.map((e) => e.rttSeconds)).toEqual([(400 - 100) * period, (300 - 250) * period]);
  });

  const damaged = (at: number, guess: DecodedCall | null, station = 1): CallFrame => ({
    ref: { link: 'down', seq: seq++ },
    station,
    direction: 'from-server',
    firstSample: at,
    lastSample: at + 100,
    call: null,
    damagedCall: guess,
  });

  it('gives a damaged answer to the waiting exchange its damaged bytes name, once the station retries', () => {
    const bad = damaged(500, callOf(20, 2, 'response'));
    const { exchanges } = run([req(0, 20, 1), req(200, 20, 2), bad, req(5000, 20, 2), resp(5500, 20, 2), resp(5800, 20, 1)]);
    expect(exchanges.map((e) => [e.tag, e.outcome, e.damagedResponses])).toEqual([
      [1, 'answered', []],
      [2, 'retried', [bad.ref]],
    ]);
  });

  it('gives an unreadable damaged answer to the only waiting exchange, and none when no retry follows', () => {
    const lost = damaged(300, null);
    const first = run([req(0, 20, 1), lost, req(5000, 20, 1), resp(5500, 20, 1)]).exchanges;
    expect(first[0].damagedResponses).toEqual([lost.ref]);
    // answered without a retry: the damaged frame is not why anything was sent again
    const second = run([req(0, 20, 1), damaged(300, null), resp(5500, 20, 1)]).exchanges;
    expect(second[0]).toMatchObject({ outcome: 'answered', damagedResponses: [] });
    // two waiting and nothing readable in the damaged frame: no guess
    const third = run([req(0, 20, 1), req(100, 33, 2), damaged(300, null), req(5000, 20, 1), req(5100, 33, 2)]).exchanges;
    expect(third.map((e) => e.damagedResponses)).toEqual([[], []]);
  });

  it('keeps stations apart', () => {
    const { exchanges, orphans } = run([req(0, 20, 1, 0x21), resp(300, 20, 1, 0x22)]);
    expect(exchanges[0].outcome).toBe('unanswered');
    expect(orphans).toHaveLength(1);
  });

  it('pairs without tags through the call layer when the map defines none', () => {
    const doc: FieldMapInput = JSON.parse(JSON.stringify(CPM_ENVELOPE_DOCUMENT));
    for (const l of doc.layouts) for (const f of l.fields) if (f.role === 'tag') delete f.role;
    const map = parseFieldMap(doc);
    const { session } = decodeScript(script(), { clocked: true });
    const fast = framesOfSession(session);
    const { exchanges } = pairExchanges(fast.frames, [], { map, links: fast.roles, samplePeriodSeconds: fast.period });
    // the same requests as by tag, each with its own answer (the encoded session says which)
    const got = exchanges.map((e) => [e.request.link, e.request.seq, e.callCode, e.outcome, e.responses[0]?.seq ?? null]);
    const want = session.exchanges.map((e) => [e.link, e.requestSeq, e.callCode, e.outcome, e.responseSeq]);
    const order = (a: (string | number | null)[], b: (string | number | null)[]) => String(a[0]).localeCompare(String(b[0])) || Number(a[1]) - Number(b[1]);
    expect(got.sort(order)).toEqual(want.sort(order));
    expect(exchanges.every((e) => e.tag === null)).toBe(true);
  });
});

describe('timing edges and pairing without tags', () => {
  it('keeps a request open for exactly the timeout after its last send, and no sample longer', () => {
    // 100 samples of 1 µs: a response whose first bit is 100 samples after the send's last bit still answers it
    const inTime = run([req(0, 20, 1), resp(200, 20, 1)], true, 100e-6).exchanges;
    expect(inTime.map((e) => e.outcome)).toEqual(['answered']);
    const late = run([req(0, 20, 1), resp(201, 20, 1)], true, 100e-6);
    expect(late.exchanges.map((e) => e.outcome)).toEqual(['unanswered']);
    expect(late.orphans).toHaveLength(1);
  });

  it('ends an answered exchange when the station reuses its tag, so a late second answer goes to the new request', () => {
    const { exchanges } = run([req(0, 20, 5), resp(300, 20, 5), req(600, 20, 5), resp(900, 20, 5), resp(950, 20, 5)]);
    expect(exchanges.map((e) => e.responses.length)).toEqual([1, 2]);
    expect(exchanges[1].rttSeconds).toBeCloseTo((900 - 700) * period, 12);
  });

  it('gives an answer to the waiting exchange before an answered one of the same call', () => {
    const rec = (f: CallFrame, record: number): CallFrame => ({ ...f, call: { ...f.call!, recordNumber: record } });
    const { exchanges } = run([rec(req(0, 20, null), 1), rec(resp(300, 20, null), 1), rec(req(500, 20, null), 2), rec(resp(800, 20, null), 2)], false);
    expect(exchanges.map((e) => [e.requestCall.recordNumber, e.outcome, e.responses.length])).toEqual([
      [1, 'answered', 1],
      [2, 'answered', 1],
    ]);
  });

  it('without tags, counts a send as a retry only when call, record and file agree', () => {
    const withRecord = (f: CallFrame, record: number, file = 'A.B'): CallFrame => ({ ...f, call: { ...f.call!, recordNumber: record, fileName: file } });
    const same = run([withRecord(req(0, 33, null), 4), withRecord(req(5000, 33, null), 4), withRecord(resp(6000, 33, null), 4)], false).exchanges;
    expect(same.map((e) => [e.outcome, e.retries.length])).toEqual([['retried', 1]]);
    const other = run([withRecord(req(0, 33, null), 4), withRecord(req(5000, 33, null), 5), withRecord(resp(6000, 33, null), 4)], false).exchanges;
    expect(other.map((e) => e.retries.length)).toEqual([0, 0]);
    const otherFile = run([withRecord(req(0, 33, null), 4), withRecord(req(5000, 33, null), 4, 'C.D')], false).exchanges;
    expect(otherFile).toHaveLength(2);
  });

  it('measures the service delay from an RTS rise at the very sample of the server’s frame, and none from a rise after it', () => {
    const delays: number[] = [];
    const t = new ExchangeTracker({ samplePeriodSeconds: period }, { exchange: () => {}, serviceDelay: (d) => delays.push(d.seconds) });
    t.rts(1, 500);
    t.push({ ...resp(500, 20, 1), call: null });
    t.rts(1, 900);
    t.push({ ...resp(800, 20, 1), call: null });
    t.push({ ...resp(1000, 20, 1), call: null });
    expect(delays).toEqual([0, 100 * period]);
  });
});

describe('capture settings and frames the call layer ignores', () => {
  it('takes RTS lines by name whatever the case, from the station they name or their link’s station', () => {
    const roles = callLayerRoles({
      links: [
        { channel: 'tx', direction: 'to-server', stationAddress: 0x21 },
        { channel: 'rx', direction: 'from-server', stationAddress: 0x21 },
        { channel: 'mon', direction: 'unknown', stationAddress: 0x22 },
        { channel: 'tx2', direction: 'to-server', stationAddress: null },
      ],
      handshake: [
        { channel: 'r1', name: ' rts ', link: 'tx' },
        { channel: 'r2', name: 'RTS', link: 'tx', stationAddress: 0x30 },
        { channel: 'c1', name: 'CTS', link: 'tx', stationAddress: 0x21 },
        { channel: 'r3', name: 'RTS', link: 'tx2' },
        { channel: 'r4', name: 'RTS', link: null },
        { channel: 'r5', name: 'Rts', link: 'gone' },
      ],
    });
    expect(roles.links).toEqual([
      { link: 'tx', direction: 'to-server', station: 0x21 },
      { link: 'rx', direction: 'from-server', station: 0x21 },
      { link: 'tx2', direction: 'to-server', station: undefined },
    ]);
    expect(roles.rts).toEqual([
      { channel: 'r1', station: 0x21 },
      { channel: 'r2', station: 0x30 },
    ]);
  });

  it('ignores frames on links it was not told about and frames with no station, and line events other than an RTS rise', () => {
    const { session } = decodeScript(script(), { clocked: true });
    const fast = framesOfSession(session);
    const base = pairExchanges(fast.frames, [], { map: CPM_ENVELOPE, links: fast.roles, samplePeriodSeconds: fast.period });
    // without the station's port 3 links its exchanges are gone
    const fewer = pairExchanges(fast.frames, [], { map: CPM_ENVELOPE, links: fast.roles.filter((r) => !r.link.startsWith('p3')), samplePeriodSeconds: fast.period });
    expect(fewer.exchanges.length).toBe(base.exchanges.filter((e) => e.station !== 0x23).length);
    // every frame on a link it was told about comes out with its call decode, and no other
    const told = (f: { link: string }) => fast.roles.some((r) => r.link === f.link && !r.link.startsWith('p3'));
    expect(fewer.calls.map((c) => c.ref)).toEqual(fast.frames.filter(told).map((f) => ({ link: f.link, seq: f.seq })));
    expect(fewer.calls.length).toBeGreaterThan(10);
    // a link without a station takes the frame's address; a frame without one (too short) is left out
    const byAddress = pairExchanges(fast.frames, [], { map: CPM_ENVELOPE, links: fast.roles.map((r) => ({ ...r, station: undefined })), samplePeriodSeconds: fast.period });
    expect(byAddress.exchanges.map((e) => e.station)).toEqual(base.exchanges.map((e) => e.station));
    const stub = { ...fast.frames[0], seq: 999, status: 'short' as const, decode: null };
    expect(pairExchanges([stub], [], { map: CPM_ENVELOPE, links: [{ link: stub.link, direction: 'to-server' }], samplePeriodSeconds: 1 }).calls).toEqual([]);
    // only a rise of a channel named as RTS starts a service delay
    const poll = fast.frames.find((f) => f.link === 'p3_rxd' && f.decode?.command === 'RR')!;
    const events = [
      { link: null, channel: 'p3_rts', kind: 'fall' as const, sample: poll.firstSample - 10 },
      { link: null, channel: 'other', kind: 'rise' as const, sample: poll.firstSample - 10 },
    ];
    const rts = [{ channel: 'p3_rts', station: 0x23 }];
    expect(pairExchanges(fast.frames, events, { map: CPM_ENVELOPE, links: fast.roles, rts, samplePeriodSeconds: fast.period }).serviceDelays).toEqual([]);
    const rise = [{ link: null, channel: 'p3_rts', kind: 'rise' as const, sample: poll.firstSample }];
    const measured = pairExchanges(fast.frames, rise, { map: CPM_ENVELOPE, links: fast.roles, rts, samplePeriodSeconds: fast.period }).serviceDelays;
    // the rise at the poll's own first sample counts before the frame: a delay of 0
    expect(measured.map((d) => [d.station, d.seconds, d.serverFrame])).toEqual([[0x23, 0, { link: 'p3_rxd', seq: poll.seq }]]);
  });
});

// Our pairing rules (the module comment of shared/decoder/calls/exchanges.ts is their spec), each
// checked on hand-made call frames where a wrong pairing changes an exchange's values.
describe('pairing rules: what a response, a retry and a timeout change', () => {
  const withCall = (f: CallFrame, over: Partial<DecodedCall>): CallFrame => ({ ...f, call: { ...f.call!, ...over } });

  it('pairs by tag unless told otherwise', () => {
    const exchanges: Exchange[] = [];
    const t = new ExchangeTracker({ samplePeriodSeconds: period }, { exchange: (e) => exchanges.push(e) });
    const late = resp(400, 20, 1);
    const early = resp(300, 20, 2);
    for (const f of [req(0, 20, 1), req(100, 20, 2), early, late]) t.push(f);
    t.finish();
    exchanges.sort((a, b) => a.firstSample - b.firstSample);
    expect(exchanges.map((e) => [e.tag, e.responses])).toEqual([
      [1, [late.ref]],
      [2, [early.ref]],
    ]);
  });

  it('takes the same tag with another call code as a new request, not a retry', () => {
    const a20 = resp(400, 20, 5);
    const a33 = resp(300, 33, 5);
    const { exchanges, orphans } = run([req(0, 20, 5), req(150, 33, 5), a33, a20]);
    expect(orphans).toEqual([]);
    expect(exchanges.map((e) => [e.callCode, e.outcome, e.retries.length, e.responses, e.rttSeconds])).toEqual([
      [20, 'answered', 0, [a20.ref], (400 - 100) * period],
      [33, 'answered', 0, [a33.ref], (300 - 250) * period],
    ]);
  });

  it('ignores a call whose code the map cannot read', () => {
    const { exchanges, orphans } = run([withCall(req(0, 20, 1), { callCode: null }), withCall(resp(200, 20, 1), { callCode: null })]);
    expect(exchanges).toEqual([]);
    expect(orphans).toEqual([]);
  });

  it('takes the status, its meaning and the first answer’s time from the first response only', () => {
    const first = withCall(resp(300, 15, 3), { status: 0xff, statusMeaning: 'file not found' });
    const second = withCall(resp(700, 15, 3), { status: 0, statusMeaning: 'ok' });
    const { exchanges } = run([req(0, 15, 3), first, second]);
    expect(exchanges).toHaveLength(1);
    expect(exchanges[0]).toMatchObject({
      status: 0xff,
      statusMeaning: 'file not found',
      responseCall: first.call,
      responseFirstSample: 300,
      rttSeconds: (300 - 100) * period,
      responses: [first.ref, second.ref],
    });
  });

  it('takes record and file from the response only when the request has none (boot load names its record in the answer)', () => {
    const bare = run([req(0, 40, 1), withCall(resp(300, 40, 1), { recordNumber: 6, fileName: 'WRENBOOT.SYS' })]).exchanges;
    expect(bare[0]).toMatchObject({ recordNumber: 6, fileName: 'WRENBOOT.SYS' });
    const named = run([withCall(req(0, 40, 1), { recordNumber: 2, fileName: 'A.B' }), withCall(resp(300, 40, 1), { recordNumber: 6, fileName: 'C.D' })]).exchanges;
    expect(named[0]).toMatchObject({ recordNumber: 2, fileName: 'A.B' });
  });

  it('makes a cut-short first send whole by its retry, and keeps a whole first send over a cut-short retry', () => {
    const cut = withCall(req(0, 20, 1), { truncated: true, recordNumber: null, fileName: null });
    const whole = withCall(req(5000, 20, 1), { recordNumber: 9, fileName: 'HYMNS.TXT' });
    const mended = run([cut, whole, resp(6000, 20, 1)]).exchanges;
    expect(mended).toHaveLength(1);
    expect(mended[0]).toMatchObject({ requestCall: whole.call, recordNumber: 9, fileName: 'HYMNS.TXT', request: cut.ref, retries: [whole.ref] });
    const first = withCall(req(0, 20, 1), { recordNumber: 9, fileName: 'HYMNS.TXT' });
    const kept = run([first, withCall(req(5000, 20, 1), { truncated: true, recordNumber: null, fileName: null }), resp(6000, 20, 1)]).exchanges;
    expect(kept[0]).toMatchObject({ requestCall: first.call, recordNumber: 9, fileName: 'HYMNS.TXT' });
  });

  it('times the timeout from the latest send, so a retry keeps its exchange open', () => {
    // 100 µs timeout: the retry ends at 250, the answer at 300 is 50 after it (200 after the first send)
    const { exchanges, orphans } = run([req(0, 20, 1), req(150, 20, 1), resp(300, 20, 1)], true, 100e-6);
    expect(orphans).toEqual([]);
    expect(exchanges.map((e) => [e.outcome, e.rttSeconds])).toEqual([['retried', (300 - 250) * period]]);
  });

  it('keeps an answered exchange open for the timeout after its latest answer, for a second answer', () => {
    // 100 µs timeout: the answer ends at 280; a second answer at 300 still joins (200 after the send)
    const again = resp(300, 20, 1);
    const { exchanges, orphans } = run([req(0, 20, 1), resp(180, 20, 1), again], true, 100e-6);
    expect(orphans).toEqual([]);
    expect(exchanges[0].responses.at(-1)).toEqual(again.ref);
    // and no longer: 101 samples after the latest answer it is over
    expect(run([req(0, 20, 1), resp(180, 20, 1), resp(381, 20, 1)], true, 100e-6).orphans).toHaveLength(1);
  });

  it('ends an answered exchange only on a new request with its own tag', () => {
    const late = resp(600, 20, 1);
    const { exchanges, orphans } = run([req(0, 20, 1), resp(300, 20, 1), req(500, 20, 2), late, resp(800, 20, 2)]);
    expect(orphans).toEqual([]);
    expect(exchanges.map((e) => [e.tag, e.responses.length])).toEqual([
      [1, 2],
      [2, 1],
    ]);
    expect(exchanges[0].responses[1]).toEqual(late.ref);
  });

  it('without tags, lets a new request leave an answered exchange of another call open for a late second answer', () => {
    const late = resp(600, 20, null);
    const { exchanges, orphans } = run([req(0, 20, null), resp(300, 20, null), req(500, 33, null), late, resp(800, 33, null)], false);
    expect(orphans).toEqual([]);
    expect(exchanges.map((e) => [e.callCode, e.responses.length])).toEqual([
      [20, 2],
      [33, 1],
    ]);
  });

  it('gives a station’s service delay to its next request only', () => {
    const exchanges: Exchange[] = [];
    const t = new ExchangeTracker({ samplePeriodSeconds: period }, { exchange: (e) => exchanges.push(e) });
    t.rts(1, 0);
    t.push({ ...resp(40, 20, 1), call: null }); // the server's poll
    for (const f of [req(100, 20, 1), resp(300, 20, 1), req(500, 20, 2), resp(700, 20, 2)]) t.push(f);
    t.finish();
    exchanges.sort((a, b) => a.firstSample - b.firstSample);
    expect(exchanges.map((e) => e.serviceDelaySeconds)).toEqual([40 * period, null]);
  });

  it('measures a service delay to the server’s frame, not to the station’s own frame after the rise', () => {
    const delays: { seconds: number; serverFrame: unknown }[] = [];
    const t = new ExchangeTracker({ samplePeriodSeconds: period }, { exchange: () => {}, serviceDelay: (d) => delays.push(d) });
    t.rts(1, 0);
    t.push({ ...req(10, 20, 1), call: null });
    const poll = { ...resp(60, 20, 1), call: null };
    t.push(poll);
    expect(delays).toEqual([expect.objectContaining({ seconds: 60 * period, serverFrame: poll.ref })]);
  });

  it('takes a damaged frame from the station as no answer of anything', () => {
    const damagedRequest: CallFrame = { ...req(300, 20, 1), call: null, damagedCall: callOf(20, 1, 'request') };
    const { exchanges } = run([req(0, 20, 1), damagedRequest, req(5000, 20, 1), resp(5500, 20, 1)]);
    expect(exchanges.map((e) => [e.outcome, e.damagedResponses])).toEqual([['retried', []]]);
  });

  it('without tags, gives a damaged answer to the waiting exchange of the call code its bytes name', () => {
    const guess: CallFrame = { ref: { link: 'down', seq: seq++ }, station: 1, direction: 'from-server', firstSample: 300, lastSample: 400, call: null, damagedCall: callOf(33, null, 'response') };
    const { exchanges } = run([req(0, 20, null), req(100, 33, null), guess, req(5000, 20, null), req(5100, 33, null), resp(5500, 20, null), resp(5600, 33, null)], false);
    expect(exchanges.map((e) => [e.callCode, e.damagedResponses])).toEqual([
      [20, []],
      [33, [guess.ref]],
    ]);
  });
});

// The call layer on hand-made frames of one station (address 0x21): I frames with control 0x10,
// RR polls with control 0x11 (ISO/IEC 13239:2002 I and S frame formats, from memory); the call
// envelope is ours (shared/decoder/calls/cpm-envelope.ts), BDOS function numbers from the CP/M 2.2
// manual, section 5.
describe('the call layer on hand-made frames', () => {
  const roles = [
    { link: 'up', direction: 'to-server' as const, station: 0x21 },
    { link: 'down', direction: 'from-server' as const, station: 0x21 },
  ];
  const count = { up: 0, down: 0 };
  const frame = (link: 'up' | 'down', at: number, bytes: number[], damaged = false): DecodedFrame => {
    const f = encodeLineBits([{ kind: 'frame', bytes: Uint8Array.from(bytes), faults: damaged ? { wrongFcs: true } : {} }]).frames[0];
    return checkFrame({ link, seq: count[link]++, firstSample: at, lastSample: at + 50, bytes: f.wire, bitLength: f.bitLength, stuffed: [], status: 'ok' });
  };
  const open = (at: number, tag: number, name: string) => frame('up', at, [0x21, 0x10, ...requestInfo(BDOS.OPEN_FILE, tag, 0, { fcb: { name } })]);
  const opened = (at: number, tag: number, status: number, name: string, damaged = false) =>
    frame('down', at, [0x21, 0x10, ...responseInfo(BDOS.OPEN_FILE, tag, status, { fcb: { name } })], damaged);
  const poll = (at: number, damaged = false) => frame('down', at, [0x21, 0x11], damaged);
  const pair = (frames: DecodedFrame[], map = CPM_ENVELOPE, samplePeriodSeconds = 1e-6) => pairExchanges(frames, [], { map, links: roles, samplePeriodSeconds });

  it('pairs answers that come out of order by their tag, and reads each answer as a response', () => {
    const a = open(0, 1, 'A.B');
    const b = open(100, 2, 'C.D');
    const toB = opened(300, 2, 0xff, 'C.D');
    const toA = opened(400, 1, 0, 'A.B');
    const { exchanges } = pair([a, b, toB, toA]);
    expect(toB.status).toBe('ok');
    expect(exchanges.map((e) => [e.tag, e.fileName, e.responses, e.status, e.statusMeaning])).toEqual([
      [1, 'A.B', [{ link: 'down', seq: toA.seq }], 0, 'ok: directory code 0'],
      [2, 'C.D', [{ link: 'down', seq: toB.seq }], 0xff, 'file not found'],
    ]);
  });

  it('pairs by tag when any layout of the map has a tag field, not only when all have', () => {
    const doc: FieldMapInput = JSON.parse(JSON.stringify(CPM_ENVELOPE_DOCUMENT));
    const last = doc.layouts[doc.layouts.length - 1];
    for (const f of last.fields) if (f.role === 'tag') delete f.role;
    const toB = opened(300, 2, 0, 'C.D');
    const toA = opened(400, 1, 0, 'A.B');
    const { exchanges } = pair([open(0, 1, 'A.B'), open(100, 2, 'C.D'), toB, toA], parseFieldMap(doc));
    expect(exchanges.map((e) => [e.tag, e.responses])).toEqual([
      [1, [{ link: 'down', seq: toA.seq }]],
      [2, [{ link: 'down', seq: toB.seq }]],
    ]);
  });

  it('pairs in order per call, file and record when the map has no tag, so two opens of different files are two exchanges', () => {
    const doc: FieldMapInput = JSON.parse(JSON.stringify(CPM_ENVELOPE_DOCUMENT));
    for (const l of doc.layouts) for (const f of l.fields) if (f.role === 'tag') delete f.role;
    const map = parseFieldMap(doc);
    const { exchanges } = pair([open(0, 1, 'A.B'), open(100, 2, 'C.D'), opened(300, 1, 0, 'A.B'), opened(400, 2, 0, 'C.D')], map);
    expect(exchanges.map((e) => [e.fileName, e.outcome, e.retries.length, e.tag])).toEqual([
      ['A.B', 'answered', 0, null],
      ['C.D', 'answered', 0, null],
    ]);
  });

  it('takes neither a good poll nor a damaged poll for a damaged answer', () => {
    const { exchanges } = pair([open(0, 1, 'A.B'), poll(200), poll(300, true), open(5000, 1, 'A.B'), opened(5500, 1, 0, 'A.B')]);
    expect(exchanges.map((e) => [e.outcome, e.damagedResponses])).toEqual([['retried', []]]);
  });

  it('takes a good I frame whose call cannot be read for no damaged answer: only a bad FCS makes one', () => {
    // an I frame with an empty information field carries no call
    const unreadable = frame('down', 200, [0x21, 0x10]);
    expect(unreadable.status).toBe('ok');
    const { exchanges, calls } = pair([open(0, 1, 'A.B'), unreadable, open(5000, 1, 'A.B'), opened(5500, 1, 0, 'A.B')]);
    expect(calls.find((c) => c.ref.seq === unreadable.seq && c.ref.link === 'down')).toMatchObject({ call: null });
    expect(calls.find((c) => c.ref.seq === unreadable.seq && c.ref.link === 'down')?.damagedCall).toBeUndefined();
    expect(exchanges.map((e) => [e.outcome, e.damagedResponses])).toEqual([['retried', []]]);
  });

  it('counts an RTS rise before a frame that starts at its sample, in lists long enough to be sorted in runs', () => {
    // 300 server frames, each at the very sample of a rise of the station's RTS: every service delay
    // is 0, also in a list long enough that the sort merges runs instead of inserting one by one.
    const frames = Array.from({ length: 300 }, (_, i) => poll(10_000 + i * 1000));
    const events = frames.map((f) => ({ link: null, channel: 'rts', kind: 'rise' as const, sample: f.firstSample }));
    const { serviceDelays } = pairExchanges(frames, events, { map: CPM_ENVELOPE, links: roles, rts: [{ channel: 'rts', station: 0x21 }], samplePeriodSeconds: 1e-6 });
    expect(serviceDelays).toHaveLength(300);
    expect(serviceDelays.every((d, i) => d.seconds === 0 && d.serverFrame.seq === frames[i].seq)).toBe(true);
  });

  it('reads a damaged I frame’s bytes to find which of two waiting exchanges it answered', () => {
    const bad = opened(300, 2, 0, 'C.D', true);
    expect(bad.status).toBe('bad-fcs');
    const { exchanges } = pair([open(0, 1, 'A.B'), open(100, 2, 'C.D'), bad, open(5000, 2, 'C.D'), opened(5500, 2, 0, 'C.D'), opened(5800, 1, 0, 'A.B')]);
    expect(exchanges.map((e) => [e.tag, e.damagedResponses])).toEqual([
      [1, []],
      [2, [{ link: 'down', seq: bad.seq }]],
    ]);
  });

  it('lists exchanges by their first send even when a later one closes first', () => {
    // 1 ms samples, 0.5 s timeout = 500 samples: tag 2 is given up at the poll (600 − 60 > 500), tag 1 later
    const { exchanges } = pair([open(0, 1, 'A.B'), open(10, 2, 'C.D'), opened(400, 1, 0, 'A.B'), poll(600)], CPM_ENVELOPE, 1e-3);
    expect(exchanges.map((e) => [e.tag, e.outcome])).toEqual([
      [1, 'answered'],
      [2, 'unanswered'],
    ]);
  });

  it('works with a sink that takes exchanges only', () => {
    const got: number[] = [];
    const layer = new CallLayer({ map: CPM_ENVELOPE, links: roles, samplePeriodSeconds: 1e-6 }, { exchange: (e) => got.push(e.tag!) });
    for (const f of [open(0, 1, 'A.B'), opened(300, 1, 0, 'A.B'), opened(400, 7, 0, 'X.Y')]) layer.frame(f);
    layer.finish();
    expect(got).toEqual([1]);
  });
});

describe('pairing rules: more edges', () => {
  const p = 2 ** -20; // a binary fraction, so timeout / period is exact
  it('keeps a request open for exactly the timeout after its last send', () => {
    const at = (answer: number) => {
      const out: Exchange[] = [];
      const t = new ExchangeTracker({ samplePeriodSeconds: p, timeoutSeconds: 100 * p }, { exchange: (e) => out.push(e) });
      t.push(req(0, 20, 1));
      t.push(resp(answer, 20, 1));
      t.finish();
      return out.map((e) => e.outcome);
    };
    expect(at(200)).toEqual(['answered']);
    expect(at(201)).toEqual(['unanswered']);
  });

  it('lists a damaged answer once however many retries follow it', () => {
    const lost = { ...resp(300, 20, 1), call: null, damagedCall: null } as CallFrame;
    const { exchanges } = run([req(0, 20, 1), lost, req(5000, 20, 1), req(10000, 20, 1), resp(10500, 20, 1)]);
    expect(exchanges.map((e) => [e.retries.length, e.damagedResponses])).toEqual([[2, [lost.ref]]]);
  });

  it('keeps a whole first send when a whole retry says something else', () => {
    const first = { ...req(0, 20, 1) };
    first.call = { ...first.call!, recordNumber: 9, fileName: 'A.B' };
    const again = { ...req(5000, 20, 1) };
    again.call = { ...again.call!, recordNumber: 10, fileName: 'C.D' };
    const { exchanges } = run([first, again, resp(6000, 20, 1)]);
    expect(exchanges[0]).toMatchObject({ requestCall: first.call, recordNumber: 9, fileName: 'A.B' });
  });

  it('gives an unreadable damaged answer to the one exchange still waiting, not to one already answered', () => {
    const lost = { ...resp(400, 20, 0), call: null, damagedCall: null } as CallFrame;
    const { exchanges } = run([req(0, 20, 1), resp(200, 20, 1), req(300, 20, 2), lost, req(5000, 20, 2), resp(5500, 20, 2)]);
    expect(exchanges.map((e) => [e.tag, e.damagedResponses])).toEqual([
      [1, []],
      [2, [lost.ref]],
    ]);
  });

  it('works with a sink that takes no orphans', () => {
    const out: Exchange[] = [];
    const t = new ExchangeTracker({ samplePeriodSeconds: period }, { exchange: (e) => out.push(e) });
    t.push(resp(0, 20, 1));
    t.finish();
    expect(out).toEqual([]);
  });

  it('finds no RTS line in settings without handshake lines, and takes only lines named RTS exactly', () => {
    expect(callLayerRoles({ links: [{ channel: 'tx', direction: 'to-server', stationAddress: 1 }] })).toEqual({ links: [{ link: 'tx', direction: 'to-server', station: 1 }], rts: [] });
    const named = callLayerRoles({
      links: [{ channel: 'tx', direction: 'to-server', stationAddress: 1 }],
      handshake: ['RTS2', 'NRTS', 'rts'].map((name, k) => ({ channel: `h${k}`, name, link: 'tx' })),
    });
    expect(named.rts).toEqual([{ channel: 'h2', station: 1 }]);
  });
});
