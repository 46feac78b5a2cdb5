// The second demo scenario for `npm run samples`: the invented "Saltmarsh Ferry Company, 1984"
// office network, whose file service speaks the ledger envelope (shared/decoder/encode/
// ledger-envelope.ts) instead of the built-in CP/M call envelope. The depot file server polls two
// office stations, each on its own synchronous port at 500 kbit/s, NRZ, with the receivers wired
// inverted; the capture has no clock and channel names that do not say which way a line runs.
// The settings finder, the direction inference and field hints have to work all of that out.
import { createHash } from 'node:crypto';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileCallsOf, missingRanges, recoverFiles, parseFieldMap, pairExchanges } from '../../shared/decoder/calls';
import { encodeSession, sessionFrameLog, type EncodedSession, type ScriptCall, type SessionScript, LEDGER_MAP_DOCUMENT, LEDGER_RECORD_BYTES, ledgerFetchCalls, ledgerReadCalls, ledgerWriteCalls, seededRng, renderWaveform, collect, frameLogChunks, rawChunks } from '../../shared/decoder/encode';
import { createDecoder, type DecodedFrame } from '../../shared/decoder';
import type { CaptureSettingsInput } from '../../shared/schemas/captures';

const BIT_RATE = 500_000;
const SAMPLE_RATE = 4_000_000;
export const SALTMARSH = {
  key: 'saltmarsh',
  name: 'Saltmarsh Ferry Company, 1984',
  description:
    'The ferry company’s office network: a depot file server and two office stations on their own synchronous ports. ' +
    'Its file service is not the CP/M call envelope: learn it with field hints.',
  lineSettings: { bitRate: BIT_RATE, encoding: 'nrz', clockEdge: 'rising', bitOrder: 'lsb-first' },
  server: 0x50,
  stations: [
    { address: 0x61, name: 'Ticket office', port: 's1' },
    { address: 0x62, name: 'Harbour office', port: 's2' },
  ],
  fieldMap: 'saltmarsh-ledger-map.json',
} as const;

/** Capture channel names: serial chip channels A and B, which do not say which way they run. */
const CHANNEL = { s1_txd: 'sio1_a', s1_rxd: 'sio1_b', s2_txd: 'sio2_b', s2_rxd: 'sio2_a' } as Record<string, string>;

const ascii = (s: string) => new TextEncoder().encode(s);

export const FARES = ascii(
  [
    'SALTMARSH FERRY CO - FARES FROM 1 APRIL 1984',
    'FOOT PASSENGER ADULT SINGLE      0.80   RETURN 1.40',
    'FOOT PASSENGER CHILD SINGLE      0.40   RETURN 0.70',
    'BICYCLE                          0.30',
    'CAR AND DRIVER UNDER 4.5M        3.20   RETURN 5.90',
    'CAR AND DRIVER OVER 4.5M         4.10   RETURN 7.60',
    'VAN OR LIGHT LORRY               5.50',
    'CATTLE PER HEAD                  0.90',
    'SEASON TICKET FOOT PASSENGER    38.00 PER QUARTER',
    'FIRST SAILING 06.40  LAST SAILING 21.15',
  ].join('\r\n') + '\r\n',
);

export const CREW = ascii(
  ['CREW LIST - MV MARSH WREN', 'MASTER     T. ELLERBY', 'MATE       R. PENHALLOW', 'ENGINEER   D. QUARRIE', 'DECKHAND   S. ABERNETHY', 'DECKHAND   P. MOSSOP'].join('\r\n') + '\r\n',
);

/** the ticket office's log of the morning's sailings, written to the server */
export const TICKETS = ascii(
  Array.from({ length: 14 }, (_, i) => {
    const rng = seededRng(400 + i);
    const t = 6 * 60 + 40 + i * 40;
    return `1984-04-02 ${String(Math.floor(t / 60)).padStart(2, '0')}.${String(t % 60).padStart(2, '0')} FOOT ${10 + Math.floor(rng() * 30)} CARS ${Math.floor(rng() * 9)}`;
  }).join('\r\n') + '\r\n',
);

/** The tide table: one 128-byte record per tide day, 400 records, generated from a seed. */
export const TIDE_RECORDS = 400;
export function tideRecord(n: number): Uint8Array {
  const rng = seededRng(1000 + n);
  const t = (h: number) => `${String(Math.floor(h) % 24).padStart(2, '0')}:${String(Math.floor((h % 1) * 60)).padStart(2, '0')}`;
  const hw = (n * 0.84 + rng() * 0.2) % 12;
  const line = `TIDE DAY ${String(n).padStart(3, '0')} HW ${t(hw)} ${(4.2 + rng()).toFixed(1)}M LW ${t(hw + 6.2)} ${(0.6 + rng() * 0.5).toFixed(1)}M HW ${t(hw + 12.4)} ${(4.2 + rng()).toFixed(1)}M`;
  const r = new Uint8Array(LEDGER_RECORD_BYTES).fill(0x20);
  r.set(ascii(line).subarray(0, LEDGER_RECORD_BYTES - 2));
  r[LEDGER_RECORD_BYTES - 2] = 13;
  r[LEDGER_RECORD_BYTES - 1] = 10;
  return r;
}
/** the harbour office looks up the days around the turn of the year's 256th tide */
export const TIDE_DAYS = [253, 254, 255, 256, 257, 258];

