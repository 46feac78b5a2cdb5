import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { ExchangeRow, FaultDeskView, RigDetail, ScheduleView, ServiceView } from '../../shared/schemas';
import type { UnderrunDetail } from '../../shared/decoder/faults';
import { samplesDir } from '../../server/seed/demo-captures';
import { clearTimingCache } from '../../server/services/timing/build-timing';
import { captureSettingsSchema } from '../../shared/schemas';
import { captures } from '../../server/db/schema';
import { startDecode } from '../../server/services/captures/jobs';
import { createCaptureModule, type CaptureModule } from '../../server/services/captures/module';
import { findCapture } from '../../server/services/captures/rows';
import { saveSettings } from '../../server/services/captures/settings';
import { buildWorld, closeWorld, waitForJob, type World } from './captures-helpers';

// The demo's timing episode (made by our encoder, server/cli/make-samples.ts): its manifest entry
// says what the encoder put in — the server's order, rounds and visits, the under-runs, the
// skipped visits and starved station, each station's longest wait.
interface Timing {
  order: number[];
  rounds: number;
  visits: number;
  underruns: { link: string; seq: number; octetOffset: number; end: 'fcs' | 'abort'; fragmentSeq: number | null }[];
  skipped: { station: number; round: number }[];
  starved: { station: number; passedOver: number }[];
  longestWait: Record<string, number>;
}
const FILE = 'wrenfield-evening-races.raw';
const entry = (JSON.parse(fs.readFileSync(path.join(samplesDir(), 'manifest.json'), 'utf8')) as { captures: { file: string; settings: Record<string, unknown>; expected: { timing: Timing; exchanges: { total: number } } }[] }).captures.find(
  (c) => c.file === FILE,
)!;
const timing = entry.expected.timing;
const BIT = 1 / Number(entry.settings.bitRate);

