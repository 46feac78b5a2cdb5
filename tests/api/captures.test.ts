import { createHash } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CaptureSummaryRow, TimelineFrame, TimelinePage, TimelineRow } from '../../shared/schemas';
import { buildWorld, clockedVcd, closeWorld, put, recoveredRaw, upload, waitForJob, type SentFrame, type TestCapture, type World } from './captures-helpers';
import type { Client } from './helpers';
import { fcs16 } from '../../shared/decoder';

const countBy = <T,>(xs: T[], key: (x: T) => string) => xs.reduce<Record<string, number>>((m, x) => ((m[key(x)] = (m[key(x)] ?? 0) + 1), m), {});

async function allPages(c: Client, url: string, query: string, limit: number, direction: 'forward' | 'backward' = 'forward'): Promise<{ rows: TimelineRow[]; pages: TimelinePage[] }> {
  const rows: TimelineRow[] = [];
  const pages: TimelinePage[] = [];
  let cursor: string | null = null;
  for (let guard = 0; guard < 10_000; guard++) {
    const res = await c.get(`${url}/timeline?limit=${limit}&direction=${direction}${query}${cursor ? `&cursor=${cursor}` : ''}`);
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    const page = res.body as TimelinePage;
    pages.push(page);
    if (direction === 'forward') rows.push(...page.rows);
    else rows.unshift(...page.rows);
    cursor = page.nextCursor;
    if (!cursor) break;
  }
  return { rows, pages };
}

const framesOf = (rows: TimelineRow[]) => rows.filter((r): r is TimelineFrame => r.type === 'frame');

