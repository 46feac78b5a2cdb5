// Receiver over-run symptoms, found in the exchanges: when the receiving CPU does not drain its
// serial controller in time, a frame that crossed the line intact is lost inside the receiver, so
// the wire shows a request that was
//   retried-clean     sent again before any answer, though no frame of the exchange was damaged;
//   unanswered-clean  never answered, then asked again at once, with nothing damaged in between;
//   error-answer      answered with a status that changed when the station at once sent the same
//                     request again (an error that went away: the server read a garbled request).
// Damage means any damaged frame of the station in the window (the desk's rows, under-runs and
// their fragments included); anomalies on good frames do not count. Symptoms that repeat at the
// same record or request size point at a race in the receive loop rather than at chance.
import type { Exchange } from '../calls/exchanges';
import type { DecodedCall } from '../calls/apply';
import type { FrameRef } from './anomalies';
import type { OverrunDetail, OverrunSymptom, RaceSummary } from './races';

/** Where the station's damaged frames are: any in [from, to]? */
export type DamageLookup = (station: number, from: number, to: number) => boolean;

export interface OverrunFinding {
  /** the request send the symptom is about */
  request: FrameRef;
  firstSample: number;
  detail: OverrunDetail;
}

/** Information-field octets of a decoded call: its fields' extent plus what no field explains. */
export function infoOctets(call: DecodedCall): number {
  let end = 0;
  for (const f of call.fields) end = Math.max(end, f.offset + f.available);
  return end + call.unexplained;
}

const sameRequest = (a: Exchange, b: Exchange) =>
  a.callCode === b.callCode && a.requestCall.fileName === b.requestCall.fileName && a.requestCall.recordNumber === b.requestCall.recordNumber;

/** The over-run symptoms among `exchanges` (any order), each with the counts of its record and size. */
export function findOverruns(exchanges: readonly Exchange[], damaged: DamageLookup): OverrunFinding[] {
  const byStation = new Map<number, Exchange[]>();
  for (const e of [...exchanges].sort((a, b) => a.firstSample - b.firstSample)) {
    const list = byStation.get(e.station);
    if (list) list.push(e);
    else byStation.set(e.station, [e]);
  }
  const out: OverrunFinding[] = [];
  for (const list of byStation.values()) {
    list.forEach((e, i) => {
      let symptom: OverrunSymptom | null = null;
      let then: FrameRef | null = null;
      const end = e.responseFirstSample ?? e.answeredSendLastSample;
      if (e.outcome === 'retried') {
        if (!damaged(e.station, e.firstSample, end)) {
          symptom = 'retried-clean';
          then = e.retries[0] ?? null;
        }
      } else {
        // asked again at once: the station's very next exchange (an open that failed, a make, then an
        // open that works is the program's doing, not a lost frame)
        const next = list[i + 1];
        const again = next && sameRequest(next, e) ? next : undefined;
        if (again && !damaged(e.station, e.firstSample, again.responseFirstSample ?? again.answeredSendLastSample)) {
          if (e.outcome === 'unanswered') {
            symptom = 'unanswered-clean';
            then = again.request;
          } else if (again.outcome !== 'unanswered' && again.status !== e.status) {
            symptom = 'error-answer';
            then = e.responses[0] ?? null;
          }
        }
      }
      if (!symptom) return;
      out.push({
        request: e.request,
        firstSample: e.firstSample,
        detail: {
          kind: 'rx-overrun',
          symptom,
          station: e.station,
          callCode: e.callCode,
          callName: e.callName,
          fileName: e.fileName,
          recordNumber: e.recordNumber,
          requestOctets: infoOctets(e.requestCall),
          status: symptom === 'error-answer' ? e.status : null,
          then,
          sameRecord: 0,
          sameSize: 0,
        },
      });
    });
  }
  const recordKey = (d: OverrunDetail) => `${d.station}|${d.callCode}|${d.fileName ?? ''}|${d.recordNumber ?? ''}`;
  const records = new Map<string, number>();
  const sizes = new Map<number, number>();
  for (const o of out) {
    records.set(recordKey(o.detail), (records.get(recordKey(o.detail)) ?? 0) + 1);
    sizes.set(o.detail.requestOctets, (sizes.get(o.detail.requestOctets) ?? 0) + 1);
  }
  for (const o of out) {
    o.detail.sameRecord = records.get(recordKey(o.detail))!;
    o.detail.sameSize = sizes.get(o.detail.requestOctets)!;
  }
  return out.sort((a, b) => a.firstSample - b.firstSample);
}

/** The over-run part of the race summary. */
export function summarizeOverruns(found: readonly OverrunFinding[]): RaceSummary['overruns'] {
  const bySymptom: Record<OverrunSymptom, number> = { 'error-answer': 0, 'retried-clean': 0, 'unanswered-clean': 0 };
  const sizes = new Map<number, number>();
  const records = new Map<string, RaceSummary['overruns']['byRecord'][number]>();
  for (const { detail: d } of found) {
    bySymptom[d.symptom]++;
    sizes.set(d.requestOctets, (sizes.get(d.requestOctets) ?? 0) + 1);
    const key = `${d.station}|${d.callCode}|${d.fileName ?? ''}|${d.recordNumber ?? ''}`;
    const r = records.get(key);
    if (r) r.count++;
    else records.set(key, { station: d.station, callName: d.callName, fileName: d.fileName, recordNumber: d.recordNumber, count: 1 });
  }
  const bySize = [...sizes].map(([octets, count]) => ({ octets, count })).sort((a, b) => b.count - a.count || a.octets - b.octets);
  const byRecord = [...records.values()].sort((a, b) => b.count - a.count || a.station - b.station).slice(0, 20);
  return {
    count: found.length,
    bySymptom,
    bySize,
    byRecord,
    repeating: (bySize[0]?.count ?? 0) >= 2 || (byRecord[0]?.count ?? 0) >= 2,
  };
}
