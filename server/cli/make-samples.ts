// `npm run samples`: writes the demo captures in samples/ from our own invented scenario, the
// "Wrenfield Parish Office, 1983" rig: a vestry file server (0x10) and three desk stations on
// their own synchronous ports at 800 kbit/s, NRZI. One morning session is scripted once and
// then recorded the way different logic analyzers and adapters would have recorded it, plus
// the same session served by a replacement server. samples/manifest.json lists every file
// with its decode settings and what a decoder must find in it; its `otherRigs` hold a second
// invented scenario with a file service of its own (samples-saltmarsh.ts).
import { createHash } from 'node:crypto';
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { BDOS } from '../../shared/decoder/calls';
import { bootCalls, directoryCalls, encodeSession, nrziOctets, readFileCalls, requestInfo, sessionFrameLog, Tags, textOutputCalls, toRecords, updateRecordCalls, type EncodedSession, type ScriptCall, type SessionScript, writeFileCalls, encodeEpisode, type EncodedEpisode, type EpisodeCall, type EpisodeScript, seededRng, renderWaveform, type WaveformFaults, csvChunks, frameLogChunks, rawChunks, vcdChunks } from '../../shared/decoder/encode';
import type { CaptureSettingsInput } from '../../shared/schemas/captures';
import { saltmarshReadme, writeSaltmarsh } from './samples-saltmarsh';

const OUT = process.argv[2] ?? 'samples';
const BIT_RATE = 800_000;
const SERVER = 0x10;
const STATIONS = [
  { address: 0x21, name: 'Registry desk', port: 'p1' },
  { address: 0x22, name: 'Treasurer desk', port: 'p2' },
  { address: 0x23, name: 'Choir office', port: 'p3' },
] as const;

// ---------------------------------------------------------------- the invented files

const ascii = (s: string) => new TextEncoder().encode(s);

function bootImage(): Uint8Array {
  // an invented loader image: a banner and seeded filler, 1 KB (8 records)
  const img = new Uint8Array(1024);
  const rng = seededRng(1983);
  for (let i = 0; i < img.length; i++) img[i] = Math.floor(rng() * 256);
  img.set(ascii('WRENFIELD PARISH NET LOADER 1.2 - VESTRY SERVER 10H\r\n'), 16);
  return img;
}

const BAPTISMS = ascii(
  [
    '1983-01-09 HARTLEY, ROSE ELLEN        PARENTS HARTLEY, JAMES & MARY      ',
    '1983-02-13 OKONJO, DANIEL ADE         PARENTS OKONJO, PETER & GRACE      ',
    '1983-03-06 THORNBURY, ALICE MAY       PARENTS THORNBURY, JOHN & EDITH    ',
    '1983-04-03 PELLOW, SAMUEL JOHN        PARENTS PELLOW, ARTHUR & JOAN      ',
    '1983-05-08 QUILL, MARGARET ANNE       PARENTS QUILL, HENRY & RUTH        ',
  ].join('\r\n') + '\r\n',
);

const HYMNS = ascii(
  [
    'WRENFIELD ST MARY - HYMNS FOR DECEMBER 1983',
    '04 DEC  ADVENT 2   MATINS 23, 118, 407   EVENSONG 12, 240',
    '11 DEC  ADVENT 3   MATINS 31, 96, 212    EVENSONG 8, 377',
    '18 DEC  ADVENT 4   MATINS 44, 150, 319   EVENSONG 17, 265',
    '25 DEC  CHRISTMAS  EUCHARIST 60, 61, 62, 425',
  ].join('\r\n') + '\r\n',
);

const ACCOUNT_BEFORE = new Uint8Array(128).fill(0x20);
ACCOUNT_BEFORE.set(ascii('ORGAN FUND          0412.50  LAST ENTRY 1983-11-27'));
const ACCOUNT_AFTER = new Uint8Array(128).fill(0x20);
ACCOUNT_AFTER.set(ascii('ORGAN FUND          0437.50  LAST ENTRY 1983-12-04'));

/** records of ACCOUNTS.DAT, as the directory listing and the open answer give them */
const ACCOUNTS_RECORDS = 5;