describe('a clocked VCD capture, from upload to export', () => {
  let w: World;
  let cap: TestCapture;
  let url = '';
  let frames: TimelineFrame[] = [];
  beforeAll(async () => {
    w = await buildWorld();
    cap = clockedVcd(60);
  });
  afterAll(() => closeWorld(w));

  it('stores an upload under its content hash and detects the format', async () => {
    const res = await upload(w.analyst, w.rigId, cap.file, 'boot-listing.vcd');
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const row = res.body as CaptureSummaryRow;
    expect(row).toMatchObject({ name: 'boot-listing.vcd', size: cap.file.length, format: 'vcd', status: 'uploaded', uploadedBy: 'Ann Analyst', frameCount: 0, job: null });
    expect(row.sha256).toBe(createHash('sha256').update(cap.file).digest('hex'));
    expect(fs.readFileSync(path.join(w.env.dir, 'captures', row.sha256)).equals(cap.file)).toBe(true);
    expect(fs.readdirSync(path.join(w.env.dir, 'tmp'))).toEqual([]);
    url = `/api/rigs/${w.rigId}/captures/${row.id}`;
    const list = await w.viewer.get(`/api/rigs/${w.rigId}/captures`);
    expect(list.body.map((c: CaptureSummaryRow) => c.id)).toEqual([row.id]);
  });

  it('lists the channels with suggested roles and settings prefilled from the rig', async () => {
    const res = await w.viewer.get(`${url}/detection`);
    expect(res.status).toBe(200);
    expect(res.body.format).toBe('vcd');
    expect(res.body.channels.map((c: { name: string; suggested: string }) => [c.name, c.suggested])).toEqual([
      ['clk', 'clock'],
      ['tx', 'data'],
      ['rx', 'data'],
      ['rts', 'handshake'],
    ]);
    expect(res.body.suggested).toMatchObject({ format: 'vcd', clock: 'clk', encoding: 'nrz', edge: 'rising', handshake: [{ channel: 'rts', name: 'RTS' }] });
    expect(res.body.suggested.links.map((l: { channel: string }) => l.channel)).toEqual(['tx', 'rx']);
  });

  it('refuses channel roles the capture does not have, naming the channels it has', async () => {
    const detection = (await w.analyst.get(`${url}/detection`)).body;
    const wrong = await put(w.analyst, `${url}/settings`, { ...detection.suggested, links: [{ channel: 'txd' }] });
    expect(wrong.status).toBe(422);
    expect(wrong.body.error).toBe('The capture has no channel "txd" (data); its channels are clk, tx, rx, rts.');
    const malformed = await put(w.analyst, `${url}/settings`, { ...detection.suggested, links: [] });
    expect(malformed.status).toBe(400);
    expect(malformed.body.fields).toEqual({ links: 'Choose at least one data channel' });
    const byViewer = await put(w.viewer, `${url}/settings`, detection.suggested);
    expect(byViewer.status).toBe(403);
    expect((await w.viewer.get(url)).body.settings).toBeNull();
  });

  it('decodes in a worker with progress, one run at a time, and shows every encoded frame', async () => {
    const detection = (await w.analyst.get(`${url}/detection`)).body;
    const settings = {
      ...detection.suggested,
      links: [
        { channel: 'tx', direction: 'to-server', stationAddress: 0x21, label: 'Desk A → server' },
        { channel: 'rx', direction: 'from-server', stationAddress: 0x21, label: 'server → Desk A' },
      ],
      handshake: [{ channel: 'rts', name: 'RTS', link: 'tx' }],
    };
    const saved = await put(w.analyst, `${url}/settings`, settings);
    expect(saved.status, JSON.stringify(saved.body)).toBe(200);
    const started = await w.analyst.post(`${url}/decode`);
    expect(started.status).toBe(202);
    expect(started.body.state).toBe('queued');
    const again = await w.analyst.post(`${url}/decode`);
    expect(again.status).toBe(409);
    const job = await waitForJob(w.viewer, url);
    expect(job).toMatchObject({ state: 'done', stage: 'done', bytesRead: cap.file.length, bytesTotal: cap.file.length, frames: cap.sent.length, error: null });
    const summary = (await w.viewer.get(url)).body as CaptureSummaryRow;
    expect(summary).toMatchObject({ status: 'decoded', frameCount: cap.sent.length });
  });

  it('pages forward through every frame in time order, matching what was encoded link by link', async () => {
    const { rows } = await allPages(w.viewer, url, '&events=0', 17);
    frames = framesOf(rows);
    expect(rows).toHaveLength(cap.sent.length);
    expect(new Set(rows.map((r) => r.id)).size).toBe(rows.length);
    for (let i = 1; i < rows.length; i++) expect(rows[i].t).toBeGreaterThanOrEqual(rows[i - 1].t);
    for (const link of cap.links) {
      const got = frames.filter((f) => f.link === link);
      const sent = cap.sent.filter((s) => s.link === link);
      expect(got.map((f) => [f.seq, f.status, f.kind])).toEqual(sent.map((s, i) => [i, s.status, s.kind]));
      // the list's hex is address..info without the FCS; a flipped bit shows in the octets as received
      got.forEach((f, i) => {
        if (sent[i].status === 'ok') expect(f.hex).toBe(Buffer.from(sent[i].bytes).toString('hex'));
      });
    }
    const first = frames.find((f) => f.link === 'tx' && f.kind === 'I')!;
    expect(first.stationName).toBe('Desk A');
    expect(first.summary).toBe(`I N(S)=0 N(R)=3 · 0x21 Desk A · 13 octets of information`);
  });

  it('pages backward to the same rows, and a page’s prevCursor leads back to the page before', async () => {
    const back = await allPages(w.viewer, url, '&events=0', 17, 'backward');
    expect(back.rows.map((r) => r.id)).toEqual(frames.map((f) => f.id));
    const p1 = (await w.viewer.get(`${url}/timeline?limit=10&events=0`)).body as TimelinePage;
    expect(p1.prevCursor).toBeNull();
    const p2 = (await w.viewer.get(`${url}/timeline?limit=10&events=0&cursor=${p1.nextCursor}`)).body as TimelinePage;
    expect(p2.rows.map((r) => r.id)).toEqual(frames.slice(10, 20).map((f) => f.id));
    const again = (await w.viewer.get(`${url}/timeline?limit=10&events=0&cursor=${p2.prevCursor}`)).body as TimelinePage;
    expect(again.rows.map((r) => r.id)).toEqual(p1.rows.map((r) => r.id));
    expect(again.nextCursor).toBeNull();
    const bad = await w.viewer.get(`${url}/timeline?cursor=not-a-cursor`);
    expect(bad.status).toBe(400);
    expect(bad.body.fields.cursor).toMatch(/cursor/);
  });

  it('merges line events between frames without losing or repeating rows at page boundaries', async () => {
    const whole = (await w.viewer.get(`${url}/timeline?limit=1000`)).body as TimelinePage;
    const events = whole.rows.filter((r) => r.type === 'event');
    expect(events.length).toBeGreaterThan(0);
    // RTS rises before the first frame and falls near the end (encoded handshake edges)
    const rts = events.filter((e) => e.type === 'event' && e.channel === 'rts');
    expect(rts.map((e) => (e.type === 'event' ? e.kind : ''))).toEqual(['rise', 'fall']);
    expect(rts[0].t).toBeLessThan(frames[0].t);
    for (const limit of [1, 4, 50]) {
      const paged = await allPages(w.viewer, url, '', limit);
      if (limit === 1) continue;
      expect(paged.rows.map((r) => `${r.type}${r.id}`)).toEqual(whole.rows.map((r) => `${r.type}${r.id}`));
      const backward = await allPages(w.viewer, url, '', limit, 'backward');
      expect(backward.rows.map((r) => `${r.type}${r.id}`)).toEqual(whole.rows.map((r) => `${r.type}${r.id}`));
    }
    const count = (await w.viewer.get(`${url}/timeline/count`)).body.count;
    expect(count).toBe(whole.rows.length);
  });

  it('filters by status, station, link, kind, command, time range, text and hex pattern', async () => {
    const n = async (query: string) => {
      const res = await w.viewer.get(`${url}/timeline/count?events=0&${query}`);
      expect(res.status, JSON.stringify(res.body)).toBe(200);
      const rows = framesOf((await allPages(w.viewer, url, `&events=0&${query}`, 9)).rows);
      expect(rows, query).toHaveLength(res.body.count);
      return rows;
    };
    const sentCount = (f: (s: SentFrame) => boolean) => cap.sent.filter(f).length;
    expect((await n('status=bad-fcs')).length).toBe(sentCount((s) => s.status === 'bad-fcs'));
    expect((await n('status=bad-fcs,residue')).length).toBe(sentCount((s) => s.status !== 'ok'));
    expect((await n(`station=${0x21}`)).every((f) => f.address === 0x21)).toBe(true);
    expect((await n(`station=${0x21}`)).length).toBe(sentCount((s) => s.link === 'tx'));
    expect((await n('link=rx')).length).toBe(sentCount((s) => s.link === 'rx'));
    expect((await n('kind=S')).length).toBe(sentCount((s) => s.kind === 'S'));
    expect((await n('command=RR')).length).toBe(sentCount((s) => s.kind === 'S'));
    expect((await n('kind=U&link=tx')).length).toBe(sentCount((s) => s.kind === 'U' && s.link === 'tx'));
    const from = frames[10].t;
    const to = frames[30].t;
    expect((await n(`from=${from}&to=${to}`)).map((f) => f.id)).toEqual(frames.filter((f) => f.t >= from && f.t <= to).map((f) => f.id));
    // text in the information field, case-insensitive, through the trigram index and without it (2 characters)
    const file42 = await n('text=file0042');
    expect(file42.map((f) => [f.link, f.seq])).toEqual([['tx', 42]]);
    expect((await n('text=.DA')).length).toBe(sentCount((s) => s.text.includes('.DA')));
    expect((await n('text=E%20')).length).toBe(sentCount((s) => s.text.includes('E ')));
    expect((await n('text=50%25')).length).toBe(0);
    // hex byte patterns: on byte boundaries, ?? for any byte
    expect((await n('hex=de%20ad%20be%20ef')).map((f) => f.seq)).toEqual([13, 13]);
    expect((await n('hex=de??beef')).map((f) => f.seq)).toEqual([13, 13]);
    expect((await n('hex=ea%20db')).length).toBe(0);
    expect((await n('hex=10')).every((f) => f.hex.match(/^(..)*?10/))).toBe(true);
    const badHex = await w.viewer.get(`${url}/timeline?hex=zz`);
    expect(badHex.status).toBe(400);
    expect(badHex.body.fields.hex).toBe('Use pairs of hex digits, ?? for any byte');
  });

  it('jumps to a time and to the next and previous damaged frame', async () => {
    const target = frames[25];
    const at = (await w.viewer.get(`${url}/timeline/at?t=${target.t}&events=0`)).body;
    const page = (await w.viewer.get(`${url}/timeline?events=0&limit=3&cursor=${at.cursor}`)).body as TimelinePage;
    expect(page.rows[0].id).toBe(frames.find((f) => f.t >= target.t)!.id);
    const damaged = frames.filter((f) => f.status !== 'ok');
    const next = await w.viewer.get(`${url}/frames/${frames[0].id}/damaged?dir=next`);
    expect(next.body).toEqual({ id: damaged[0].id, t: damaged[0].t });
    const prev = await w.viewer.get(`${url}/frames/${damaged[1].id}/damaged?dir=prev`);
    expect(prev.body).toEqual({ id: damaged[0].id, t: damaged[0].t });
    // no damaged frame that way is an answer, not a missing resource
    const none = await w.viewer.get(`${url}/frames/${frames[0].id}/damaged?dir=prev`);
    expect(none.status).toBe(200);
    expect(none.body).toEqual({ id: null, t: null });
  });

  it('shows a damaged frame’s octets, FCS and the single flipped bit the FCS points to', async () => {
    const sent = cap.sent.filter((s) => s.link === 'tx');
    const k = sent.findIndex((s) => s.status === 'bad-fcs');
    const frame = frames.filter((f) => f.link === 'tx')[k];
    const res = await w.viewer.get(`${url}/frames/${frame.id}`);
    expect(res.status).toBe(200);
    const d = res.body;
    // RFC 1662 §C / ISO/IEC 13239: a single-bit error is located by the FCS syndrome
    expect(d.frame.flippedBit).toBe(sent[k].flipped);
    expect(d.frame.fcsReceived).not.toBe(d.frame.fcsComputed);
    expect(d.frame.hexAll.length).toBe((sent[k].bytes.length + 2) * 2);
    expect(Array.isArray(d.frame.stuffed)).toBe(true);
    expect(d.prevId).toBe(frames.filter((f) => f.link === 'tx')[k - 1].id);
    expect(d.nextId).toBe(frames.filter((f) => f.link === 'tx')[k + 1].id);
    const other = await w.viewer.get(`${url}/frames/999999`);
    expect(other.status).toBe(404);
  });

  it('draws the clock, data and handshake samples around a frame from the stored file', async () => {
    const frame = frames.find((f) => f.link === 'tx' && f.seq === 20)!;
    const detail = (await w.viewer.get(`${url}/frames/${frame.id}`)).body;
    const res = await w.viewer.get(`${url}/frames/${frame.id}/waveform?bits=8`);
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    const win = res.body;
    expect(win.fromSample).toBeLessThan(detail.frame.firstSample);
    expect(win.toSample).toBeGreaterThan(detail.frame.lastSample);
    expect(win.samplePeriodSeconds).toBeCloseTo(1e-7);
    expect(win.channels.map((c: { name: string; role: string }) => [c.name, c.role])).toEqual([
      ['clk', 'clock'],
      ['tx', 'data'],
      ['rx', 'data'],
      ['rts', 'handshake'],
    ]);
    const clk = win.channels[0].changes as [number, number][];
    expect(clk[0][0]).toBe(win.fromSample);
    const rising = clk.slice(1).filter(([, v]) => v === 1).length;
    // one active clock edge per line bit in the window (6 samples per bit in this capture)
    expect(rising).toBeGreaterThanOrEqual(detail.frame.bitLength);
    for (const ch of win.channels) for (const [s] of ch.changes) expect(s >= win.fromSample && s <= win.toSample).toBe(true);
    expect(win.channels[3].changes).toEqual([[win.fromSample, 1]]);
  });

  it('summarises the run: duration, links, statuses, kinds, stations, bins and gaps', async () => {
    const res = await w.viewer.get(`${url}/overview`);
    expect(res.status).toBe(200);
    const o = res.body;
    expect(o.byStatus).toEqual({ ok: 0, 'bad-fcs': 0, abort: 0, short: 0, residue: 0, ...countBy(cap.sent, (s) => s.status) });
    expect(o.links.map((l: { name: string; frames: number; label: string }) => [l.name, l.frames, l.label])).toEqual([
      ['tx', 60, 'Desk A → server'],
      ['rx', 60, 'server → Desk A'],
    ]);
    expect(o.links[0].utilisation).toBeGreaterThan(0.3);
    expect(o.links[0].utilisation).toBeLessThanOrEqual(1);
    expect(o.byKind.I + o.byKind.S + o.byKind.U).toBe(cap.sent.length);
    expect(o.stations).toEqual([
      { address: 0x10, name: 'File server', frames: 60 },
      { address: 0x21, name: 'Desk A', frames: 60 },
    ]);
    const binned = Object.values(o.timeBins.counts as Record<string, number[]>).flat().reduce((a, b) => a + b, 0);
    expect(binned).toBe(cap.sent.length);
    expect(o.gapHistogram.counts.reduce((a: number, b: number) => a + b, 0)).toBe(cap.sent.length - 2);
    expect(o.durationSeconds).toBeGreaterThan(frames.at(-1)!.tEnd - 1e-9);
  });

  it('exports the filtered frames as CSV and JSON files', async () => {
    const csv = await w.viewer.get(`${url}/export.csv`);
    expect(csv.status).toBe(200);
    expect(csv.headers['content-disposition']).toBe('attachment; filename="boot-listing-frames.csv"');
    const lines = csv.text.trim().split('\n');
    expect(lines[0]).toBe('id,link,seq,t,tEnd,status,address,station,kind,command,ns,nr,pf,infoLength,fcsReceived,fcsComputed,flippedBit,hex,summary');
    expect(lines).toHaveLength(cap.sent.length + 1);
    const json = await w.viewer.get(`${url}/export.json?status=bad-fcs`).buffer(true).parse((res, cb) => {
      let s = '';
      res.on('data', (c: Buffer) => (s += c.toString()));
      res.on('end', () => cb(null, s));
    });
    const arr = JSON.parse(json.body as string);
    expect(arr).toHaveLength(cap.sent.filter((s) => s.status === 'bad-fcs').length);
    expect(arr[0]).toMatchObject({ status: 'bad-fcs' });
  });

  it('deletes the capture with its file, frames and jobs (owner only)', async () => {
    const summary = (await w.viewer.get(url)).body as CaptureSummaryRow;
    expect((await w.analyst.delete(url)).status).toBe(403);
    expect((await w.owner.delete(url)).status).toBe(204);
    expect((await w.viewer.get(url)).status).toBe(404);
    expect(fs.existsSync(path.join(w.env.dir, 'captures', summary.sha256))).toBe(false);
    const left = w.handle.sqlite.prepare('select (select count(*) from frames) + (select count(*) from line_events) + (select count(*) from decode_jobs) as n').get() as { n: number };
    expect(left.n).toBe(0);
    const search = w.handle.sqlite.prepare("select count(*) as n from frame_search where text like '%FILE%'").get() as { n: number };
    expect(search.n).toBe(0);
  });
});

