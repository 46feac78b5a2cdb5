// Service statistics and the server's schedule, held to what the episode encoder put on the wire:
// visits, rounds, waits (service delays), skipped visits and starvation, per-port and multidrop.
import { describe, expect, it } from 'vitest';
import { Tags, type EpisodeScript, seededRng } from '../../shared/decoder/encode';
import { LineTiming, type TimingFrame } from '../../shared/decoder/timing';
import { bitTime, decodeEpisode, RATE, readCalls, THREE_STATIONS, writeCalls } from './timing-helpers';

const BIT = 1 / RATE;

describe.each(['per-port', 'multidrop'] as const)('line timing of a round-robin server (%s)', (wiring) => {
  const script: EpisodeScript = { ...THREE_STATIONS(wiring), skips: [{ station: 0x33, rounds: 3, after: 0.004 }] };
  script.stations[1].answerDelay = 0.00015; // a station whose answers come late
  const d = decodeEpisode(script);

  it('finds every visit of the server, in order, each starting and ending within one bit time of the encoded one', () => {
    const v = d.schedule.visits;
    expect(v.n).toBe(d.episode.visits.length);
    d.episode.visits.forEach((e, i) => {
      expect(d.schedule.stations[v.code[i]], `visit ${i}`).toBe(e.station);
      expect(Math.abs(v.start[i] - bitTime(e.startBit))).toBeLessThanOrEqual(BIT);
      expect(Math.abs(v.end[i] - bitTime(e.endBit - 1))).toBeLessThanOrEqual(BIT);
    });
  });

  it('reads the visiting order and every round, each round period within one bit time', () => {
    expect(d.service.server.order).toEqual([0x31, 0x32, 0x33]);
    expect(d.schedule.roundStarts.length).toBe(d.episode.rounds.length);
    d.episode.rounds.forEach((bit, k) => expect(Math.abs(d.schedule.roundStarts[k] - bitTime(bit))).toBeLessThanOrEqual(BIT));
    const periods = d.episode.rounds.slice(1).map((b, k) => (b - d.episode.rounds[k]) / RATE).sort((a, b) => a - b);
    const p = d.service.server.roundPeriod!;
    expect(p.count).toBe(periods.length);
    expect(Math.abs(p.min - periods[0])).toBeLessThanOrEqual(BIT);
    expect(Math.abs(p.max - periods[periods.length - 1])).toBeLessThanOrEqual(BIT);
    expect(Math.abs(p.median - periods[(periods.length - 1) >> 1])).toBeLessThanOrEqual(BIT);
  });

  it('measures every service delay within one bit time of the encoded wait', () => {
    const served = d.episode.waits.filter((w) => w.servedBit >= 0);
    const found = d.service.stations.flatMap((s) => (s.serviceDelay ? [s.serviceDelay.count] : [0])).reduce((a, b) => a + b, 0);
    expect(found).toBe(served.length);
    for (const st of d.service.stations) {
      const mine = served.filter((w) => w.station === st.station).map((w) => (w.servedBit - w.riseBit) / RATE);
      expect(st.waits, `station ${st.station}`).toBe(mine.length);
      const longest = Math.max(...mine);
      expect(Math.abs(st.longestWait!.seconds - longest)).toBeLessThanOrEqual(BIT);
      expect(Math.abs(st.serviceDelay!.min - Math.min(...mine))).toBeLessThanOrEqual(BIT);
    }
  });

  it('finds every skipped visit with its station and round, and calls the wait passed over three rounds starvation', () => {
    expect(d.episode.skipped.length).toBe(3);
    expect(d.service.skipped.map((s) => [s.station, s.round])).toEqual(d.episode.skipped.map((s) => [s.station, s.round]));
    d.service.skipped.forEach((s, k) => expect(Math.abs(s.at - bitTime(d.episode.skipped[k].atBit - 1))).toBeLessThanOrEqual(BIT));
    expect(d.service.starved).toHaveLength(1);
    expect(d.service.starved[0]).toMatchObject({ station: 0x33, passedOver: 3, ended: 'served', starved: true });
    expect(d.service.stations.find((s) => s.station === 0x33)).toMatchObject({ skipped: 3, starved: 1 });
    expect(d.service.stations.filter((s) => s.station !== 0x33).every((s) => s.skipped === 0 && s.starved === 0)).toBe(true);
  });

  it('shows the late station in its time per visit', () => {
    const per = (a: number) => d.service.stations.find((s) => s.station === a)!.timePerVisit!.min;
    // its idle answers come 150 µs late: its shortest visit is longer by that much
    expect(Math.abs(per(0x32) - per(0x31) - 0.00015)).toBeLessThanOrEqual(2 * BIT);
  });

  it('takes round trips from the exchanges', () => {
    for (const st of d.service.stations) {
      expect(st.exchanges.answered).toBe(d.episode.exchanges.filter((e) => e.station === st.station && e.outcome === 'answered').length);
      expect(Math.abs(st.roundTrip!.median - 0.0004)).toBeLessThanOrEqual(8 * BIT);
    }
  });
});