const LISTING = [
  { name: 'BAPTISMS.DAT', rc: 3 },
  { name: 'MARRIAGE.DAT', rc: 5 },
  { name: 'HYMNS.TXT', rc: 3 },
  { name: 'ACCOUNTS.DAT', rc: ACCOUNTS_RECORDS },
  { name: 'WRENBOOT.SYS', rc: 8, attributes: { readOnly: true, system: true } },
];

// ---------------------------------------------------------------- the session script

interface Variant {
  /** server delay of a call (seconds), from a seeded draw */
  delay: (draw: number) => number;
  pollDelay: number;
  /** the replacement server hides system files from directory searches */
  hidesSystemFiles: boolean;
}

const ORIGINAL: Variant = { delay: (d) => 0.0004 + d * 0.0006, pollDelay: 0.0003, hidesSystemFiles: false };
const REPLACEMENT: Variant = { delay: (d) => 0.0011 + d * 0.0012, pollDelay: 0.0007, hidesSystemFiles: true };

function script(v: Variant): SessionScript {
  const rng = seededRng(7);
  const timed = (calls: ScriptCall[]) => calls.map((c) => ({ ...c, serverDelay: v.delay(rng()) }));
  const o = (tags: Tags) => ({ tags, delay: 0 });

  // Registry desk: network boot, directory listing, read the baptism register
  const t1 = new Tags();
  const boot = bootCalls('WRENBOOT.SYS', bootImage(), o(t1));
  boot[3].damagedRequests = 1; // a bad joint on the station's transmit line
  const listed = v.hidesSystemFiles ? LISTING.filter((f) => !f.attributes?.system) : LISTING;
  const listing = directoryCalls('????????.???', listed, o(t1));
  const baptisms = readFileCalls('BAPTISMS.DAT', BAPTISMS, o(t1));
  baptisms[2].damagedResponses = 1; // the answer is lost; the station asks again
  const registry = timed([...boot, ...listing, ...baptisms]);

  // Treasurer desk: update one account record under a record lock
  const t2 = new Tags();
  const treasurer = timed(updateRecordCalls('ACCOUNTS.DAT', 4, ACCOUNT_BEFORE, ACCOUNT_AFTER, { ...o(t2), fileRecords: ACCOUNTS_RECORDS }));
  treasurer[3].damagedResponses = 1;

  // Choir office: read the hymn list, print it on the vestry printer, say so on the console
  const t3 = new Tags();
  const hymnText = new TextDecoder().decode(HYMNS);
  const choir = timed([
    ...readFileCalls('HYMNS.TXT', HYMNS, o(t3)),
    ...textOutputCalls(BDOS.LIST_OUTPUT, hymnText, { ...o(t3), chunk: 96 }),
    ...textOutputCalls(BDOS.CONSOLE_OUTPUT, 'Hymn list printed.\r\n', o(t3)),
  ]);
  choir[6].damagedRequests = 1;
  // at the end the choir office asks for a file the server never answers about
  const tag = t3.next();
  choir.push({
    request: requestInfo(BDOS.OPEN_FILE, tag, 0, { fcb: { name: 'ANTHEMS.TXT' } }),
    response: null,
    serverDelay: 0,
    sends: 2,
  });

  return {
    bitRate: BIT_RATE,
    pollDelay: v.pollDelay,
    retryAfter: 0.003,
    stations: [
      { address: 0x21, port: 'p1', start: 0.0002, rts: true, calls: registry },
      { address: 0x22, port: 'p2', start: 0.0005, rts: true, calls: treasurer },
      { address: 0x23, port: 'p3', start: 0.0008, rts: true, calls: choir },
    ],
  };
}

// ---------------------------------------------------------------- the busy evening (timing episode)

// Advent Sunday evening: all three desks at work while the vestry server goes round its ports,
// polling each in turn. Two timing races show: the treasurer desk's send loop cannot keep its
// serial controller fed at 800 kbit/s, so its write requests run dry at the same octet (the
// controller closes the frame with the FCS, the rest follows at once as a fragment, and the desk
// sends the record again); and the server, busy with the others, passes the waiting choir office
// by for three rounds. The registry desk answers late (an older machine), and one clock period
// of the registry's line is stretched inside a frame.

