// Every demo capture in samples/ decodes to what the script that made it encoded
// (server/cli/make-samples.ts writes the expected counts into samples/manifest.json).
import { execFileSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { CPM_ENVELOPE, CallLayer, callLayerRoles, type Exchange, missingRanges, recoverFiles } from '../../shared/decoder/calls';
import { callKeyFromFieldMap, callShapeFromFieldMap, FaultDesk, type OctetTimingDetail, type UnderrunDetail } from '../../shared/decoder/faults';
import { TimingTap } from '../../shared/decoder/timing';
import { createDecoder, type DecoderOptions, type DecodedFrame } from '../../shared/decoder';
import { captureSettingsSchema, type CaptureSettingsInput } from '../../shared/schemas/captures';
import { decodeCli } from './cli-command';

interface ExpectedFile {
  key: string;
  recordCount: number;
  missing: number[];
  sha256: string;
}
interface Entry {
  file: string;
  server: 'original' | 'replacement';
  settings: CaptureSettingsInput;
  cli: string;
  expected: {
    frames: Record<string, Record<string, number>>;
    exchanges: { total: number; answered: number; retried: number; unanswered: number };
    files: ExpectedFile[];
    /** timing episodes: the server's round and the races the encoder put in */
    timing?: {
      order: number[];
      rounds: number;
      visits: number;
      underruns: { link: string; seq: number; octetOffset: number; end: 'fcs' | 'abort'; fragmentSeq: number | null }[];
      skipped: { station: number; round: number }[];
      starved: { station: number; passedOver: number }[];
      stretched: { link: string; seq: number; octet: number }[];
      longestWait: Record<string, number>;
    };
  };
}

const manifest = JSON.parse(readFileSync('samples/manifest.json', 'utf8')) as { captures: Entry[] };

function decoderOptions(s: CaptureSettingsInput): DecoderOptions {
  return {
    format: s.format,
    sampleRate: s.sampleRate == null ? undefined : Number(s.sampleRate),
    rawWidth: s.rawWidth,
    channelNames: s.channelNames && s.channelNames.length ? s.channelNames : undefined,
    clock: s.clock ?? undefined,
    data: s.links.map((l) => l.channel),
    handshake: (s.handshake ?? []).map((h) => h.channel),
    bitRate: s.bitRate == null ? undefined : Number(s.bitRate),
    encoding: s.encoding,
    edge: s.edge,
    invert: s.invert,
  };
}

function decodeEntry(e: Entry) {
  const frames: DecodedFrame[] = [];
  const exchanges: Exchange[] = [];
  const { links, rts } = callLayerRoles(captureSettingsSchema.parse(e.settings));
  // the sample period is known once the decoder has read the capture's header
  let layer = null as CallLayer | null;
  const callLayer = () => (layer ??= new CallLayer({ map: CPM_ENVELOPE, links, rts, samplePeriodSeconds: dec.samplePeriodSeconds! }, { exchange: (x) => exchanges.push(x) }));
  const dec = createDecoder(decoderOptions(e.settings), {
    frame(f) {
      frames.push(f);
      callLayer().frame(f);
    },
    event(ev) {
      callLayer().event(ev);
    },
  });
  const bytes = readFileSync(`samples/${e.file}`);
  for (let at = 0; at < bytes.length; at += 1 << 16) dec.push(bytes.subarray(at, at + (1 << 16)));
  dec.finish();
  layer?.finish();
  return { dec, frames, exchanges };
}

describe('demo samples', () => {
  it('lists one capture of each input format, and a replacement-server capture', () => {
    expect(new Set(manifest.captures.map((c) => c.settings.format))).toEqual(new Set(['vcd', 'csv', 'raw', 'octets', 'framelog']));
    expect(manifest.captures.some((c) => c.settings.format === 'raw' && c.settings.clock)).toBe(true);
    expect(manifest.captures.some((c) => c.settings.format === 'raw' && !c.settings.clock)).toBe(true);
    expect(manifest.captures.filter((c) => c.server === 'replacement')).toHaveLength(1);
  });

  for (const entry of manifest.captures) {
    describe(entry.file, () => {
      it('has settings the capture settings form accepts', () => {
        expect(captureSettingsSchema.safeParse(entry.settings).success).toBe(true);
      });

      const decoded = () => decodeEntry(entry);
      let cache: ReturnType<typeof decodeEntry> | null = null;
      const get = () => (cache ??= decoded());

      it('decodes to the encoded frames, damaged ones included', () => {
        const { dec, frames } = get();
        expect(dec.fatal()).toBeNull();
        const counts: Record<string, Record<string, number>> = {};
        for (const f of frames) {
          counts[f.link] ??= { ok: 0, 'bad-fcs': 0 };
          counts[f.link][f.status] = (counts[f.link][f.status] ?? 0) + 1;
        }
        expect(counts).toEqual(entry.expected.frames);
      });

      it('pairs the encoded exchanges with their outcomes', () => {
        const { exchanges } = get();
        const count = (o: string) => exchanges.filter((x) => x.outcome === o).length;
        expect({ total: exchanges.length, answered: count('answered'), retried: count('retried'), unanswered: count('unanswered') }).toEqual(entry.expected.exchanges);
      });

      it('recovers the encoded files byte for byte, missing records shown as missing', () => {
        const files = recoverFiles(get().exchanges).filter((f) => f.recordCount > 0);
        const got = files.map((f) => ({
          key: f.key,
          recordCount: f.recordCount,
          missing: missingRanges(f.coverage).flatMap(([a, b]) => Array.from({ length: b - a + 1 }, (_, i) => a + i)),
          sha256: createHash('sha256').update(f.bytes).digest('hex'),
        }));
        expect(got).toEqual(entry.expected.files);
      });
    });
  }

  for (const entry of manifest.captures.filter((c) => c.expected.timing)) {
    describe(`${entry.file}: line timing and races`, () => {
      const timing = entry.expected.timing!;
      /** the whole chain: decoder with the anomaly tap, call layer, line timing, fault desk with the field map */
      const decodeTiming = () => {
        const settings = captureSettingsSchema.parse(entry.settings);
        const { links, rts } = callLayerRoles(settings);
        const direction = new Map(settings.links.map((l) => [l.channel, l.direction === 'from-server' ? ('response' as const) : ('request' as const)]));
        const period = 1 / Number(settings.sampleRate);
        const desk = new FaultDesk({ samplePeriodSeconds: period, callShape: callShapeFromFieldMap(CPM_ENVELOPE, (l) => direction.get(l) ?? null), callKey: callKeyFromFieldMap(CPM_ENVELOPE, (l) => direction.get(l)!) });
        const tap = new TimingTap({ links, requestLines: rts, stations: settings.links.map((l) => l.stationAddress!) }, { secondsPerUnit: period });
        const layer = new CallLayer({ map: CPM_ENVELOPE, links, rts, samplePeriodSeconds: period }, { exchange: (x) => (tap.exchange(x), desk.exchange(x)) });
        const dec = createDecoder({ ...decoderOptions(entry.settings), anomalies: desk }, {
          frame(f) {
            desk.frame(f);
            tap.frame(f);
            layer.frame(f);
          },
          event(e) {
            desk.event(e);
            tap.event(e);
            layer.event(e);
          },
        });
        dec.push(readFileSync(`samples/${entry.file}`));
        dec.finish();
        layer.finish();
        return { faults: desk.finish(), ...tap.finish(), bitRate: Number(settings.bitRate) };
      };
      let cache: ReturnType<typeof decodeTiming> | null = null;
      const get = () => (cache ??= decodeTiming());

      it('reads the server’s visiting order, its rounds and visits', () => {
        const { service } = get();
        expect(service.server.order).toEqual(timing.order);
        expect(service.server.rounds).toBe(timing.rounds);
        expect(service.server.visits).toBe(timing.visits);
      });

      it('finds every under-run at its octet offset with its fragment, and the offset histogram peaking there', () => {
        const { faults } = get();
        const cuts = faults.rows.filter((r) => r.cause === 'tx-underrun');
        expect(cuts.map((r) => ({ link: r.link, seq: r.seq, octetOffset: (r.race as UnderrunDetail).octetOffset, end: (r.race as UnderrunDetail).end, fragmentSeq: (r.race as UnderrunDetail).fragment?.seq ?? null }))).toEqual(timing.underruns);
        const top = [...new Set(timing.underruns.map((u) => u.octetOffset))];
        if (top.length === 1 && timing.underruns.length > 1) expect(faults.races.underruns.recurring).toMatchObject({ offset: top[0], count: timing.underruns.length });
      });

      it('finds every skipped visit and the starved station', () => {
        const { service } = get();
        expect(service.skipped.map((s) => ({ station: s.station, round: s.round }))).toEqual(timing.skipped);
        expect(service.starved.map((w) => ({ station: w.station, passedOver: w.passedOver }))).toEqual(timing.starved);
      });

      it('measures the longest wait of each station within one bit time', () => {
        const { service, bitRate } = get();
        for (const [station, seconds] of Object.entries(timing.longestWait)) {
          const st = service.stations.find((s) => s.station === Number(station))!;
          expect(Math.abs(st.longestWait!.seconds - seconds)).toBeLessThanOrEqual(1 / bitRate);
        }
      });

      it('shows the stretched clock period as octet timing on its frame', () => {
        const { faults } = get();
        const rows = faults.rows.filter((r) => r.cause === 'octet-timing');
        expect(rows.map((r) => ({ link: r.link, seq: r.seq }))).toEqual(timing.stretched.map(({ link, seq }) => ({ link, seq })));
        rows.forEach((r, k) => expect(Math.abs((r.race as OctetTimingDetail).octets[0] - timing.stretched[k].octet)).toBeLessThanOrEqual(1));
        expect(faults.races.octetTiming.clock!.stretched).toBe(timing.stretched.length);
        expect(faults.races.budget!.cyclesPerOctet).toBeCloseTo(40, 6);
      });
    });
  }

  it('decodes every sample with the CLI as samples/README.md tells', () => {
    for (const entry of manifest.captures) {
      const args = entry.cli.replace(/^npm run --silent decode -- /, '').split(' ');
      const out = execFileSync(process.execPath, [decodeCli, ...args], { encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] });
      const lines = out.trim().split('\n').map((l) => JSON.parse(l) as { link: string; status: string });
      const total = Object.values(entry.expected.frames).reduce((n, c) => n + c.ok + c['bad-fcs'], 0);
      expect(lines, entry.file).toHaveLength(total);
    }
  }, 240_000);
});