export function saltmarshScript(): SessionScript {
  const rng = seededRng(84);
  const timed = (calls: ScriptCall[]) => calls.map((c) => ({ ...c, serverDelay: 0.0006 + rng() * 0.0009, thinkTime: 0.0002 + rng() * 0.0004 }));
  const ticket = timed([...ledgerReadCalls('FARES84.DAT', FARES, 0), ...ledgerWriteCalls('TICKETS.LOG', TICKETS, 0)]);
  ticket[3].damagedRequests = 1; // a bad joint on the ticket office's line
  const harbour = timed([...ledgerFetchCalls('TIDES84.TBL', tideRecord, TIDE_RECORDS, TIDE_DAYS, 0), ...ledgerReadCalls('CREW.LST', CREW, 0)]);
  harbour[4].damagedResponses = 1; // the answer is lost; the station asks again
  return {
    bitRate: BIT_RATE,
    pollDelay: 0.0004,
    retryAfter: 0.003,
    stations: SALTMARSH.stations.map((s, i) => ({ address: s.address, port: s.port, start: 0.0003 + i * 0.0004, calls: i === 0 ? ticket : harbour })),
  };
}

const sha256 = (b: Uint8Array) => createHash('sha256').update(b).digest('hex');

interface Entry {
  file: string;
  title: string;
  description: string;
  server: 'original';
  settings: CaptureSettingsInput;
  cli: string;
  expected: unknown;
  bytes: number;
}

function settingsFor(format: 'raw' | 'framelog', session: EncodedSession): CaptureSettingsInput {
  return {
    format,
    sampleRate: format === 'raw' ? SAMPLE_RATE : null,
    rawWidth: 1,
    channelNames: format === 'raw' ? session.links.map((l) => CHANNEL[l.name]) : [],
    clock: null,
    links: session.links.map((l) => {
      const st = SALTMARSH.stations.find((s) => l.name.startsWith(`${s.port}_`))!;
      const up = l.direction === 'to-server';
      return { channel: CHANNEL[l.name], direction: l.direction, stationAddress: st.address, label: `port ${st.port.slice(1)}, ${up ? `${st.name} → server` : `server → ${st.name}`}` };
    }),
    handshake: [],
    bitRate: format === 'raw' ? BIT_RATE : null,
    encoding: 'nrz',
    edge: 'rising',
    // the receivers' inversion is on the line; a frame log holds the octets already
    invert: format === 'raw',
  };
}

/** What a decode with the reference map must find, computed by decoding the frames the encoder wrote. */
function expectedOf(session: EncodedSession) {
  const frames: Record<string, Record<string, number>> = {};
  for (const l of session.links) frames[CHANNEL[l.name]] = { ok: l.frames.filter((f) => !f.damaged).length, 'bad-fcs': l.frames.filter((f) => f.damaged).length };
  const count = (o: string) => session.exchanges.filter((e) => e.outcome === o).length;
  // the files are what the script's calls carried; built from the encoder's own data, not a decode
  const files = [
    { key: '0:CREW.LST', data: CREW },
    { key: '0:FARES84.DAT', data: FARES },
    { key: '0:TICKETS.LOG', data: TICKETS },
  ].map(({ key, data }) => {
    const n = Math.ceil(data.length / LEDGER_RECORD_BYTES);
    const bytes = new Uint8Array(n * LEDGER_RECORD_BYTES).fill(0x1a);
    bytes.set(data);
    return { key, recordCount: n, missing: [] as number[], sha256: sha256(bytes) };
  });
  const tides = new Uint8Array((TIDE_DAYS[TIDE_DAYS.length - 1] + 1) * LEDGER_RECORD_BYTES);
  for (const d of TIDE_DAYS) tides.set(tideRecord(d), d * LEDGER_RECORD_BYTES);
  files.push({ key: '0:TIDES84.TBL', recordCount: TIDE_DAYS[TIDE_DAYS.length - 1] + 1, missing: Array.from({ length: TIDE_DAYS[0] }, (_, i) => i), sha256: sha256(tides) });
  files.sort((a, b) => a.key.localeCompare(b.key));
  return { frames, exchanges: { total: session.exchanges.length, answered: count('answered'), retried: count('retried'), unanswered: count('unanswered') }, files };
}