const COLLECTION = ascii(
  [
    'ADVENT SUNDAY 1983 - COLLECTIONS, ST MARY WRENFIELD',
    'MATINS      PLATE 0041.20   ENVELOPES 0112.00   ORGAN FUND 0012.50',
    'EVENSONG    PLATE 0027.85   ENVELOPES 0064.00   ORGAN FUND 0008.00',
    'CHOIR TEA   0009.40         BOOKSTALL 0015.75   BELLS FUND 0004.10',
    'TOTAL FOR THE DAY 0294.80   COUNTED BY E. THORNBURY, R. PELLOW   ',
  ].join('\r\n') + '\r\n',
);

/** octet of the treasurer's write requests at which its transmitter runs dry */
const TREASURER_RUNS_DRY = 98;

function eveningScript(): EpisodeScript {
  const rng = seededRng(1224);
  const timed = (calls: ScriptCall[], from: number, gap: number): EpisodeCall[] =>
    calls.map((c, i) => ({ at: from + i * gap, request: c.request, response: c.response, serverDelay: 0.0004 + rng() * 0.0004 }));
  const registry = timed(readFileCalls('BAPTISMS.DAT', BAPTISMS, { tags: new Tags(), delay: 0 }), 0.0005, 0.0015);
  const treasurer = timed(writeFileCalls('COLLECT.DAT', COLLECTION, { tags: new Tags(), delay: 0 }), 0.0008, 0.0012);
  // the first and third records run dry at the same octet: a race in the send loop strikes at the same place
  for (const k of [1, 3]) treasurer[k].underrun = { atOctet: TREASURER_RUNS_DRY, end: 'fcs' };
  const choir = timed(readFileCalls('HYMNS.TXT', HYMNS, { tags: new Tags(), delay: 0 }), 0.004, 0.001);
  return {
    bitRate: BIT_RATE,
    wiring: 'per-port',
    stepTime: 0.00003,
    retryAfter: 0.002,
    stations: [
      { address: 0x21, port: 'p1', calls: registry, answerDelay: 0.00012 },
      { address: 0x22, port: 'p2', calls: treasurer },
      { address: 0x23, port: 'p3', calls: choir },
    ],
    // from its first wait after 4 ms, the server passes the choir office by for three rounds
    skips: [{ station: 0x23, rounds: 3, after: 0.004 }],
  };
}

/** What a decoder must find in the evening: frames, exchanges and files as for the session, and the races. */
function expectedEvening(e: EncodedEpisode, stretchedFrame: { link: string; seq: number; octet: number }) {
  const frames: Record<string, Record<string, number>> = {};
  for (const l of e.links) frames[l.name] = { ok: l.frames.filter((f) => f.status === 'ok').length, 'bad-fcs': 0 };
  const count = (o: string) => e.exchanges.filter((x) => x.outcome === o).length;
  const collection = padded(COLLECTION, 0x1a);
  const whole = (key: string, bytes: Uint8Array) => ({ key, recordCount: bytes.length / 128, missing: [] as number[], sha256: sha256(bytes) });
  return {
    frames,
    exchanges: { total: e.exchanges.length, answered: count('answered'), retried: count('retried'), unanswered: count('unanswered') },
    files: [whole('0:BAPTISMS.DAT', padded(BAPTISMS, 0x1a)), whole('0:COLLECT.DAT', collection), whole('0:HYMNS.TXT', padded(HYMNS, 0x1a))].sort((a, b) => a.key.localeCompare(b.key)),
    timing: {
      order: e.rts.map((r) => r.station),
      rounds: e.rounds.length,
      visits: e.visits.length,
      underruns: e.underruns.map((u) => ({ link: u.link, seq: u.seq, octetOffset: u.atOctet, end: u.end, fragmentSeq: u.fragmentSeq })),
      skipped: e.skipped.map((s) => ({ station: s.station, round: s.round })),
      starved: e.waits.filter((w) => w.skipped >= 2).map((w) => ({ station: w.station, passedOver: w.skipped })),
      stretched: [stretchedFrame],
      /** service delays by station, seconds (request line up → the poll's first bit, at bit resolution) */
      longestWait: Object.fromEntries(e.rts.map((r) => [r.station, Math.max(...e.waits.filter((w) => w.station === r.station).map((w) => (w.servedBit - w.riseBit) / e.bitRate))])),
    },
  };
}

// ---------------------------------------------------------------- what a decoder must find

const sha256 = (b: Uint8Array) => createHash('sha256').update(b).digest('hex');