describe('a raw capture without a clock, two links', () => {
  let w: World;
  beforeAll(async () => {
    w = await buildWorld();
  });
  afterAll(() => closeWorld(w));

  it('recovers the clock, decodes both links and reads the waveform window straight from its offset', async () => {
    const cap = recoveredRaw(80);
    const res = await upload(w.analyst, w.rigId, cap.file, 'port2.bin');
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body.format).toBe('raw');
    const url = `/api/rigs/${w.rigId}/captures/${res.body.id}`;
    const settings = {
      format: 'raw',
      sampleRate: 8e6,
      channelNames: ['tx', 'rx'],
      clock: null,
      links: [{ channel: 'tx' }, { channel: 'rx' }],
      bitRate: 1_000_000,
      encoding: 'nrzi',
      edge: 'rising',
    };
    const noRate = await put(w.analyst, `${url}/settings`, { ...settings, bitRate: null });
    expect(noRate.status).toBe(400);
    expect(noRate.body.fields.bitRate).toBe('Without a clock channel, enter the nominal bit rate');
    expect((await put(w.analyst, `${url}/settings`, settings)).status).toBe(200);
    expect((await w.analyst.post(`${url}/decode`)).status).toBe(202);
    const job = await waitForJob(w.viewer, url);
    expect(job).toMatchObject({ state: 'done', frames: cap.sent.length });
    const o = (await w.viewer.get(`${url}/overview`)).body;
    expect(o.byStatus).toEqual({ ok: 0, 'bad-fcs': 0, abort: 0, short: 0, residue: 0, ...countBy(cap.sent, (s) => s.status) });
    expect(o.samplePeriodSeconds).toBeCloseTo(1 / 8e6);
    const rows = framesOf((await allPages(w.viewer, url, '&events=0&link=rx', 1000)).rows);
    expect(rows.map((f) => f.status)).toEqual(cap.sent.filter((s) => s.link === 'rx').map((s) => s.status));
    const late = rows.at(-5)!;
    const win = (await w.viewer.get(`${url}/frames/${late.id}/waveform?bits=4`)).body;
    expect(win.channels.map((c: { name: string }) => c.name)).toEqual(['tx', 'rx']);
    const rx = win.channels[1].changes as [number, number][];
    expect(rx[0][0]).toBe(win.fromSample);
    // the levels come straight from the file: byte (sample) k, bit 1 is rx
    for (const [s, v] of rx.slice(1)) {
      expect((cap.file[s] >> 1) & 1).toBe(v);
      expect((cap.file[s - 1] >> 1) & 1).toBe(1 - v);
    }
  });

  it('deleting the rig removes its captures’ files and decoded rows, not only the rig row', async () => {
    const list = (await w.viewer.get(`/api/rigs/${w.rigId}/captures`)).body as CaptureSummaryRow[];
    expect(list.length).toBeGreaterThan(0);
    expect((await w.owner.delete(`/api/rigs/${w.rigId}`)).status).toBe(204);
    for (const c of list) expect(fs.existsSync(path.join(w.env.dir, 'captures', c.sha256))).toBe(false);
    const left = w.handle.sqlite.prepare('select (select count(*) from frames) + (select count(*) from line_events) + (select count(*) from decode_jobs) + (select count(*) from captures) as n').get() as { n: number };
    expect(left.n).toBe(0);
  });
});

