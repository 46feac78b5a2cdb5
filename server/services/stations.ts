import { and, eq, ne } from 'drizzle-orm';
import type { Station } from '../../shared/schemas';
import type { Db } from '../db/client';
import { stations } from '../db/schema';
import { conflict, notFound } from '../http/errors';
import { toStation } from './rigs';

export interface StationValues {
  address: number;
  name: string;
  role: Station['role'];
}

const hex = (n: number) => `0x${n.toString(16).toUpperCase().padStart(2, '0')}`;

function assertAddressFree(db: Db, rigId: number, address: number, exceptStationId?: number) {
  const taken = db
    .select({ id: stations.id, name: stations.name })
    .from(stations)
    .where(
      and(
        eq(stations.rigId, rigId),
        eq(stations.address, address),
        exceptStationId === undefined ? undefined : ne(stations.id, exceptStationId),
      ),
    )
    .get();
  if (taken) throw conflict(`Address ${hex(address)} is already used by "${taken.name}" on this rig`);
}

export function createStation(db: Db, rigId: number, input: StationValues): Station {
  return db.transaction((tx) => {
    assertAddressFree(tx, rigId, input.address);
    return toStation(tx.insert(stations).values({ rigId, ...input }).returning().get());
  });
}

function findStation(db: Db, rigId: number, stationId: number) {
  const row = db
    .select()
    .from(stations)
    .where(and(eq(stations.id, stationId), eq(stations.rigId, rigId)))
    .get();
  if (!row) throw notFound(`No station with id ${stationId} on this rig`);
  return row;
}

export function updateStation(db: Db, rigId: number, stationId: number, patch: Partial<StationValues>): Station {
  return db.transaction((tx) => {
    const current = findStation(tx, rigId, stationId);
    if (patch.address !== undefined && patch.address !== current.address) {
      assertAddressFree(tx, rigId, patch.address, stationId);
    }
    const set: Partial<StationValues> = {};
    if (patch.address !== undefined) set.address = patch.address;
    if (patch.name !== undefined) set.name = patch.name;
    if (patch.role !== undefined) set.role = patch.role;
    if (Object.keys(set).length === 0) return toStation(current);
    return toStation(tx.update(stations).set(set).where(eq(stations.id, stationId)).returning().get());
  });
}

export function deleteStation(db: Db, rigId: number, stationId: number): void {
  const { changes } = db
    .delete(stations)
    .where(and(eq(stations.id, stationId), eq(stations.rigId, rigId)))
    .run();
  if (changes === 0) throw notFound(`No station with id ${stationId} on this rig`);
}