function padded(data: Uint8Array, pad: number): Uint8Array {
  const rs = toRecords(data, pad);
  const out = new Uint8Array(rs.length * 128);
  rs.forEach((r, i) => out.set(r, i * 128));
  return out;
}

interface ExpectedFile {
  key: string;
  recordCount: number;
  missing: number[];
  sha256: string;
}

function filesOf(stations: number[]): ExpectedFile[] {
  const out: ExpectedFile[] = [];
  const whole = (key: string, bytes: Uint8Array) => out.push({ key, recordCount: bytes.length / 128, missing: [], sha256: sha256(bytes) });
  if (stations.includes(0x21)) {
    whole('boot:WRENBOOT.SYS', padded(bootImage(), 0));
    whole('0:BAPTISMS.DAT', padded(BAPTISMS, 0x1a));
  }
  if (stations.includes(0x22)) {
    // the open answer sizes the file (rc); only record 4 travels
    const bytes = new Uint8Array(ACCOUNTS_RECORDS * 128);
    bytes.set(ACCOUNT_AFTER, 4 * 128);
    const missing = Array.from({ length: ACCOUNTS_RECORDS }, (_, i) => i).filter((i) => i !== 4);
    out.push({ key: '0:ACCOUNTS.DAT', recordCount: ACCOUNTS_RECORDS, missing, sha256: sha256(bytes) });
  }
  if (stations.includes(0x23)) whole('0:HYMNS.TXT', padded(HYMNS, 0x1a));
  return out.sort((a, b) => a.key.localeCompare(b.key));
}

function expected(session: EncodedSession, links: string[], cut: number) {
  const frames: Record<string, Record<string, number>> = {};
  for (const l of session.links) {
    if (!links.includes(l.name)) continue;
    const inside = l.frames.filter((f) => f.endBit < cut);
    frames[l.name] = { ok: inside.filter((f) => !f.damaged).length, 'bad-fcs': inside.filter((f) => f.damaged).length };
  }
  // exchanges need both links of a port
  const ports = STATIONS.filter((s) => links.includes(`${s.port}_txd`) && links.includes(`${s.port}_rxd`)).map((s) => s.address as number);
  const ex = session.exchanges.filter((e) => ports.includes(e.station) && e.lastBit < cut);
  const count = (o: string) => ex.filter((e) => e.outcome === o).length;
  return {
    frames,
    exchanges: { total: ex.length, answered: count('answered'), retried: count('retried'), unanswered: count('unanswered') },
    files: cut < Infinity ? filesOf(ports).filter((f) => !f.key.endsWith('BAPTISMS.DAT')) : filesOf(ports),
  };
}

// ---------------------------------------------------------------- writing the captures

interface ManifestEntry {
  file: string;
  title: string;
  description: string;
  server: 'original' | 'replacement';
  settings: CaptureSettingsInput;
  cli: string;
  expected: ReturnType<typeof expected> & { timing?: ReturnType<typeof expectedEvening>['timing'] };
  bytes: number;
}

const stationOf = (link: string) => STATIONS.find((s) => link.startsWith(s.port + '_'))!;

/** Where a capture of these links ends: after their last frame (or at `cut`), with a short tail of fill. */
function endOf(session: EncodedSession, links: string[], cut = Infinity): number {
  let end = 0;
  for (const l of session.links) {
    if (!links.includes(l.name)) continue;
    for (const f of l.frames) if (f.endBit < cut) end = Math.max(end, f.endBit);
  }
  return end + 48;
}

function settingsFor(format: CaptureSettingsInput['format'], links: string[], o: { clock?: boolean; rts?: boolean; sampleRate?: number; rawWidth?: 1 | 2; channelNames?: string[] }): CaptureSettingsInput {
  const ports = [...new Set(links.map((l) => stationOf(l).port))];
  return {
    format,
    sampleRate: o.sampleRate ?? null,
    rawWidth: o.rawWidth ?? 1,
    channelNames: o.channelNames ?? [],
    clock: o.clock ? 'clk' : null,
    links: links.map((l) => {
      const s = stationOf(l);
      const up = l.endsWith('_txd');
      return {
        channel: l,
        direction: up ? 'to-server' : 'from-server',
        stationAddress: s.address,
        label: `port ${s.port.slice(1)}, ${up ? `${s.name} → server` : `server → ${s.name}`}`,
      };
    }),
    handshake: o.rts ? ports.map((p) => ({ channel: `${p}_rts`, name: 'RTS', link: `${p}_txd` })) : [],
    bitRate: BIT_RATE,
    encoding: 'nrzi',
    edge: 'rising',
    invert: false,
  };
}

