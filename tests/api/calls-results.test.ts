// The call layer's results as the server stores and serves them, over captures made by our own
// encoder (shared/decoder/encode): an exchange's damaged answer (a bad-FCS answer followed by a
// retry) in the exchanges API and the timeline's call markers, lock conflicts (calls 42/43) on
// the file and on both exchanges, where a recovered file's size came from, and service delay on
// a multidrop line whose request lines each belong to a station.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { BDOS } from '../../shared/decoder/calls/cpm-envelope';
import { computeSizeCalls, encodeSession, readFileCalls, readRandomCalls, requestInfo, responseInfo, Tags, type EncodedSession, type ScriptCall, type SessionScript } from '../../shared/decoder/encode/calls';
import { renderWaveform } from '../../shared/decoder/encode/waveform';
import { vcdBytes } from '../../shared/decoder/encode/writers/vcd';
import type { ExchangePage, ExchangeRow, RecoveredFileDetail, RecoveredFileSummary, TimelinePage } from '../../shared/schemas';
import { stations } from '../../server/db/schema';
import { buildWorld, closeWorld, put, upload, waitForJob, type World } from './captures-helpers';

const BIT_RATE = 800_000;
const SPB = 5;
const text = (n: number) => new TextEncoder().encode('Let all things be done decently and in order. '.repeat(Math.ceil(n / 47)).slice(0, n));

/** A clocked NRZI VCD of the session with its RTS lines, as a logic analyzer would record it. */
function vcdOf(session: EncodedSession): Buffer {
  const w = renderWaveform({
    links: session.links.map((l) => ({ name: l.name, bits: l.bits })),
    samplesPerBit: SPB,
    samplePeriodSeconds: 1 / (BIT_RATE * SPB),
    encoding: 'nrzi',
    clock: { name: 'clk', edge: 'rising' },
    handshake: session.rts,
  });
  return Buffer.from(vcdBytes(w, { timescale: '1ns' }));
}

// Record lock and unlock, 42 and 43 as MP/M II numbers them (CP/M 3 Programmer's Guide, section 3,
// functions 42 and 43); status 8 "record locked by another" from memory of the MP/M II guide.
const lockCall = (tags: Tags, code: number, status: number, thinkTime: number): ScriptCall => {
  const tag = tags.next();
  const fcb = { name: 'ACCOUNTS.DAT', random: 4 };
  return { request: requestInfo(code, tag, 0, { fcb }), response: responseInfo(code, tag, status, { fcb }), serverDelay: 0.0003, thinkTime, sends: 1 };
};

/**
 * Station 0x21 locks record 4 of ACCOUNTS.DAT, reads HYMNS.TXT (its third answer arrives damaged
 * and the station asks again), opens PARISH.DAT (the answer's rc says 9 records), sizes
 * REGISTER.DAT with compute file size (37 records) and unlocks. Station 0x22 asks for the same
 * lock meanwhile and is refused.
 */
function resultsSession(): EncodedSession {
  const a = new Tags();
  const b = new Tags();
  const hymns = readFileCalls('HYMNS.TXT', text(500), { tags: a, delay: 0.0004 });
  hymns[2].damagedResponses = 1;
  const openTag = a.next();
  // CP/M 2.2 Operating System Manual 5.2, Table 5-2: rc is the record count of extent ex; open (15) fills in the FCB
  const open: ScriptCall = {
    request: requestInfo(BDOS.OPEN_FILE, openTag, 0, { fcb: { name: 'PARISH.DAT' } }),
    response: responseInfo(BDOS.OPEN_FILE, openTag, 0, { fcb: { name: 'PARISH.DAT', rc: 9 } }),
    serverDelay: 0.0003,
  };
  const parish = readRandomCalls('PARISH.DAT', text(128 * 9), [0, 4], { tags: a, delay: 0.0003 });
  // CP/M 2.2 Operating System Manual 5.2, function 35: r0–r2 are set to the virtual file size
  const register = [...computeSizeCalls('REGISTER.DAT', 37, { tags: a, delay: 0.0003 }), ...readRandomCalls('REGISTER.DAT', text(128 * 37), [36], { tags: a, delay: 0.0003 })];
  const script: SessionScript = {
    bitRate: BIT_RATE,
    stations: [
      { address: 0x21, port: 'p1', start: 0.0002, calls: [lockCall(a, 42, 0, 0.0003), ...hymns, open, ...parish, ...register, lockCall(a, 43, 0, 0.0003)] },
      { address: 0x22, port: 'p2', start: 0.0004, calls: [lockCall(b, 42, 8, 0.004)] },
    ],
  };
  return encodeSession(script);
}