describe('line timing, property checks', () => {
  it('finds every skipped visit of random episodes (random skips, stations, wiring), service delays within one bit time', () => {
    const rng = seededRng(14);
    for (let trial = 0; trial < 6; trial++) {
      const n = 2 + Math.floor(rng() * 3);
      const stations = Array.from({ length: n }, (_, k) => ({
        address: 0x40 + k,
        port: `q${k}`,
        calls: (k % 2 ? readCalls : writeCalls)(1 + Math.floor(rng() * 3), 0.001 + rng() * 0.004, 0.001 + rng() * 0.003, new Tags(), 0.0002 + rng() * 0.0005),
        answerDelay: rng() < 0.3 ? rng() * 0.0002 : undefined,
      }));
      const victim = stations[Math.floor(rng() * n)].address;
      const script: EpisodeScript = { bitRate: RATE, wiring: rng() < 0.5 ? 'per-port' : 'multidrop', stations, skips: [{ station: victim, rounds: 1 + Math.floor(rng() * 4) }] };
      const d = decodeEpisode(script);
      const label = `trial ${trial}: ${n} stations, ${script.wiring}, skips of 0x${victim.toString(16)}`;
      expect(d.service.skipped.map((s) => [s.station, s.round]), label).toEqual(d.episode.skipped.map((s) => [s.station, s.round]));
      const encoded = d.episode.waits.filter((w) => w.servedBit >= 0).map((w) => [w.station, (w.servedBit - w.riseBit) / RATE] as const);
      const decoded = d.schedule.lanes.flatMap((l) => Array.from({ length: l.waits.n }, (_, i) => [l.station, l.waits.end[i] - l.waits.start[i]] as const));
      expect(decoded.length, label).toBe(encoded.length);
      const sort = (xs: readonly (readonly [number, number])[]) => [...xs].sort((a, b) => a[0] - b[0] || a[1] - b[1]);
      sort(decoded).forEach(([st, s], i) => {
        expect(st).toBe(sort(encoded)[i][0]);
        expect(Math.abs(s - sort(encoded)[i][1]), label).toBeLessThanOrEqual(BIT);
      });
    }
  });

  it('gives the same statistics for any split of the capture, and without a clock (recovered from the data)', () => {
    const script: EpisodeScript = { ...THREE_STATIONS('per-port'), skips: [{ station: 0x32, rounds: 2 }] };
    const whole = decodeEpisode(script);
    const split = decodeEpisode(script, { split: 5 });
    expect(JSON.stringify(split.service)).toBe(JSON.stringify(whole.service));
    const recovered = decodeEpisode(script, { clocked: false, faults: { jitter: 0.1, rateError: 0.01, seed: 3 } });
    expect(recovered.service.skipped.map((s) => [s.station, s.round])).toEqual(whole.service.skipped.map((s) => [s.station, s.round]));
    for (const st of whole.service.stations) {
      const other = recovered.service.stations.find((s) => s.station === st.station)!;
      expect(other.waits).toBe(st.waits);
      // 1 % rate error over a wait of a few thousand bits moves its end by tens of bits: compare in proportion
      expect(Math.abs(other.serviceDelay!.max - st.serviceDelay!.max)).toBeLessThanOrEqual(st.serviceDelay!.max * 0.012 + BIT);
    }
  });

  it('gives the same report whatever order frames, request-line edges and exchanges arrive in', () => {
    const frames: TimingFrame[] = [];
    const rng = seededRng(3);
    let t = 0;
    for (let r = 0; r < 50; r++) {
      for (const st of [1, 2, 3]) {
        frames.push({ station: st, direction: 'from-server', first: t, last: t + 30, status: 'ok', kind: 'S', pf: true });
        frames.push({ station: st, direction: 'to-server', first: t + 60, last: t + 90, status: 'ok', kind: 'S', pf: true });
        t += 120 + Math.floor(rng() * 20);
      }
    }
    const edges = Array.from({ length: 20 }, (_, k) => ({ station: 1 + (k % 3), at: 500 + k * 1700 }));
    const build = (shuffle: boolean) => {
      const lt = new LineTiming({ secondsPerUnit: 1e-6 });
      const fs = shuffle ? [...frames].sort(() => rng() - 0.5) : frames;
      const es = shuffle ? [...edges].sort(() => rng() - 0.5) : edges;
      for (const e of es) {
        lt.requestLine(e.station, true, e.at);
        lt.requestLine(e.station, false, e.at + 400);
      }
      for (const f of fs) lt.frame(f);
      return JSON.stringify(lt.finish().service);
    };
    expect(build(true)).toBe(build(false));
  });
});

