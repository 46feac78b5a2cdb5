// Shared by the timing tests: encode an episode, render it, decode it back through the whole
// chain (decoder with the anomaly tap, call layer, line timing, fault desk with the field map).
import { CPM_ENVELOPE, CallLayer, type Exchange, type LinkRole } from '../../shared/decoder/calls';
import { requestInfo, responseInfo, Tags, toRecords, encodeEpisode, type EncodedEpisode, type EpisodeCall, type EpisodeScript, renderWaveform, type WaveformFaults, collect, rawChunks } from '../../shared/decoder/encode';
import { callKeyFromFieldMap, callShapeFromFieldMap, FaultDesk, type FaultReport } from '../../shared/decoder/faults';
import { createDecoder, type DecodedFrame } from '../../shared/decoder';
import { TimingTap, type Schedule, type ServiceReport } from '../../shared/decoder/timing';
import { randomSplit } from './support/signals';

export const RATE = 800_000;
/** idle bit periods the waveform puts before bit 0 (renderWaveform's default) */
export const LEAD_BITS = 2;

export interface DecodedEpisode {
  episode: EncodedEpisode;
  frames: DecodedFrame[];
  exchanges: Exchange[];
  service: ServiceReport;
  schedule: Schedule;
  faults: FaultReport;
  period: number;
  spb: number;
}

/** seconds of a line-bit boundary in the rendered capture */
export const bitTime = (bit: number) => (bit + LEAD_BITS) / RATE;

/** episode → NRZI waveform (clocked: 5 samples a bit) → raw bytes → createDecoder + call layer + timing + fault desk */
export function decodeEpisode(script: EpisodeScript, opts: { clocked?: boolean; faults?: WaveformFaults; split?: number; roster?: boolean } = {}): DecodedEpisode {
  const episode = encodeEpisode(script);
  const clocked = opts.clocked ?? true;
  const spb = clocked ? 5 : 8;
  const period = 1 / (RATE * spb);
  const w = renderWaveform({
    links: episode.links.map((l) => ({ name: l.name, bits: l.bits })),
    samplesPerBit: spb,
    samplePeriodSeconds: period,
    encoding: 'nrzi',
    clock: clocked ? { name: 'clk', edge: 'rising' } : undefined,
    handshake: episode.rts,
    faults: opts.faults,
  });
  const width = w.channels.length > 8 ? 2 : 1;
  const bytes = collect(rawChunks(w, { width }));
  const links: LinkRole[] = episode.links.map((l) => ({ link: l.name, direction: l.direction, station: l.station ?? undefined }));
  const rts = episode.rts.map((r) => ({ channel: r.name, station: r.station }));
  const direction = new Map(links.map((l) => [l.link, l.direction === 'to-server' ? ('request' as const) : ('response' as const)]));
  const tap = new TimingTap({ links, requestLines: rts, stations: opts.roster === false ? undefined : script.stations.map((s) => s.address) }, { secondsPerUnit: period });
  const desk = new FaultDesk({
    samplePeriodSeconds: period,
    callShape: callShapeFromFieldMap(CPM_ENVELOPE, (l) => direction.get(l) ?? null),
    callKey: callKeyFromFieldMap(CPM_ENVELOPE, (l) => direction.get(l)!),
  });
  const frames: DecodedFrame[] = [];
  const exchanges: Exchange[] = [];
  const layer = new CallLayer(
    { map: CPM_ENVELOPE, links, rts, samplePeriodSeconds: period },
    {
      exchange: (x) => {
        exchanges.push(x);
        tap.exchange(x);
        desk.exchange(x);
      },
    },
  );
  const dec = createDecoder(
    {
      format: 'raw',
      rawWidth: width,
      sampleRate: RATE * spb,
      channelNames: w.channels.map((c) => c.name),
      clock: clocked ? 'clk' : undefined,
      data: episode.links.map((l) => l.name),
      handshake: episode.rts.map((r) => r.name),
      encoding: 'nrzi',
      bitRate: clocked ? undefined : RATE,
      anomalies: desk,
    },
    {
      frame(f) {
        frames.push(f);
        tap.frame(f);
        layer.frame(f);
        desk.frame(f);
      },
      event(e) {
        tap.event(e);
        layer.event(e);
        desk.event(e);
      },
    },
  );
  for (const piece of opts.split !== undefined ? randomSplit(bytes, opts.split, 1 << 14) : [bytes]) dec.push(piece);
  dec.finish();
  if (dec.fatal()) throw new Error(dec.fatal()!.message);
  layer.finish();
  const { service, schedule } = tap.finish();
  return { episode, frames, exchanges, service, schedule, faults: desk.finish(), period, spb };
}

/** the same invented record for every write: text, so its octets are easy to read in a failure */
export const RECORD = toRecords(new TextEncoder().encode('WRENFIELD VESTRY - TIMING EPISODE RECORD, ONE HUNDRED AND TWENTY-EIGHT OCTETS LONG. '.repeat(2)))[0];

/** `n` write-sequential calls of one station, `gap` seconds apart from `t0` */
export function writeCalls(n: number, t0: number, gap: number, tags = new Tags(), delay = 0.0004): EpisodeCall[] {
  return Array.from({ length: n }, (_, i) => {
    const tag = tags.next();
    return {
      at: t0 + i * gap,
      request: requestInfo(21, tag, 0, { fcb: { name: 'TIMING.DAT', cr: i }, record: RECORD }),
      response: responseInfo(21, tag, 0, { fcb: { name: 'TIMING.DAT', cr: i + 1 } }),
      serverDelay: delay,
    };
  });
}

/** `n` read-sequential calls of one station */
export function readCalls(n: number, t0: number, gap: number, tags = new Tags(), delay = 0.0004): EpisodeCall[] {
  return Array.from({ length: n }, (_, i) => {
    const tag = tags.next();
    return {
      at: t0 + i * gap,
      request: requestInfo(20, tag, 0, { fcb: { name: 'TIMING.DAT', cr: i } }),
      response: responseInfo(20, tag, 0, { fcb: { name: 'TIMING.DAT', cr: i + 1 }, record: RECORD }),
      serverDelay: delay,
    };
  });
}

export const THREE_STATIONS = (wiring: EpisodeScript['wiring']): EpisodeScript => ({
  bitRate: RATE,
  wiring,
  stations: [
    { address: 0x31, port: 'p1', calls: writeCalls(4, 0.001, 0.002) },
    { address: 0x32, port: 'p2', calls: readCalls(3, 0.0015, 0.0025) },
    { address: 0x33, port: 'p3', calls: writeCalls(3, 0.002, 0.003) },
  ],
});