function cliFor(file: string, s: CaptureSettingsInput): string {
  const parts = [`npm run --silent decode -- ${OUT}/${file}`, `--format ${s.format}`];
  if (s.sampleRate) parts.push(`--sample-rate ${s.sampleRate}`);
  if (s.format === 'raw') parts.push(`--raw-width ${s.rawWidth}`);
  if (s.channelNames && s.channelNames.length) parts.push(`--channels ${s.channelNames.join(',')}`);
  if (s.clock) parts.push(`--clock ${s.clock}`);
  parts.push(`--data ${s.links.map((l) => l.channel).join(',')}`);
  if (s.handshake && s.handshake.length) parts.push(`--handshake ${s.handshake.map((h) => h.channel).join(',')}`);
  if ((!s.clock || s.format === 'octets') && s.bitRate) parts.push(`--bit-rate ${s.bitRate}`);
  parts.push(`--encoding ${s.encoding}`);
  if (s.invert) parts.push('--invert');
  return parts.join(' ');
}

function waveformOf(session: EncodedSession, links: string[], o: { samplePeriod: number; clock: boolean; rts: boolean; faults?: WaveformFaults; cut?: number }) {
  const chosen = session.links.filter((l) => links.includes(l.name));
  const ports = new Set<string>(chosen.map((l) => stationOf(l.name).port));
  const end = endOf(session, links, o.cut);
  return renderWaveform({
    links: chosen.map((l) => ({ name: l.name, bits: l.bits.subarray(0, end) })),
    samplesPerBit: 1 / (o.samplePeriod * BIT_RATE),
    samplePeriodSeconds: o.samplePeriod,
    encoding: 'nrzi',
    clock: o.clock ? { name: 'clk', edge: 'rising' } : undefined,
    handshake: o.rts ? session.rts.filter((r) => ports.has(r.name.split('_')[0])) : [],
    faults: o.faults,
  });
}

function concat(chunks: Iterable<Uint8Array>): Uint8Array {
  const parts = [...chunks].map((c) => c.slice());
  const out = new Uint8Array(parts.reduce((n, p) => n + p.length, 0));
  let at = 0;
  for (const p of parts) {
    out.set(p, at);
    at += p.length;
  }
  return out;
}