/** Decodes the frame log with the reference map: a check that the map and the encoder agree before the samples are written. */
function selfCheck(session: EncodedSession, log: Uint8Array, want: ReturnType<typeof expectedOf>): void {
  const frames: DecodedFrame[] = [];
  const dec = createDecoder({ format: 'framelog' }, { frame: (f) => frames.push(f), event: () => {} });
  dec.push(log);
  dec.finish();
  const map = parseFieldMap(LEDGER_MAP_DOCUMENT);
  const links = session.links.map((l) => ({ link: l.name, direction: l.direction, station: l.station ?? undefined }));
  const { exchanges } = pairExchanges(frames, [], { map, links, samplePeriodSeconds: dec.samplePeriodSeconds! });
  const files = recoverFiles(exchanges, fileCallsOf(map))
    .filter((f) => f.recordCount > 0)
    .map((f) => ({ key: f.key, recordCount: f.recordCount, missing: missingRanges(f.coverage).flatMap(([a, b]) => Array.from({ length: b - a + 1 }, (_, i) => a + i)), sha256: sha256(f.bytes) }));
  if (JSON.stringify(files) !== JSON.stringify(want.files) || exchanges.length !== want.exchanges.total) {
    throw new Error(`the ledger map does not decode the Saltmarsh session as encoded: ${JSON.stringify({ files, exchanges: exchanges.length })}`);
  }
}

/** Writes the Saltmarsh captures and the ledger map; returns the manifest block of the second rig. */
export function writeSaltmarsh(out: string, cliFor: (file: string, s: CaptureSettingsInput) => string) {
  const session = encodeSession(saltmarshScript());
  const want = expectedOf(session);
  const captures: Entry[] = [];
  const add = (file: string, bytes: Uint8Array, e: Omit<Entry, 'file' | 'cli' | 'bytes' | 'expected'>) => {
    writeFileSync(join(out, file), bytes);
    captures.push({ file, ...e, cli: cliFor(file, e.settings), bytes: bytes.length, expected: want });
  };
  const end = session.links.reduce((m, l) => Math.max(m, l.frames[l.frames.length - 1].endBit), 0) + 48;
  const w = renderWaveform({
    links: session.links.map((l) => ({ name: CHANNEL[l.name], bits: l.bits.subarray(0, end) })),
    samplesPerBit: SAMPLE_RATE / BIT_RATE,
    samplePeriodSeconds: 1 / SAMPLE_RATE,
    encoding: 'nrz',
    invert: true,
    faults: { rateError: 0.004, jitter: 0.06, seed: 84 },
  });
  const raw = collect(rawChunks(w, { width: 1 }));
  add('saltmarsh-office.raw', raw, {
    title: 'Saltmarsh ferry office: fares, tide table, crew list and the ticket log (raw samples, no clock)',
    description:
      'Both ports of the depot server at 4 MHz, no clock channel, NRZ with inverted receivers. The ticket office reads FARES84.DAT and writes TICKETS.LOG; the harbour office looks up six days of the tide table (records 253–258, across record 256) and reads CREW.LST. One request arrives damaged and one answer is lost.',
    server: 'original',
    settings: settingsFor('raw', session),
  });
  const log = collect(frameLogChunks(sessionFrameLog(session).map((f) => ({ ...f, link: CHANNEL[f.link!] })), { comment: 'Saltmarsh Ferry Company, 1984 - depot server ports 1-2, frames with FCS' }));
  selfCheck(session, collect(frameLogChunks(sessionFrameLog(session))), want);
  add('saltmarsh-office.framelog', log, {
    title: 'Saltmarsh ferry office as a frame log',
    description: 'The same session, one frame per line: time in seconds, link, octets with the FCS.',
    server: 'original',
    settings: settingsFor('framelog', session),
  });
  writeFileSync(join(out, SALTMARSH.fieldMap), JSON.stringify(LEDGER_MAP_DOCUMENT, null, 2) + '\n');
  return { ...SALTMARSH, captures };
}

/** The README section of the second rig. */
export function saltmarshReadme(block: ReturnType<typeof writeSaltmarsh>): string[] {
  const out = [
    `# Second demo: ${block.name}`,
    '',
    'Invented as well, and made by the same encoder. The depot file server polls two office stations,',
    'each on its own synchronous port at 500 kbit/s, NRZ, with the receivers wired inverted. No clock',
    'was captured, and the channels carry the serial chip’s channel names (`sio1_a`, `sio1_b`, …), which',
    'do not say which way a line runs: the settings finder and the direction inference find that out.',
    '',
    '| port | station | address |',
    '|---|---|---|',
    ...block.stations.map((s) => `| ${s.port.slice(1)} | ${s.name} | 0x${s.address.toString(16)} |`),
    '',
    'Its file service is not the CP/M call envelope but the “ledger envelope”',
    '(shared/decoder/encode/ledger-envelope.ts): op, a length octet, the file name, a big-endian',
    `record number, then the record; no tag, so answers pair with requests by order. \`${block.fieldMap}\``,
    'is the reference map, for checking what field hints find; a map started from field hints decodes',
    'the exchanges and recovers the files as well.',
    '',
  ];
  for (const e of block.captures) {
    out.push(`## ${e.file}`, '', `${e.title}. ${e.description}`, '', '```', e.cli, '```', '');
  }
  return out;
}