/** Two stations on one multidrop port, each with its own RTS line. */
function multidropSession(): EncodedSession {
  return encodeSession({
    bitRate: BIT_RATE,
    stations: [
      { address: 0x31, port: 'm', rtsName: 'm_rts_31', start: 0.0001, rts: true, calls: readFileCalls('HYMNS.TXT', text(300), { tags: new Tags(), delay: 0.0004 }) },
      { address: 0x32, port: 'm', rtsName: 'm_rts_32', start: 0.03, rts: true, calls: readFileCalls('PSALMS.TXT', text(200), { tags: new Tags(), delay: 0.0006 }) },
    ],
  });
}

async function decoded(w: World, file: Buffer, name: string, settings: object): Promise<string> {
  const res = await upload(w.analyst, w.rigId, file, name);
  expect(res.status).toBe(201);
  const url = `/api/rigs/${w.rigId}/captures/${res.body.id}`;
  const saved = await put(w.analyst, `${url}/settings`, settings);
  expect(saved.status, JSON.stringify(saved.body)).toBe(200);
  expect((await w.analyst.post(`${url}/decode`)).status).toBe(202);
  const job = await waitForJob(w.viewer, url, undefined, 60_000);
  expect(job.state, job.error ?? '').toBe('done');
  // the call layer runs in the same worker before the run becomes visible
  return url;
}

const linksOf = (session: EncodedSession) => session.links.map((l) => ({ channel: l.name, direction: l.direction, stationAddress: l.station }));

describe('call results over encoded captures', () => {
  let w: World;
  const session = resultsSession();
  let url = '';
  let rows: ExchangeRow[] = [];
  let files: RecoveredFileSummary[] = [];

  beforeAll(async () => {
    w = await buildWorld();
    w.app.db.db.insert(stations).values({ rigId: w.rigId, address: 0x22, name: 'Desk B', role: 'station' }).run();
    url = await decoded(w, vcdOf(session), 'call-results.vcd', { format: 'vcd', clock: 'clk', links: linksOf(session), encoding: 'nrzi', edge: 'rising' });
    rows = ((await w.viewer.get(`${url}/exchanges?limit=1000`).expect(200)).body as ExchangePage).rows;
    files = (await w.viewer.get(`${url}/files`).expect(200)).body as RecoveredFileSummary[];
  }, 90_000);
  afterAll(() => closeWorld(w));

  it('lists the damaged answer with the exchange it made the station retry, and no other', async () => {
    const damagedFrames = session.links.find((l) => l.name === 'p1_rxd')!.frames.filter((f) => f.damaged && f.kind === 'I');
    expect(damagedFrames).toHaveLength(1);
    const retried = rows.filter((r) => (r.damagedResponseFrameIds ?? []).length > 0);
    expect(retried).toHaveLength(1);
    expect(retried[0]).toMatchObject({ station: { address: 0x21 }, outcome: 'retried', retries: 1, fileName: 'HYMNS.TXT' });
    const [frameId] = retried[0].damagedResponseFrameIds!;
    // the frame the server stored is the damaged one the encoder sent: bad FCS, on the answering link, at its seq
    const { frame } = (await w.viewer.get(`${url}/frames/${frameId}`).expect(200)).body as { frame: { link: string; seq: number; status: string } };
    expect(frame).toMatchObject({ link: 'p1_rxd', seq: damagedFrames[0].seq, status: 'bad-fcs' });
    // it comes between the first send and the retry
    expect(frameId).not.toBe(retried[0].requestFrameId);
    expect(retried[0].responseFrameIds).not.toContain(frameId);
  });

  it('marks the damaged answer on its timeline row as a damaged answer of that exchange', async () => {
    const retried = rows.find((r) => (r.damagedResponseFrameIds ?? []).length > 0)!;
    const page = (await w.viewer.get(`${url}/timeline?from=${retried.tRequest}&limit=50`).expect(200)).body as TimelinePage;
    const row = page.rows.find((r) => r.type === 'frame' && r.id === retried.damagedResponseFrameIds![0]);
    expect(row, 'the damaged frame is on the page').toBeDefined();
    expect(row!.type === 'frame' && row!.call).toMatchObject({ exchangeId: retried.id, role: 'damaged-response' });
  });

  it('shows the lock conflict on the file and on both lock exchanges', async () => {
    const accounts = files.find((f) => f.name === 'ACCOUNTS.DAT')!;
    expect(accounts.lockConflicts).toBe(1);
    const detail = (await w.viewer.get(`${url}/files/${accounts.id}`).expect(200)).body as RecoveredFileDetail;
    const holderLock = rows.find((r) => r.station.address === 0x21 && r.call.code === 42)!;
    const requesterLock = rows.find((r) => r.station.address === 0x22 && r.call.code === 42)!;
    expect(detail.lockConflictDetail).toEqual([
      {
        record: 4,
        holder: { address: 0x21, name: 'Desk A', exchangeId: holderLock.id },
        requester: { address: 0x22, name: 'Desk B', exchangeId: requesterLock.id },
        outcome: 'refused',
      },
    ]);
    expect(holderLock.lockConflicts).toEqual([{ record: 4, role: 'holder', other: { address: 0x22, name: 'Desk B' }, otherExchangeId: requesterLock.id, outcome: 'refused' }]);
    expect(requesterLock.lockConflicts).toEqual([{ record: 4, role: 'requester', other: { address: 0x21, name: 'Desk A' }, otherExchangeId: holderLock.id, outcome: 'refused' }]);
    const unlock = rows.find((r) => r.call.code === 43)!;
    expect(unlock.lockConflicts).toEqual([]);
    // the exchange row the inspector shows for the refused lock's frame carries it too
    const call = (await w.viewer.get(`${url}/frames/${requesterLock.requestFrameId}/call`).expect(200)).body as { exchange: ExchangeRow };
    expect(call.exchange.lockConflicts).toHaveLength(1);
  });

  it('says where each file’s size came from, with the exchange whose answer gave it', () => {
    const byName = (n: string) => files.find((f) => f.name === n)!;
    const ex = (id: number | null | undefined) => rows.find((r) => r.id === id);
    const parish = byName('PARISH.DAT');
    expect(parish).toMatchObject({ recordCount: 9, endKnown: true, sizeSource: 'open' });
    expect(ex(parish.sizeExchangeId)?.call.code).toBe(BDOS.OPEN_FILE);
    const register = byName('REGISTER.DAT');
    expect(register).toMatchObject({ recordCount: 37, endKnown: true, sizeSource: 'compute-file-size' });
    expect(ex(register.sizeExchangeId)?.call.code).toBe(BDOS.COMPUTE_FILE_SIZE);
    const hymns = byName('HYMNS.TXT');
    expect(hymns).toMatchObject({ recordCount: 4, endKnown: true, sizeSource: 'end-of-file' });
    expect(ex(hymns.sizeExchangeId)?.call.code).toBe(BDOS.READ_SEQUENTIAL);
    // locks alone carry no record: the highest record seen is all there is
    expect(byName('ACCOUNTS.DAT')).toMatchObject({ sizeSource: 'records-seen', sizeExchangeId: null, endKnown: false });
  });
});

