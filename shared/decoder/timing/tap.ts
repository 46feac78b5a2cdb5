// Feeds LineTiming from the decoder's own output: decoded frames and line events (in time order,
// as the pipeline gives them) and the call layer's exchanges. The server, reading stored rows,
// feeds LineTiming directly instead (TimingFrame, requestLine, TimingExchange).
import type { Exchange, LinkRole } from '../calls/exchanges';
import type { DecodedFrame, LineEvent } from '../types';
import { LineTiming, type LineTimingOptions, type Schedule, type ServiceReport } from './line-timing';

export interface TimingRoles {
  /** link directions and, on per-port wiring, each link's station (else the address octet says it) */
  links: LinkRole[];
  /** which handshake channel is which station's request line (RTS) */
  requestLines: { channel: string; station: number }[];
  /**
   * The rig's stations, when known: frames and exchanges of other addresses (a fragment after an
   * under-run, a damaged address on a shared line) get no lane of their own and are counted as
   * unattributed. Without it every address seen in a good frame is a station.
   */
  stations?: number[];
}

export class TimingTap {
  private readonly roles: Map<string, LinkRole>;
  private readonly lines: Map<string, number>;
  private readonly timing: LineTiming;
  /** addresses seen in good frames: a damaged frame on a shared link is put in a lane only under one of these */
  private readonly known = new Set<number>();
  private frames = 0;
  private exchanges = 0;
  /** frames no station could be named for (a damaged address on a shared link, a link of unknown direction) */
  unattributed = 0;

  private readonly roster: Set<number> | null;

  constructor(roles: TimingRoles, options: LineTimingOptions) {
    this.roster = roles.stations ? new Set(roles.stations) : null;
    this.roles = new Map(roles.links.map((l) => [l.link, l]));
    this.lines = new Map(roles.requestLines.map((r) => [r.channel, r.station]));
    this.timing = new LineTiming(options);
  }

  /** a decoded frame; its id in the schedule is its running number among the frames given here */
  frame(f: DecodedFrame): void {
    const id = this.frames++;
    const role = this.roles.get(f.link);
    if (!role) {
      this.unattributed++;
      return;
    }
    let station = role.station;
    if (station === undefined) {
      const address = f.decode?.address ?? (f.bytes.length > 0 ? f.bytes[0] : undefined);
      if (address === undefined || (f.status !== 'ok' && !this.known.has(address))) {
        this.unattributed++;
        return;
      }
      station = address;
    }
    if (this.roster && !this.roster.has(station)) {
      this.unattributed++;
      return;
    }
    if (f.status === 'ok') this.known.add(station);
    this.timing.frame({
      station,
      direction: role.direction,
      first: f.firstSample,
      last: f.lastSample,
      status: f.status,
      kind: f.decode?.kind ?? null,
      pf: f.decode?.pf ?? false,
      id,
    });
  }

  event(e: LineEvent): void {
    if (e.kind !== 'rise' && e.kind !== 'fall') return;
    const station = this.lines.get(e.channel);
    if (station !== undefined) this.timing.requestLine(station, e.kind === 'rise', e.sample);
  }

  /** an exchange from the call layer; its id is its running number among the exchanges given here */
  exchange(e: Exchange): void {
    const id = this.exchanges++;
    if (this.roster && !this.roster.has(e.station)) return;
    this.timing.exchange({
      station: e.station,
      first: e.firstSample,
      end: e.responseFirstSample ?? e.answeredSendLastSample,
      outcome: e.outcome,
      rttSeconds: e.rttSeconds,
      id,
    });
  }

  finish(): { service: ServiceReport; schedule: Schedule } {
    return this.timing.finish();
  }
}
