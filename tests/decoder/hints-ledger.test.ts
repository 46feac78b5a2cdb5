// The second demo protocol (the ledger envelope of the invented Saltmarsh Ferry Company): a new
// user with none of its settings and no field map gets the frames, the directions, a map from
// field hints, the exchanges and the files the encoder wrote.
import { readFileSync } from 'node:fs';
import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { applyFieldMap, CPM_ENVELOPE, pairExchanges, parseFieldMap, validateFieldMap, CPM_FILE_CALL_SET, fileCallsOf, missingRanges, recoverFiles } from '../../shared/decoder/calls';
import { LEDGER_MAP_DOCUMENT, LEDGER_OP, ledgerRequest, ledgerResponse } from '../../shared/decoder/encode';
import { bytesSource, discover, framesUnder, type Discovery, findSettings } from '../../shared/decoder/finder';
import { draftFieldMap, fieldHints, type HintReport } from '../../shared/decoder/hints';
import { createDecoder, type DecodedFrame } from '../../shared/decoder';
import { CREW, FARES, TICKETS, TIDE_DAYS, tideRecord } from '../../server/cli/samples-saltmarsh';
import { decodeSample, manifest } from './hints-helpers';

const saltmarsh = manifest.otherRigs.find((r) => r.key === 'saltmarsh')!;
const rawEntry = saltmarsh.captures.find((c) => c.file === 'saltmarsh-office.raw')!;
const reference = parseFieldMap(JSON.parse(readFileSync(`samples/${saltmarsh.fieldMap}`, 'utf8')));
const sha = (b: Uint8Array) => createHash('sha256').update(b).digest('hex');

/** what the encoder wrote, record by record (the last record padded with ^Z) */
function padded(data: Uint8Array): Uint8Array {
  const out = new Uint8Array(Math.ceil(data.length / 128) * 128).fill(0x1a);
  out.set(data);
  return out;
}

describe('the ledger envelope in the field-map language', () => {
  it('describes what the encoder writes: length octet, big-endian record number, no tag', () => {
    expect(validateFieldMap(LEDGER_MAP_DOCUMENT).ok).toBe(true);
    const req = applyFieldMap(reference, ledgerRequest(LEDGER_OP.FETCH, 'TIDES84.TBL', 256), 'request');
    expect(req).toMatchObject({ callName: 'fetch', fileName: 'TIDES84.TBL', recordNumber: 256, tag: null, problems: [] });
    const resp = applyFieldMap(reference, ledgerResponse(LEDGER_OP.FETCH, 0, 256, tideRecord(256)), 'response');
    expect(resp.recordNumber).toBe(256);
    expect(resp.recordData).toEqual(tideRecord(256));
  });

  it('reports a length octet the frame disagrees with', () => {
    const bytes = ledgerRequest(LEDGER_OP.FETCH, 'CREW.LST', 1);
    bytes[1]++;
    expect(applyFieldMap(reference, bytes, 'request').problems).toEqual(['the length field “len” says 14 octets follow it, the frame has 13']);
  });

  it('reads 24-bit big-endian numbers', () => {
    const map = parseFieldMap({ name: 'n', version: 1, layouts: [{ id: 'a', fields: [{ id: 'n', type: 'u24be', role: 'record-number' }] }] });
    expect(applyFieldMap(map, Uint8Array.of(0x01, 0x02, 0x03), 'request').recordNumber).toBe(0x010203);
  });

  it('takes file calls from the map’s calls, and the CP/M ones when a map names none', () => {
    expect(fileCallsOf(reference)).toMatchObject({ opens: [0x31], sequentialRead: 0x32, randomWrites: [0x33] });
    expect(fileCallsOf(CPM_ENVELOPE)).toBe(CPM_FILE_CALL_SET);
  });
});