describe('service delay on a multidrop line with a request line per station', () => {
  let w: World;
  const session = multidropSession();

  beforeAll(async () => {
    w = await buildWorld();
  }, 30_000);
  afterAll(() => closeWorld(w));

  it('measures each station’s service delay when each RTS line names its station', async () => {
    expect(session.links.map((l) => l.station)).toEqual([null, null]);
    const handshake = session.rts.map((r) => ({ channel: r.name, name: 'RTS', link: null, stationAddress: r.station }));
    const url = await decoded(w, vcdOf(session), 'multidrop.vcd', { format: 'vcd', clock: 'clk', links: linksOf(session), handshake, encoding: 'nrzi', edge: 'rising' });
    // the settings keep each line's station
    const saved = (await w.viewer.get(url).expect(200)).body as { settings: { handshake: { channel: string; stationAddress: number | null }[] } };
    expect(saved.settings.handshake.map((h) => [h.channel, h.stationAddress])).toEqual([
      ['m_rts_31', 0x31],
      ['m_rts_32', 0x32],
    ]);
    const rows = ((await w.viewer.get(`${url}/exchanges?limit=1000`).expect(200)).body as ExchangePage).rows;
    for (const station of [0x31, 0x32]) {
      const mine = rows.filter((r) => r.station.address === station);
      expect(mine).toHaveLength(session.exchanges.filter((e) => e.station === station).length);
      // the encoder polls 0.5 ms after RTS rises (SessionScript.pollDelay default); one bit time of tolerance
      for (const r of mine) expect(Math.abs(r.serviceDelaySeconds! - 0.0005)).toBeLessThanOrEqual(1 / BIT_RATE);
    }
    const stats = (await w.viewer.get(`${url}/exchanges/stats`).expect(200)).body as { stations: { address: number; serviceDelay: { count: number } | null }[] };
    expect(stats.stations.map((s) => [s.address, s.serviceDelay?.count])).toEqual([
      [0x31, rows.filter((r) => r.station.address === 0x31).length],
      [0x32, rows.filter((r) => r.station.address === 0x32).length],
    ]);
  });
});
