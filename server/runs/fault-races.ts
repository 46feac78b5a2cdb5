// The decode run's side of the race signatures: what the fault desk needs to find them (the field
// map's shape of each call, the rig's CPU clock and the capture's bit rate) and where their
// details go once found (fault_rows.race, fault_summaries.races, written by server/runs/fault-rows.ts). Takes the decode
// worker's driver handle too (dbOf in server/db/client.ts).
import type { Db, Driver } from '../db/client';
import { callShapeFromFieldMap, type FaultDeskOptions } from '../../shared/decoder/faults';
import { DEFAULT_CPU_HZ } from '../../shared/decoder/timing';
import { loadMapVersion, type RunInputs } from './inputs';

/** Options the fault desk of a decode run takes beyond the sample period and call key, from the run's inputs snapshot. */
export function raceDeskOptions(db: Db | Driver, inputs: RunInputs): Partial<FaultDeskOptions> {
  const settings = inputs.capture;
  const options: Partial<FaultDeskOptions> = { cpuHz: inputs.cpuHz ?? DEFAULT_CPU_HZ, bitRate: settings.bitRate ?? undefined };
  try {
    const { map } = loadMapVersion(db, inputs.fieldMap.mapId, inputs.fieldMap.version);
    const direction = new Map(settings.links.map((l) => [l.channel, l.direction]));
    options.callShape = callShapeFromFieldMap(map, (link) => {
      const d = direction.get(link);
      return d === 'from-server' ? 'response' : d === 'to-server' ? 'request' : null;
    });
  } catch {
    // a map that cannot be loaded: under-runs are still found by their fragments and recurring aborts
  }
  return options;
}