describe('the Saltmarsh demo samples', () => {
  for (const e of saltmarsh.captures) {
    it(`${e.file} decodes to the encoded frames, exchanges and files with the reference map`, () => {
      const { frames, period, links } = decodeSample(e);
      const counts: Record<string, Record<string, number>> = {};
      for (const f of frames) {
        counts[f.link] ??= { ok: 0, 'bad-fcs': 0 };
        counts[f.link][f.status] = (counts[f.link][f.status] ?? 0) + 1;
      }
      expect(counts).toEqual(e.expected.frames);
      const { exchanges } = pairExchanges(frames, [], { map: reference, links, samplePeriodSeconds: period });
      const count = (o: string) => exchanges.filter((x) => x.outcome === o).length;
      expect({ total: exchanges.length, answered: count('answered'), retried: count('retried'), unanswered: count('unanswered') }).toEqual(e.expected.exchanges);
      const files = recoverFiles(exchanges, fileCallsOf(reference)).map((f) => ({
        key: f.key,
        recordCount: f.recordCount,
        missing: missingRanges(f.coverage).flatMap(([a, b]) => Array.from({ length: b - a + 1 }, (_, i) => a + i)),
        sha256: sha(f.bytes),
      }));
      expect(files).toEqual(e.expected.files);
    });
  }

  it('is not the built-in envelope: the CP/M map pairs no exchange about a file', () => {
    const { frames, period, links } = decodeSample(rawEntry);
    const { exchanges } = pairExchanges(frames, [], { map: CPM_ENVELOPE, links, samplePeriodSeconds: period });
    expect(recoverFiles(exchanges).filter((f) => f.recordCount > 0)).toEqual([]);
  });
});

