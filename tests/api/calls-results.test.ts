// The call layer's results as the server stores and serves them, over captures made by our own
// encoder (shared/decoder/encode): an exchange's damaged answer (a bad-FCS answer followed by a
// retry) in the exchanges API and the timeline's call markers, lock conflicts (calls 42/43) on
// the file and on both exchanges, where a recovered file's size came from, and service delay on
// a multidrop line whose request lines each belong to a station.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { BDOS } from '../../shared/decoder/calls';
import type { EncodedSession } from '../../shared/decoder/encode';
import type { ExchangePage, ExchangeRow, RecoveredFileDetail, RecoveredFileSummary, TimelinePage } from '../../shared/schemas';
import { stations } from '../../server/db/schema';
import { BIT_RATE, multidropSession, resultsSession, vcdOf } from './call-results-captures';
import { buildWorld, closeWorld, put, upload, waitForJob, type World } from './captures-helpers';

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
