// The schedule view's data: one lane per station (request line, frames both ways, exchanges,
// waits) and the server's visits, and the level of detail that keeps 100 000 spans drawable.
import { describe, expect, it } from 'vitest';
import { seededRng } from '../../shared/decoder/encode';
import { LineTiming, scheduleWindow, windowRow, type SpanColumns, SpanBuilder } from '../../shared/decoder/timing';
import { bitTime, decodeEpisode, RATE, THREE_STATIONS } from './timing-helpers';

describe('schedule lanes of an encoded episode', () => {
  const script = { ...THREE_STATIONS('multidrop' as const), skips: [{ station: 0x32, rounds: 2 }] };
  script.stations[0].calls[1].underrun = { atOctet: 90, end: 'abort' as const };
  const d = decodeEpisode(script);

  it('puts every frame in its station’s lane, the server’s frames apart from the station’s, with their status', () => {
    expect(d.schedule.stations).toEqual([0x31, 0x32, 0x33]);
    for (const lane of d.schedule.lanes) {
      const mine = d.episode.links.flatMap((l) => l.frames.filter((f) => f.station === lane.station && f.role !== 'fragment').map((f) => ({ l, f })));
      const to = mine.filter(({ l }) => l.direction === 'from-server');
      const from = mine.filter(({ l }) => l.direction === 'to-server');
      expect(lane.serverFrames.n).toBe(to.length);
      expect(lane.stationFrames.n).toBe(from.length);
      from.forEach(({ f }, i) => {
        expect(Math.abs(lane.stationFrames.start[i] - bitTime(f.startBit))).toBeLessThanOrEqual(1 / RATE);
        expect(['ok', 'bad-fcs', 'abort', 'short', 'residue'][lane.stationFrames.code[i]]).toBe(f.status);
      });
    }
  });

  it('draws each request-line high period and each exchange from request to answer', () => {
    for (const lane of d.schedule.lanes) {
      const rts = d.episode.rts.find((r) => r.station === lane.station)!;
      const rises = rts.edges.filter((e) => e.level === 1).map((e) => bitTime(e.bit));
      expect(Array.from(lane.requestLine.start.subarray(0, lane.requestLine.n))).toEqual(rises.map((t) => expect.closeTo(t, 9)));
      const exchanges = d.exchanges.filter((x) => x.station === lane.station);
      expect(lane.exchanges.n).toBe(exchanges.length);
      expect(lane.waits.n).toBe(d.episode.waits.filter((w) => w.station === lane.station).length);
    }
    // the wait passed over twice is drawn as starved
    const starved = d.schedule.lanes[1].waits;
    expect(Array.from(starved.code.subarray(0, starved.n)).filter((c) => c >= 3)).toHaveLength(1);
    expect(d.schedule.skipped.map((s) => s.station)).toEqual([0x32, 0x32]);
  });

  it('gives a window with every span either drawn or counted once, in pixels of the window', () => {
    const w = scheduleWindow(d.schedule, { from: d.schedule.from, to: d.schedule.to, width: 300 });
    expect(w.lanes.map((l) => l.station)).toEqual([0x31, 0x32, 0x33]);
    for (const lane of w.lanes) {
      for (const row of [lane.stationFrames, lane.serverFrames, lane.exchanges, lane.waits]) {
        const counted = row.columns.reduce((n, c) => n + c.counts.reduce((a, b) => a + b, 0), 0);
        expect(row.items.length + counted).toBe(row.total);
        for (const it of row.items) expect(0 <= it.x0 && it.x0 <= it.x1 && it.x1 <= 300).toBe(true);
      }
    }
    expect(w.visits.total).toBe(d.schedule.visits.n);
    expect(w.skipped).toHaveLength(2);
    expect(w.roundStarts.length).toBe(d.schedule.roundStarts.length);
  });
});

/** n spans of random lengths, some overlapping, sorted by start */
function randomSpans(n: number, seed: number): SpanColumns {
  const rng = seededRng(seed);
  const b = new SpanBuilder();
  let t = 0;
  for (let i = 0; i < n; i++) {
    t += rng() * 10;
    b.add(t, t + rng() * rng() * 200, Math.floor(rng() * 3), i);
  }
  return b.build();
}

describe('level of detail', () => {
  it('draws or counts every span overlapping a random window exactly once (property check)', () => {
    const spans = randomSpans(5000, 1);
    const rng = seededRng(2);
    for (let trial = 0; trial < 200; trial++) {
      const from = rng() * 50_000 - 1000;
      const to = from + 1 + rng() * rng() * 60_000;
      const width = 1 + Math.floor(rng() * 1500);
      const row = windowRow(spans, { from, to, width, scale: width / (to - from), minSpanPx: 2, maxItems: 4 * width }, 3);
      let expected = 0;
      for (let i = 0; i < spans.n; i++) if (spans.end[i] >= from && spans.start[i] <= to) expected++;
      const counted = row.columns.reduce((n, c) => n + c.counts.reduce((a, b) => a + b, 0), 0);
      expect(row.total).toBe(expected);
      expect(row.items.length + counted).toBe(expected);
      expect(row.columns.every((c) => c.x >= 0 && c.x < width)).toBe(true);
      expect(row.items.every((it) => it.x1 - it.x0 >= 0 && spans.end[it.index] - spans.start[it.index] >= (2 * (to - from)) / width - 1e-9)).toBe(true);
    }
  });

  it('shows 100 000 exchanges seen whole as at most one column per pixel, and single spans when zoomed in', () => {
    const lt = new LineTiming({ secondsPerUnit: 1e-6 });
    for (let i = 0; i < 100_000; i++) {
      lt.frame({ station: 1 + (i % 4), direction: 'from-server', first: i * 100, last: i * 100 + 20, status: 'ok', kind: 'S', pf: true });
      lt.exchange({ station: 1 + (i % 4), first: i * 100 + 30, end: i * 100 + 80, outcome: i % 50 === 0 ? 'unanswered' : 'answered', rttSeconds: 40e-6, id: i });
    }
    const { schedule } = lt.finish();
    const whole = scheduleWindow(schedule, { from: schedule.from, to: schedule.to, width: 1200 });
    for (const lane of whole.lanes) {
      expect(lane.exchanges.items).toHaveLength(0);
      expect(lane.exchanges.columns.length).toBeLessThanOrEqual(1200);
      expect(lane.exchanges.total).toBe(25_000);
      // the unanswered ones are counted under their own outcome
      expect(lane.exchanges.columns.reduce((n, c) => n + c.counts[2], 0)).toBe(lane.station === 1 || lane.station === 3 ? 1000 : 0);
    }
    const close = scheduleWindow(schedule, { from: 0.5, to: 0.5 + 0.002, width: 1000 });
    const items = close.lanes[0].exchanges.items;
    expect(items.length).toBeGreaterThan(0);
    expect(items.every((it) => it.x1 - it.x0 >= 2)).toBe(true);
    expect(items[0].id % 4).toBe(0);
    expect(() => scheduleWindow(schedule, { from: 1, to: 1, width: 10 })).toThrow(/to > from/);
  });
});