describe('line timing API over the demo races capture', () => {
  let w: World;
  let url = '';
  let side: CaptureModule | undefined;
  beforeAll(async () => {
    w = await buildWorld();
    // 0x21 (33) is the world's Desk A already
    for (const [address, name] of [[34, 'Treasurer desk'], [35, 'Choir office']] as const) {
      await w.owner.post(`/api/rigs/${w.rigId}/stations`, { address, name, role: 'station' }).expect(201);
    }
    // the file store's detection does not take this ten-channel raw file on upload, so it is
    // loaded the way the demo seed loads samples: into the store, with its manifest settings
    side = createCaptureModule({ db: w.handle.db, sqlite: w.handle.sqlite, dbPath: w.handle.path, dataDir: w.env.dir });
    const temp = path.join(side.store.tmpDir, 'evening.raw');
    fs.copyFileSync(path.join(samplesDir(), FILE), temp);
    const { sha256, size } = await side.store.adopt(temp);
    const settings = captureSettingsSchema.parse(entry.settings);
    const row = w.handle.db.insert(captures).values({ rigId: w.rigId, name: FILE, size, sha256, format: settings.format, detectReason: 'test', uploadedBy: null }).returning().get();
    saveSettings(side, row, settings);
    startDecode(side, findCapture(side, w.rigId, row.id));
    url = `/api/rigs/${w.rigId}/captures/${row.id}`;
    const job = await waitForJob(w.viewer, url, undefined, 120_000);
    expect(job.state, job.error ?? '').toBe('done');
  }, 180_000);
  afterAll(async () => {
    await side?.jobs.close();
    await closeWorld(w);
  });

  it('serves the service statistics: the server’s order, rounds and visits, starvation and each station’s longest wait', async () => {
    const v = (await w.viewer.get(`${url}/timing/service`).expect(200)).body as ServiceView;
    expect(v.available).toBe(true);
    const r = v.report!;
    expect(r.server.order).toEqual(timing.order);
    expect(r.server.rounds).toBe(timing.rounds);
    expect(r.server.visits).toBe(timing.visits);
    expect(r.requestLines).toBe(true);
    expect(r.skipped.map((s) => ({ station: s.station, round: s.round }))).toEqual(timing.skipped);
    expect(r.starved.map((s) => ({ station: s.station, passedOver: s.passedOver }))).toEqual(timing.starved);
    for (const [station, seconds] of Object.entries(timing.longestWait)) {
      const st = r.stations.find((s) => s.station === Number(station))!;
      // within one bit time of what the encoder waited
      expect(Math.abs(st.longestWait!.seconds - seconds)).toBeLessThanOrEqual(BIT);
      expect(st.serviceDelay).not.toBeNull();
    }
    expect(r.server.roundPeriod!.count).toBe(timing.rounds - 1);
    expect(v.extent!.exchanges).toBe(entry.expected.exchanges.total);
    expect(v.extent!.stationNames[35]).toBe('Choir office');
  });

  it('serves a window of the schedule: every lane, the visits above them, spans drawn or counted by zoom', async () => {
    const service = (await w.viewer.get(`${url}/timing/service`).expect(200)).body as ServiceView;
    const { from, to } = service.extent!;
    const whole = (await w.viewer.get(`${url}/timing/schedule?from=${from}&to=${to}&width=1000`).expect(200)).body as ScheduleView;
    const win = whole.window!;
    expect(win.lanes.map((l) => l.station)).toEqual(timing.order);
    expect(win.visits.total).toBe(timing.visits);
    expect(win.roundStarts.length).toBe(timing.rounds);
    expect(win.skipped.map((s) => s.station)).toEqual(timing.skipped.map((s) => s.station));
    const exchanges = win.lanes.reduce((n, l) => n + l.exchanges.total, 0);
    expect(exchanges).toBe(entry.expected.exchanges.total);
    // each lane's request line was up at least once; starved waits are marked as such
    for (const l of win.lanes) expect(l.requestLine.length).toBeGreaterThan(0);
    const choir = win.lanes.find((l) => l.station === 35)!;
    const starvedCodes = win.codes.waits.map((c, i) => (c.endsWith('starved') ? i : -1)).filter((i) => i >= 0);
    expect([...choir.waits.items.map((i) => i.code), ...choir.waits.columns.flatMap((c) => c.counts.flatMap((n, code) => (n > 0 ? [code] : [])))].some((c) => starvedCodes.includes(c))).toBe(true);

    // narrow: a window a few pixels wide counts every span per column instead of drawing it
    const narrow = ((await w.viewer.get(`${url}/timing/schedule?from=${from}&to=${to}&width=16`).expect(200)).body as ScheduleView).window!;
    const lane = narrow.lanes[0];
    expect(lane.stationFrames.items).toHaveLength(0);
    expect(lane.stationFrames.columns.reduce((n, c) => n + c.counts.reduce((a, b) => a + b, 0), 0)).toBe(lane.stationFrames.total);

    // zoomed to one exchange: it is drawn by itself with its id, which opens the exchange
    const someExchange = win.lanes.flatMap((l) => l.exchanges.items)[0];
    const t0 = from + someExchange.x0 * win.secondsPerPx;
    const t1 = from + someExchange.x1 * win.secondsPerPx;
    const zoom = ((await w.viewer.get(`${url}/timing/schedule?from=${t0}&to=${t1}&width=800&stations=${win.lanes[0].station}`).expect(200)).body as ScheduleView).window!;
    expect(zoom.lanes).toHaveLength(1);
    expect(zoom.lanes[0].stationFrames.items.length).toBeGreaterThan(0);
    const ex = await w.viewer.get(`${url}/exchanges?limit=500`).expect(200);
    const ids = (ex.body.rows as { id: number }[]).map((r) => r.id);
    for (const l of win.lanes) for (const it of l.exchanges.items) expect(ids).toContain(it.id);
    // a span opens its exchange with its frames
    const opened = (await w.viewer.get(`${url}/timing/exchanges/${someExchange.id}`).expect(200)).body as ExchangeRow;
    expect(opened.id).toBe(someExchange.id);
    expect(opened.requestFrameId).not.toBeNull();
    expect((await w.viewer.get(`${url}/timing/exchanges/999999`).expect(404)).body.error).toMatch(/No exchange with id 999999/);
  });

  it('answers the same after the kept timing is dropped (built again from the stored rows)', async () => {
    const a = (await w.viewer.get(`${url}/timing/service`).expect(200)).body as ServiceView;
    clearTimingCache();
    const b = (await w.viewer.get(`${url}/timing/service`).expect(200)).body as ServiceView;
    expect(b).toEqual(a);
  });

  it('rejects a bad window with a message the view can show', async () => {
    const bad = async (q: string, field: string) => {
      const res = await w.viewer.get(`${url}/timing/schedule?${q}`).expect(400);
      expect(Object.keys(res.body.fields ?? {})).toContain(field);
    };
    await bad('from=1&to=0.5&width=400', 'to');
    await bad('from=0&to=1&width=2', 'width');
    await bad('from=x&to=1&width=400', 'from');
    await bad('from=0&to=1&width=400&stations=33;34', 'stations');
  });

  it('stores each race signature with its detail, the offset histogram and the budget line at the rig’s CPU clock', async () => {
    const desk = (await w.viewer.get(`${url}/faults?cause=tx-underrun`).expect(200)).body as FaultDeskView;
    expect(desk.rows.map((r) => ({ link: r.link, seq: r.seq, octetOffset: (r.race as UnderrunDetail).octetOffset, end: (r.race as UnderrunDetail).end }))).toEqual(
      timing.underruns.map(({ link, seq, octetOffset, end }) => ({ link, seq, octetOffset, end })),
    );
    expect(desk.rows[0].diagnosis).toMatch(/^Transmitter under-run: Cut short after 98 octets/);
    expect(desk.races!.underruns.offsets).toEqual([{ offset: 98, count: 2 }]);
    // 800 kbit/s: 10 µs per octet, 40 cycles of the default 4 MHz CPU clock (arithmetic from the stated rates)
    const b = desk.races!.budget!;
    expect(b.cpuHz).toBe(4_000_000);
    expect(b.octetSeconds).toBeCloseTo(10e-6, 8);
    expect(b.cyclesPerOctet).toBeCloseTo(40, 3);
    expect(desk.races!.octetTiming.clock).not.toBeNull();
    expect(desk.raceWords['tx-underrun'].title).toBe('Transmitter under-run');
  });

  it('keeps the rig’s CPU clock and rejects one out of range', async () => {
    const rigUrl = `/api/rigs/${w.rigId}`;
    expect(((await w.viewer.get(rigUrl).expect(200)).body as RigDetail).cpuClockMHz).toBe(4);
    const bad = await w.owner.patch(rigUrl, { cpuClockMHz: 0 }).expect(400);
    expect(bad.body.fields.cpuClockMHz).toBe('At least 0.1 MHz');
    expect(((await w.owner.patch(rigUrl, { cpuClockMHz: 2.5 }).expect(200)).body as RigDetail).cpuClockMHz).toBe(2.5);
    // a new decode counts the budget at the new clock
    const again = await w.analyst.post(`${url}/decode`, {}).expect(202);
    expect(again.status).toBe(202);
    const job = await waitForJob(w.viewer, url, (j) => j.state === 'done' && j.id !== undefined, 120_000);
    expect(job.state).toBe('done');
    const desk = (await w.viewer.get(`${url}/faults?limit=1`).expect(200)).body as FaultDeskView;
    expect(desk.races!.budget!.cyclesPerOctet).toBeCloseTo(25, 3);
  }, 180_000);
});