describe('line timing from frames given by hand', () => {
  /** a server polling stations 1, 2, 3 in turn every 300 units; each poll answered 60 units later */
  function polled(rounds: number, skip?: { station: number; from: number; to: number }): TimingFrame[] {
    const out: TimingFrame[] = [];
    let t = 0;
    for (let r = 0; r < rounds; r++) {
      for (const st of [1, 2, 3]) {
        if (skip && st === skip.station && r >= skip.from && r < skip.to) continue;
        out.push({ station: st, direction: 'from-server', first: t, last: t + 30, status: 'ok', kind: 'S', pf: true });
        out.push({ station: st, direction: 'to-server', first: t + 60, last: t + 90, status: 'ok', kind: 'S', pf: true });
        t += 100;
      }
    }
    return out;
  }

  it('measures the round period and the time per visit of a server polling everyone', () => {
    const lt = new LineTiming({ secondsPerUnit: 1e-6 });
    for (const f of polled(10)) lt.frame(f);
    const { service } = lt.finish();
    expect(service.server).toMatchObject({ order: [1, 2, 3], visits: 30, rounds: 10, stepsInOrder: 1 });
    expect(service.server.roundPeriod).toMatchObject({ count: 9, min: 300e-6, max: 300e-6 });
    expect(service.server.timePerVisit!.min).toBeCloseTo(90e-6, 12);
    expect(service.server.timePerVisit!.max).toBeCloseTo(90e-6, 12);
    for (const s of service.stations) expect(s.betweenVisits!.median).toBeCloseTo(300e-6, 12);
    expect(service.requestLines).toBe(false);
    expect(service.stations.every((s) => s.serviceDelay === null && s.longestWait === null)).toBe(true);
  });

  it('counts the rounds a waiting station is passed over, and starvation from a chosen number of rounds', () => {
    const frames = polled(10, { station: 2, from: 3, to: 6 });
    const run = (starveAfterRounds: number) => {
      const lt = new LineTiming({ secondsPerUnit: 1e-6, starveAfterRounds });
      // station 2 asks in round 2 (after its visit) and is served in round 6
      lt.requestLine(2, true, 2 * 300 + 150);
      lt.requestLine(2, false, 1800);
      for (const f of frames) lt.frame(f);
      return lt.finish().service;
    };
    const s = run(3);
    expect(s.skipped.map((k) => [k.station, k.round])).toEqual([
      [2, 3],
      [2, 4],
      [2, 5],
    ]);
    expect(s.starved).toHaveLength(1);
    expect(s.starved[0]).toMatchObject({ station: 2, passedOver: 3, ended: 'served' });
    expect(run(4).starved).toHaveLength(0);
  });

  it('reports a capture with no frames, or only request-line edges, without failing', () => {
    const empty = new LineTiming({ secondsPerUnit: 1 }).finish();
    expect(empty.service).toMatchObject({ stations: [], starved: [], skipped: [], requestLines: false, server: { order: [], visits: 0, rounds: 0, roundPeriod: null, stepsInOrder: null } });
    expect(empty.schedule).toMatchObject({ from: 0, to: 0, stations: [], lanes: [] });
    const lt = new LineTiming({ secondsPerUnit: 1 });
    lt.requestLine(9, true, 5);
    const { service } = lt.finish();
    expect(service.stations).toMatchObject([{ station: 9, visits: 0, waits: 1, unserved: 1, serviceDelay: null }]);
    expect(service.requestLines).toBe(true);
  });

  it('keeps a wait the station gave up on and one the capture ended in, and puts them in the longest wait', () => {
    const lt = new LineTiming({ secondsPerUnit: 1 });
    for (const f of polled(4, { station: 3, from: 1, to: 4 })) lt.frame(f);
    lt.requestLine(2, true, 950);
    lt.requestLine(2, false, 960); // gave up before the server came
    lt.requestLine(3, true, 310); // after its visit of round 0; never served, the capture ends first
    const { service } = lt.finish();
    const two = service.stations.find((s) => s.station === 2)!;
    const three = service.stations.find((s) => s.station === 3)!;
    expect(two).toMatchObject({ waits: 1, unserved: 1, serviceDelay: null });
    expect(two.longestWait).toMatchObject({ ended: 'withdrawn', seconds: 10 });
    expect(three.longestWait).toMatchObject({ ended: 'capture-ended', rise: 310 });
    // passed over in rounds 1 and 2 (2 → 1 goes past 3); round 3's pass would show only with a visit after it
    expect(three.longestWait!.passedOver).toBe(2);
  });
});