describe('a new user who accepts every default', () => {
  const bytes = new Uint8Array(readFileSync(`samples/${rawEntry.file}`));
  const names = rawEntry.settings.channelNames!;
  let found: Discovery;
  let frames: DecodedFrame[];
  let period: number;
  let hints: HintReport;

  it('gets the line settings from the settings finder: NRZ, inverted, no clock, FCS-16', async () => {
    // only the sample rate, which a raw file cannot tell
    found = await discover(bytesSource(bytes), { sampleRate: 4e6, channelNames: names, map: CPM_ENVELOPE });
    const best = found.finder.best!;
    expect(best).toMatchObject({ format: 'raw', encoding: 'nrz', invert: true, clock: null, fcs: 16 });
    // the line runs 0.4 % fast: 502 000 bit/s
    expect(best.bitRate! / 500_000).toBeCloseTo(1.004, 2);
    expect(best.links.map((l) => l.channel).sort()).toEqual([...names].sort());
  });

  it('gets each link’s direction and station, though the channel names say neither', () => {
    for (const l of rawEntry.settings.links) {
      const v = found.directions.find((d) => d.link === l.channel)!;
      expect([l.channel, v.direction, v.station]).toEqual([l.channel, l.direction, l.stationAddress]);
    }
    // the built-in map's response bit does not fit this protocol and says so, instead of misleading
    expect(found.directions[0].reasons.join(' ')).toMatch(/does not seem to fit the protocol/);
    expect(found.roster.map((s) => s.address)).toEqual([0x61, 0x62]);
  });

  it('decodes the whole capture with the suggested settings', () => {
    const s = found.settings!;
    const dec = createDecoder(
      { format: s.format, sampleRate: s.sampleRate!, channelNames: s.channelNames, rawWidth: s.rawWidth, data: s.links.map((l) => l.channel), bitRate: s.bitRate!, encoding: s.encoding, invert: s.invert, fcs: s.fcs },
      { frame: (f) => frames.push(f), event: () => {} },
    );
    frames = [];
    dec.push(bytes);
    dec.finish();
    period = dec.samplePeriodSeconds!;
    const ok = frames.filter((f) => f.status === 'ok').length;
    expect(ok).toBe(Object.values(rawEntry.expected.frames).reduce((n, c) => n + c.ok, 0));
  });

  it('gets from field hints the length octet, the file name, the big-endian record number and the records', () => {
    const links = found.settings!.links.map((l) => ({ link: l.channel, direction: l.direction as 'to-server' | 'from-server', station: l.stationAddress ?? undefined }));
    hints = fieldHints(frames, links);
    const g = (d: 'request' | 'response', sel: number | null) => hints.groups.find((x) => x.direction === d && x.selector === sel)!;
    expect(hints.responseMask).toBe(0);
    expect(g('request', null).hints.find((h) => h.role === 'length')).toMatchObject({ offset: 1, type: 'u8', lengthAdd: 0 });
    expect(g('response', null).hints.find((h) => h.role === 'length')).toMatchObject({ offset: 1 });
    expect(g('request', LEDGER_OP.FETCH).hints.find((h) => h.role === 'file-name')).toMatchObject({ offset: 2, type: 'cpm-name' });
    const rn = g('request', LEDGER_OP.FETCH).hints.find((h) => h.role === 'record-number')!;
    expect(rn).toMatchObject({ offset: 13, length: 2, type: 'u16be', number: { endian: 'big', bytes: 2 } });
    // records 253 … 258 of the tide table cross 256: the carry settles the octet order
    expect(rn.summary).toMatch(/carrying into the next octet/);
    expect(g('request', LEDGER_OP.STORE).hints.find((h) => h.role === 'record-data')).toMatchObject({ offset: 15, length: 128 });
    expect(g('response', LEDGER_OP.FETCH).hints.find((h) => h.role === 'record-data')).toMatchObject({ offset: 5 });
    expect(g('response', LEDGER_OP.FETCH).hints.find((h) => h.role === 'record-number')).toMatchObject({ offset: 3, type: 'u16be' });
    // no tag: nothing counts across calls and comes back in the answer
    expect(hints.groups.flatMap((x) => x.hints).some((h) => h.role === 'tag')).toBe(false);
    expect(hints.calls.map((c) => [c.selector, c.file])).toEqual([
      [LEDGER_OP.LOCATE, 'open'],
      [LEDGER_OP.FETCH, 'read-sequential'],
      [LEDGER_OP.STORE, 'write-random'],
      [LEDGER_OP.RELEASE, null],
    ]);
  });

  it('starts a field map from the hints that pairs the exchanges and recovers the files byte for byte', () => {
    const doc = draftFieldMap(hints, { name: 'Saltmarsh, from hints' });
    const v = validateFieldMap(doc);
    expect(v.ok, JSON.stringify(!v.ok && v.errors)).toBe(true);
    const map = parseFieldMap(doc);
    const links = found.settings!.links.map((l) => ({ link: l.channel, direction: l.direction as 'to-server' | 'from-server', station: l.stationAddress ?? undefined }));
    const { exchanges } = pairExchanges(frames, [], { map, links, samplePeriodSeconds: period });
    const count = (o: string) => exchanges.filter((x) => x.outcome === o).length;
    expect({ total: exchanges.length, answered: count('answered'), retried: count('retried'), unanswered: count('unanswered') }).toEqual(rawEntry.expected.exchanges);
    const files = new Map(recoverFiles(exchanges, fileCallsOf(map)).map((f) => [f.key, f]));
    expect([...files.keys()].sort()).toEqual(['0:CREW.LST', '0:FARES84.DAT', '0:TICKETS.LOG', '0:TIDES84.TBL']);
    expect(files.get('0:FARES84.DAT')!.bytes).toEqual(padded(FARES));
    expect(files.get('0:FARES84.DAT')!.endKnown).toBe(true);
    expect(files.get('0:CREW.LST')!.bytes).toEqual(padded(CREW));
    expect(files.get('0:TICKETS.LOG')!.bytes).toEqual(padded(TICKETS));
    const tides = files.get('0:TIDES84.TBL')!;
    for (const d of TIDE_DAYS) expect(tides.bytes.subarray(d * 128, d * 128 + 128)).toEqual(tideRecord(d));
    expect(missingRanges(tides.coverage)).toEqual([[0, TIDE_DAYS[0] - 1]]);
  });

  it('decodes the windows the finder read again under its choice, with the capture’s channel names', async () => {
    const { result, finder } = await findSettings(bytesSource(bytes), { sampleRate: 4e6, channelNames: names });
    const { frames: again } = framesUnder(finder, result.best!, { sampleRate: 4e6, channelNames: names }, 50);
    expect(again.length).toBe(50);
    expect(again.every((f) => names.includes(f.link))).toBe(true);
  });
});
