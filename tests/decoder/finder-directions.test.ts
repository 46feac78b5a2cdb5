// Link directions and the station roster, inferred from scripted sessions our encoder made.
import { describe, expect, it } from 'vitest';
import { CPM_ENVELOPE } from '../../shared/decoder/calls';
import { encodeSession, readFileCalls, sessionFrameLog, Tags, type SessionScript, frameLogBytes } from '../../shared/decoder/encode';
import { directionConflicts, inferDirections, stationRoster } from '../../shared/decoder/finder';
import { createDecoder, type DecodedFrame } from '../../shared/decoder';

const text = (n: number) => new TextEncoder().encode('Bell ringers meet on Thursday. '.repeat(n));

function script(): SessionScript {
  const calls = (seed: number) => readFileCalls(`ROTA${seed}.TXT`, text(20 + seed), { tags: new Tags(), delay: 0.0004 });
  return {
    bitRate: 800_000,
    stations: [
      { address: 0x31, port: 'a', start: 0.0001, calls: calls(1) },
      { address: 0x32, port: 'b', start: 0.0003, calls: calls(2) },
    ],
  };
}

function framesOf(s: SessionScript): { frames: DecodedFrame[]; period: number } {
  const log = frameLogBytes(sessionFrameLog(encodeSession(s)));
  const frames: DecodedFrame[] = [];
  const dec = createDecoder({ format: 'framelog' }, { frame: (f) => frames.push(f), event: () => {} });
  dec.push(log);
  dec.finish();
  return { frames, period: dec.samplePeriodSeconds! };
}

const truth = { a_txd: 'to-server', a_rxd: 'from-server', b_txd: 'to-server', b_rxd: 'from-server' };

describe('link directions', () => {
  const { frames, period } = framesOf(script());

  it('tells each link’s direction from the link set-up and the echoes alone, without a field map', () => {
    const v = inferDirections(frames, { samplePeriodSeconds: period });
    expect(Object.fromEntries(v.map((x) => [x.link, x.direction]))).toEqual(truth);
    const a = v.find((x) => x.link === 'a_rxd')!;
    expect(a.station).toBe(0x31);
    expect(a.partner).toBe('a_txd');
    expect(a.reasons.join(' ')).toMatch(/sends the link set-up \(1 SNRM\)/);
    expect(a.reasons.join(' ')).toMatch(/repeats octet 1 of the frame just before on a_txd in 100 %/);
    expect(a.confidence).toBeGreaterThan(0.9);
  });

  it('uses the response bit of the active field map', () => {
    const v = inferDirections(frames, { samplePeriodSeconds: period, map: CPM_ENVELOPE });
    expect(Object.fromEntries(v.map((x) => [x.link, x.direction]))).toEqual(truth);
    expect(v.find((x) => x.link === 'b_txd')!.reasons.join(' ')).toMatch(/response bit \(0x80\) of the call code clear, as “CP\/M call envelope” marks requests/);
  });

  it('still tells them apart when the capture starts after the link set-up', () => {
    const late = frames.filter((f) => f.decode?.kind !== 'U');
    const v = inferDirections(late, { samplePeriodSeconds: period });
    expect(Object.fromEntries(v.map((x) => [x.link, x.direction]))).toEqual(truth);
    expect(v.every((x) => !x.reasons.join(' ').includes('set-up'))).toBe(true);
  });

  it('says why when a link carries only polls and acknowledgements', () => {
    const polls = frames.filter((f) => f.link === 'a_rxd' && f.decode?.kind === 'S');
    const v = inferDirections(polls, { samplePeriodSeconds: period });
    expect(v).toHaveLength(1);
    expect(v[0].direction).toBe('unknown');
    expect(v[0].reasons[0]).toMatch(/Only supervisory and unnumbered frames \(\d+\) and no link set-up/);
  });

  it('says why when a link has no good frame', () => {
    const bad = frames.filter((f) => f.link === 'b_txd').map((f) => ({ ...f, status: 'bad-fcs' as const }));
    const v = inferDirections(bad, { samplePeriodSeconds: period });
    expect(v[0].direction).toBe('unknown');
    expect(v[0].reasons[0]).toMatch(/No frame with a good FCS/);
  });

  it('gives the other direction of a station’s line when only one is known', () => {
    // no set-up, and only one link has information frames the map can read
    const only = frames.filter((f) => f.decode?.kind !== 'U' && (f.link === 'a_txd' || f.decode?.kind === 'S'));
    const v = inferDirections(only, { samplePeriodSeconds: period, map: CPM_ENVELOPE });
    const rxd = v.find((x) => x.link === 'a_rxd')!;
    expect(rxd.direction).toBe('from-server');
    expect(rxd.reasons[0]).toMatch(/other direction of station 0x31's line \(a_txd\) carries its requests/);
  });

  it('flags configured directions the frames contradict, e.g. swapped links', () => {
    const v = inferDirections(frames, { samplePeriodSeconds: period, map: CPM_ENVELOPE });
    const conflicts = directionConflicts(
      [
        { channel: 'a_txd', direction: 'from-server' },
        { channel: 'a_rxd', direction: 'to-server' },
        { channel: 'b_txd', direction: 'to-server' },
        { channel: 'b_rxd', direction: 'unknown' },
      ],
      v,
    );
    expect(conflicts.map((c) => [c.link, c.inferred])).toEqual([
      ['a_txd', 'to-server'],
      ['a_rxd', 'from-server'],
      ['b_rxd', 'from-server'],
    ]);
    expect(conflicts[1].message).toMatch(/^a_rxd is set to carry traffic to the server, but the frames say from the server: /);
  });
});

describe('station roster', () => {
  it('lists each address with its frames per link and when it was first and last seen', () => {
    const { frames, period } = framesOf(script());
    const roster = stationRoster(frames, period);
    expect(roster.map((s) => s.address)).toEqual([0x31, 0x32]);
    const a = roster[0];
    const count = (link: string) => frames.filter((f) => f.link === link && f.status === 'ok').length;
    expect(a.links.map((l) => [l.link, l.frames]).sort()).toEqual([
      ['a_rxd', count('a_rxd')],
      ['a_txd', count('a_txd')],
    ]);
    expect(a.frames).toBe(count('a_rxd') + count('a_txd'));
    expect(a.firstSeconds).toBeCloseTo(0.0001, 4);
    expect(a.lastSeconds).toBeGreaterThan(a.firstSeconds);
    expect(a.suggestedName).toBe('station 0x31');
  });
});
