// A decoded capture with many exchanges for `npm run bench:ui`'s schedule figures, written straight
// into the bench server's database: per-port wiring of four stations, each exchange a request, an
// answer and the station's request line up and down, one in 40 retried and one in 97 unanswered.
// Rows as the decode worker and call stage store them (frames, line events, a done decode run, a
// done call run with its exchanges), so the schedule reads them through its ordinary path. Decoding
// a capture this long through the encoder would take minutes of the bench's time for no more truth
// about drawing it.
import Database from 'better-sqlite3';
import { dbOf } from '../db/client';
import { ensureBuiltInMap } from '../services/calls/field-map-store';

const STATIONS = [0x21, 0x22, 0x23, 0x24];
const BIT = 1 / 800_000;

export function addScheduleBenchCapture(dbPath: string, rigId: number, exchanges: number, uploadedBy: number | null): number {
  const db = new Database(dbPath);
  db.pragma('journal_mode = WAL');
  db.pragma('busy_timeout = 10000');
  try {
    const links = STATIONS.flatMap((s, i) => [
      { channel: `p${i + 1}_txd`, direction: 'to-server', stationAddress: s, label: `port ${i + 1} in` },
      { channel: `p${i + 1}_rxd`, direction: 'from-server', stationAddress: s, label: `port ${i + 1} out` },
    ]);
    const settings = {
      format: 'framelog',
      sampleRate: null,
      rawWidth: 1,
      channelNames: [],
      clock: null,
      links,
      handshake: STATIONS.map((_, i) => ({ channel: `p${i + 1}_rts`, name: 'RTS', link: `p${i + 1}_txd` })),
      bitRate: 800_000,
      encoding: 'nrzi',
      edge: 'rising',
      invert: false,
    };
    const now = Date.now();
    return db.transaction(() => {
      const captureId = Number(
        db
          .prepare("insert into captures (rig_id, name, size, sha256, format, detect_reason, settings, uploaded_by, created_at) values (?, ?, 0, ?, 'framelog', 'bench', ?, ?, ?)")
          .run(rigId, `bench-schedule-${exchanges}.framelog`, `bench-${now}`, JSON.stringify(settings), uploadedBy, now).lastInsertRowid,
      );
      const jobId = Number(
        db
          .prepare("insert into decode_jobs (capture_id, state, stage, settings, sample_period, links, last_sample, issues, created_at, finished_at) values (?, 'done', 'done', ?, ?, ?, 0, '[]', ?, ?)")
          .run(captureId, JSON.stringify(settings), BIT, JSON.stringify(links.map((l) => l.channel)), now, now).lastInsertRowid,
      );
      const frame = db.prepare(
        `insert into frames (job_id, capture_id, link, seq, first_sample, last_sample, t, t_end, status, address, control, kind, command, ns, nr, pf, info_length, bit_length, bytes, stuffed, hex, text)
         values (?, ?, ?, ?, ?, ?, ?, ?, 'ok', ?, 0, 'I', 'I', 0, 0, 1, 20, 192, ?, '[]', ?, '')`,
      );
      const event = db.prepare('insert into line_events (job_id, capture_id, link, channel, kind, sample, t) values (?, ?, null, ?, ?, ?, ?)');
      const mapId = ensureBuiltInMap(dbOf(db), rigId);
      const version = db.prepare('select latest_version from field_maps where id = ?').pluck().get(mapId) as number;
      const runId = Number(
        db
          .prepare("insert into call_runs (capture_id, decode_job_id, map_id, map_version, state, exchanges, files, created_at, finished_at) values (?, ?, ?, ?, 'done', ?, 0, ?, ?)")
          .run(captureId, jobId, mapId, version, exchanges, now, now).lastInsertRowid,
      );
      db.prepare('insert into capture_call_layers (capture_id, map_id, map_version, current_run_id) values (?, null, null, ?)').run(captureId, runId);
      const exchange = db.prepare(
        `insert into exchanges (run_id, capture_id, station, call_code, call_name, tag, file_name, record_number, status, status_meaning, request_frame_id, retry_frame_ids, response_frame_ids,
           t_request, t_request_end, t_response, rtt, outcome, retries, service_delay, user, answer)
         values (?, ?, ?, 20, 'read sequential', ?, 'LEDGER.DAT', ?, 0, 'ok', ?, '[]', ?, ?, ?, ?, ?, ?, ?, ?, 0, null)`,
      );
      const bytes = Buffer.alloc(24, 0x41);
      const seq = new Map<string, number>();
      let t = 0;
      for (let k = 0; k < exchanges; k++) {
        const i = k % STATIONS.length;
        const station = STATIONS[i];
        const rise = t;
        const tReq = rise + 40 * BIT;
        const reqEnd = tReq + 192 * BIT;
        const unanswered = k % 97 === 96;
        const retried = !unanswered && k % 40 === 39;
        const tResp = unanswered ? null : reqEnd + (300 + (k % 7) * 40) * BIT;
        const link = (dir: 'txd' | 'rxd') => `p${i + 1}_${dir}`;
        const next = (l: string) => {
          const n = seq.get(l) ?? 0;
          seq.set(l, n + 1);
          return n;
        };
        event.run(jobId, captureId, `p${i + 1}_rts`, 'rise', rise / BIT, rise);
        const reqId = Number(frame.run(jobId, captureId, link('txd'), next(link('txd')), tReq / BIT, reqEnd / BIT, tReq, reqEnd, station, bytes, '41').lastInsertRowid);
        const respIds: number[] = [];
        let end = reqEnd;
        if (tResp !== null) {
          end = tResp + 192 * BIT;
          respIds.push(Number(frame.run(jobId, captureId, link('rxd'), next(link('rxd')), tResp / BIT, end / BIT, tResp, end, station, bytes, '41').lastInsertRowid));
        }
        event.run(jobId, captureId, `p${i + 1}_rts`, 'fall', end / BIT, end);
        exchange.run(runId, captureId, station, k & 0xff, k >> 2, reqId, JSON.stringify(respIds), tReq, reqEnd, tResp, tResp === null ? null : tResp - reqEnd, unanswered ? 'unanswered' : retried ? 'retried' : 'answered', retried ? 1 : 0, tResp === null ? null : tResp - rise);
        t = end + 60 * BIT;
      }
      db.prepare('update decode_jobs set frames = (select count(*) from frames where job_id = ?), events = (select count(*) from line_events where job_id = ?), last_sample = ? where id = ?').run(jobId, jobId, t / BIT, jobId);
      db.prepare('update captures set current_job_id = ? where id = ?').run(jobId, captureId);
      return captureId;
    }).immediate();
  } finally {
    db.close();
  }
}