describe('a frame log', () => {
  let w: World;
  beforeAll(async () => {
    w = await buildWorld();
  });
  afterAll(() => closeWorld(w));

  it('places every frame at the time its log line gives, including frames decoded from the first chunk', async () => {
    const times = [0.0125, 0.25, 1.5, ...Array.from({ length: 17 }, (_, i) => 2 + i * 0.125)];
    const lines = times.map((t, i) => {
      const body = new Uint8Array([0x21, 0x03, 0x41 + (i % 26)]);
      const fcs = fcs16(body);
      const octets = [...body, fcs & 0xff, fcs >> 8];
      return `${t} ${octets.map((b) => b.toString(16).padStart(2, '0')).join(' ')}`;
    });
    // one malformed line between good ones: the web app reads past it and says where
    const text = `# bench log\n${lines[0]}\n${lines[1]}\n0.75 21 03 zz\n${lines.slice(2).join('\n')}\n`;
    const res = await upload(w.analyst, w.rigId, Buffer.from(text), 'log.txt');
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body.format).toBe('framelog');
    const url = `/api/rigs/${w.rigId}/captures/${res.body.id}`;
    const settings = { format: 'framelog', clock: null, links: [{ channel: 'log' }], encoding: 'nrz', edge: 'rising', bitRate: 800000 };
    expect((await put(w.analyst, `${url}/settings`, settings)).status).toBe(200);
    expect((await w.analyst.post(`${url}/decode`)).status).toBe(202);
    const job = await waitForJob(w.viewer, url);
    expect(job).toMatchObject({ state: 'done', frames: times.length });
    expect(job.warnings).toHaveLength(1);
    expect(job.warnings[0]).toMatch(/line 4/);
    const page = (await w.viewer.get(`${url}/timeline?events=0`)).body as TimelinePage;
    const frames = page.rows.filter((r): r is TimelineFrame => r.type === 'frame');
    expect(frames.map((f) => f.status)).toEqual(times.map(() => 'ok'));
    frames.forEach((f, i) => expect(f.t).toBeCloseTo(times[i], 6));
  });
});