function readme(entries: ManifestEntry[]): string {
  const out: string[] = [
    '# Demo captures: Wrenfield Parish Office, 1983',
    '',
    'Invented for the demo and made by our own encoder: regenerate them with `npm run samples`',
    '(server/cli/make-samples.ts; it also writes this file and `manifest.json`). Do not edit by hand.',
    '',
    'The rig: the vestry file server (address 0x10) serves three desk stations, each on its own',
    'synchronous port at 800 kbit/s, NRZI, LSB first, SDLC framing with the 16-bit FCS. The server',
    'is the primary and polls each port; every frame carries the station’s address. On port n,',
    '`pn_txd` is the station → server line, `pn_rxd` the server → station line and `pn_rts` the',
    'station’s request-to-send line; `clk` is the bit clock where it was captured.',
    '',
    '| port | station | address |',
    '|---|---|---|',
    ...STATIONS.map((s) => `| ${s.port.slice(1)} | ${s.name} | 0x${s.address.toString(16)} |`),
    '',
    'The information fields follow the built-in field map “CP/M call envelope”',
    '(shared/decoder/calls/cpm-envelope.ts). The morning session: the registry desk boots over the',
    'network (WRENBOOT.SYS, 8 records), lists the directory and reads BAPTISMS.DAT; the treasurer',
    'desk updates record 4 of ACCOUNTS.DAT under a record lock; the choir office reads HYMNS.TXT,',
    'prints it on the vestry printer (list output) and finally asks for ANTHEMS.TXT, which the',
    'server never answers. A few frames are damaged on the line (bad FCS): a boot request sent',
    'again, and lost answers that make the station repeat its call.',
    '',
    'The Advent evening (wrenfield-evening-races.raw) is a timing episode: the server polls its ports',
    'in turn, the treasurer desk writes COLLECT.DAT but its send loop runs dry at the same octet twice',
    '(transmitter under-runs), the server passes the waiting choir office by for three rounds',
    '(starvation), the registry desk answers late and one clock period is stretched inside a frame.',
    'Its `expected.timing` lists the visiting order, rounds, visits, under-runs with their octet',
    'offsets, skipped visits, starved waits, the stretched frame and the longest wait per station.',
    '',
    '`manifest.json` lists every capture with `settings` in the shape of the capture settings form',
    '(shared/schemas/captures.ts: format, sample rate, raw width, channel names, clock, links with',
    'direction and station address, handshake lines, bit rate, encoding, edge) and `expected`: the',
    'frames per link by status, the exchanges by outcome and the recovered files (records, missing',
    'records, SHA-256) that tests/decoder/samples.test.ts checks.',
    '',
  ];
  for (const e of entries) {
    const s = e.settings;
    const ch = s.format === 'raw' ? `bits 0–${s.channelNames!.length - 1}: ${s.channelNames!.join(', ')}` : [s.clock, ...s.links.map((l) => l.channel), ...(s.handshake ?? []).map((h) => h.channel)].filter(Boolean).join(', ');
    const x = e.expected;
    const frames = Object.entries(x.frames).map(([l, c]) => `${l} ${c.ok} ok${c['bad-fcs'] ? ` + ${c['bad-fcs']} bad FCS` : ''}`).join('; ');
    out.push(
      `## ${e.file}`,
      '',
      `${e.title}. ${e.description}`,
      '',
      `- format: ${s.format}${s.sampleRate ? `, ${Number(s.sampleRate) / 1e6} MHz sample rate` : ''}${s.format === 'raw' ? `, ${s.rawWidth} byte(s) per sample` : ''}`,
      `- channels: ${ch}`,
      `- clock: ${s.clock ? `\`${s.clock}\`, data sampled on the rising edge` : 'none — recover it from the data at 800 kbit/s'}`,
      `- links: ${s.links.map((l) => `\`${l.channel}\` ${l.direction} (station 0x${l.stationAddress!.toString(16)})`).join(', ')}`,
      `- handshake: ${(s.handshake ?? []).map((h) => `\`${h.channel}\` RTS of \`${h.link}\``).join(', ') || 'none'}`,
      `- expect: ${frames}; ${x.exchanges.total} exchanges (${x.exchanges.answered} answered, ${x.exchanges.retried} retried, ${x.exchanges.unanswered} unanswered)` +
        (x.files.length ? `; files ${x.files.map((f) => `${f.key.replace(/^0:/, '')} (${f.recordCount} records${f.missing.length ? `, ${f.missing.length} missing` : ''})`).join(', ')}` : ''),
      ...(x.timing
        ? [
            `- timing: ${x.timing.rounds} rounds of the server (order ${x.timing.order.map((a) => `0x${a.toString(16)}`).join(' → ')}), ` +
              `${x.timing.underruns.length} under-runs at octet ${[...new Set(x.timing.underruns.map((u) => u.octetOffset))].join(', ')}, ` +
              `${x.timing.skipped.length} skipped visits, starved: ${x.timing.starved.map((w) => `0x${w.station.toString(16)} (${w.passedOver} rounds)`).join(', ') || 'none'}`,
          ]
        : []),
      '',
      '```',
      e.cli,
      '```',
      '',
    );
  }
  return out.join('\n');
}

function main(): void {
  mkdirSync(OUT, { recursive: true });
  const original = encodeSession(script(ORIGINAL));
  const replacement = encodeSession(script(REPLACEMENT));
  const all = original.links.map((l) => l.name);
  const port = (p: string) => [`${p}_txd`, `${p}_rxd`];
  const manifest: ManifestEntry[] = [];
  const add = (file: string, bytes: Uint8Array, e: Omit<ManifestEntry, 'file' | 'cli' | 'bytes' | 'expected'>, session: EncodedSession, cut = Infinity) => {
    writeFileSync(join(OUT, file), bytes);
    manifest.push({ file, ...e, cli: cliFor(file, e.settings), bytes: bytes.length, expected: expected(session, e.settings.links.map((l) => l.channel), cut) });
  };

  // 1. The whole session, every port, clocked, raw 16-bit samples at 4 MHz.
  {
    const w = waveformOf(original, all, { samplePeriod: 2.5e-7, clock: true, rts: true });
    const names = w.channels.map((c) => c.name);
    add('wrenfield-session-clocked.raw', concat(rawChunks(w, { width: 2 })), {
      title: 'Morning session, all three ports (raw samples, clocked)',
      description: 'Every port of the vestry server: clock, both data lines and RTS of each station. The registry desk boots and lists the directory, the treasurer updates an account under a record lock, the choir office prints the hymn list.',
      server: 'original',
      settings: settingsFor('raw', all, { clock: true, rts: true, sampleRate: 4_000_000, rawWidth: 2, channelNames: names }),
    }, original);
  }
  // 2. The same session served by the replacement server, recorded the same way.
  {
    const w = waveformOf(replacement, all, { samplePeriod: 2.5e-7, clock: true, rts: true });
    const names = w.channels.map((c) => c.name);
    add('wrenfield-session-replacement.raw', concat(rawChunks(w, { width: 2 })), {
      title: 'Morning session on the replacement server (raw samples, clocked)',
      description: 'The same stations and calls answered by a replacement server: slower answers and port polling, and it hides system files from directory searches, so the listing ends one entry early.',
      server: 'replacement',
      settings: settingsFor('raw', all, { clock: true, rts: true, sampleRate: 4_000_000, rawWidth: 2, channelNames: names }),
    }, replacement);
  }
  // 3. Registry desk port as a value change dump with the clock (network boot, listing, register read).
  {
    const links = port('p1');
    // up to the end of the directory listing: the first exchange about BAPTISMS.DAT starts after
    const firstRead = original.exchanges.find((e) => e.station === 0x21 && e.callCode === BDOS.OPEN_FILE)!;
    const cut = firstRead.firstBit - 8;
    const w = waveformOf(original, links, { samplePeriod: 1e-7, clock: true, rts: true, cut });
    add('wrenfield-registry-boot.vcd', concat(vcdChunks(w, { scopes: Object.fromEntries(w.channels.map((c) => [c.name, ['vestry', 'port1']])) })), {
      title: 'Registry desk: network boot and directory listing (VCD, clocked)',
      description: 'Port 1 only, from the start of the session to the end of the directory listing: the station loads WRENBOOT.SYS record by record (one boot request arrives damaged and is sent again), then lists the directory.',
      server: 'original',
      settings: settingsFor('vcd', links, { clock: true, rts: true }),
    }, original, cut);
  }
  // 4. Choir office port as a CSV change table without the clock (clock recovered, 1.5 % fast).
  {
    const links = port('p3');
    const w = waveformOf(original, links, { samplePeriod: 1e-7, clock: false, rts: true, faults: { rateError: 0.015, jitter: 0.08, seed: 3 } });
    add('wrenfield-choir-print.csv', concat(csvChunks(w)), {
      title: 'Choir office: hymn list read and printed (CSV, no clock)',
      description: 'Port 3 data and RTS lines as change rows, no clock channel: the bit clock is recovered from the data (the line runs 1.5 % fast). The station reads HYMNS.TXT and sends it to the vestry printer.',
      server: 'original',
      settings: settingsFor('csv', links, { clock: false, rts: true }),
    }, original);
  }
  // 5. Treasurer desk port as raw 8-bit samples without the clock.
  {
    const links = port('p2');
    const w = waveformOf(original, links, { samplePeriod: 1.25e-7, clock: false, rts: true, faults: { rateError: -0.01, jitter: 0.1, seed: 5 } });
    add('wrenfield-treasurer-update.raw', concat(rawChunks(w, { width: 1 })), {
      title: 'Treasurer desk: locked record update (raw samples, no clock)',
      description: 'Port 2 data and RTS at 8 MHz, no clock channel (the line runs 1 % slow): open ACCOUNTS.DAT, lock record 4, read it, write it back, unlock, close. One answer is lost and asked for again.',
      server: 'original',
      settings: settingsFor('raw', links, { clock: false, rts: true, sampleRate: 8_000_000, rawWidth: 1, channelNames: w.channels.map((c) => c.name) }),
    }, original);
  }
  // 6. Server → registry desk as line-bit octets from a synchronous adapter.
  {
    const link = original.links.find((l) => l.name === 'p1_rxd')!;
    const s = settingsFor('octets', ['p1_rxd'], {});
    s.channelNames = ['p1_rxd'];
    add('wrenfield-registry-rxd.octets', nrziOctets(link.bits), {
      title: 'Server → registry desk as line octets (synchronous adapter)',
      description: 'The receive line of port 1 as an adapter hands it over: NRZI line levels, 8 bits per byte, least significant first. Only one direction, so no exchanges pair.',
      server: 'original',
      settings: s,
    }, original);
  }
  // 7. The whole session as a hex frame log.
  {
    add('wrenfield-session.framelog', concat(frameLogChunks(sessionFrameLog(original), { comment: 'Wrenfield Parish Office, 1983 - vestry server ports 1-3, frames with FCS' })), {
      title: 'Morning session as a frame log',
      description: 'Every frame of every port, one line each: time in seconds, link, octets with the FCS. Damaged frames keep their bad FCS.',
      server: 'original',
      settings: settingsFor('framelog', all, {}),
    }, original);
  }

  // 8. The busy evening: the server's round, an under-running desk and a starved one, clocked with RTS.
  {
    const e = encodeEpisode(eveningScript());
    for (const u of e.underruns) {
      // the fragment must not read as a call, or the pairing would see a phantom request: keep the data so
      if (u.fragmentCarriesCall) throw new Error(`the evening's fragment ${u.link}#${u.fragmentSeq} reads as an I frame: choose another TREASURER_RUNS_DRY`);
    }
    // the first registry answer that carries a record
    const late = e.links.find((l) => l.name === 'p1_rxd')!.frames.find((f) => f.role === 'response' && f.bytes.length > 100)!;
    const octet = 60;
    const w = renderWaveform({
      links: e.links.map((l) => ({ name: l.name, bits: l.bits })),
      samplesPerBit: 5,
      samplePeriodSeconds: 2.5e-7,
      encoding: 'nrzi',
      clock: { name: 'clk', edge: 'rising' },
      handshake: e.rts,
      // one clock period inside a registry answer held 0.4 bit times long
      faults: { stretchedClock: [{ bit: late.startBit + 8 * octet + 3, by: 0.4 }] },
    });
    const names = w.channels.map((c) => c.name);
    const settings = settingsFor('raw', all, { clock: true, rts: true, sampleRate: 4_000_000, rawWidth: 2, channelNames: names });
    const bytes = concat(rawChunks(w, { width: 2 }));
    const file = 'wrenfield-evening-races.raw';
    writeFileSync(join(OUT, file), bytes);
    manifest.push({
      file,
      title: 'Advent evening: the server’s round, an under-running desk and a starved one (raw samples, clocked)',
      description:
        'The vestry server polls its three ports in turn. The treasurer desk’s write requests run dry at octet ' +
        `${TREASURER_RUNS_DRY} twice (valid FCS, the rest as a fragment, the record sent again), the choir office waits three rounds ` +
        'while the server passes it by, the registry desk answers late, and one clock period inside a registry answer is stretched.',
      server: 'original',
      settings,
      cli: cliFor(file, settings),
      bytes: bytes.length,
      expected: expectedEvening(e, { link: 'p1_rxd', seq: late.seq, octet }),
    });
  }

  // the second scenario, with its own file service (samples-saltmarsh.ts)
  const saltmarsh = writeSaltmarsh(OUT, cliFor);
  writeFileSync(join(OUT, 'README.md'), [readme(manifest), ...saltmarshReadme(saltmarsh)].join('\n'));
  writeFileSync(join(OUT, 'manifest.json'), JSON.stringify({ rig: 'Wrenfield Parish Office, 1983', server: SERVER, stations: STATIONS, captures: manifest, otherRigs: [saltmarsh] }, null, 2) + '\n');
  const written = [...manifest, ...saltmarsh.captures];
  const total = written.reduce((n, m) => n + m.bytes, 0);
  process.stdout.write(written.map((m) => `${m.file}: ${(m.bytes / 1024).toFixed(0)} KB`).join('\n') + `\ntotal ${(total / 1e6).toFixed(2)} MB\n`);
}

main();
