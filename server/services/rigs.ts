import { and, asc, eq, sql } from 'drizzle-orm';
import type { LineSettings, RigDetail, RigSummary, Role, Station } from '../../shared/schemas';
import type { Db } from '../db/client';
import { prepared } from '../db/prepared';
import { memberships, rigs, stations } from '../db/schema';
import { notFound } from '../http/errors';

export interface RigValues {
  name: string;
  description: string;
  lineSettings: LineSettings;
  responseTimeoutMs: number;
  cpuClockMHz: number;
}

// the rig guard runs both on every rig request: prepared statements per database handle
export const rigExists = (db: Db, rigId: number): boolean =>
  prepared(db, 'rig exists', () => db.select({ id: rigs.id }).from(rigs).where(eq(rigs.id, sql.placeholder('rigId'))).prepare()).get({ rigId }) !==
  undefined;

export const findMembership = (db: Db, rigId: number, userId: number): Role | undefined =>
  prepared(db, 'membership role', () =>
    db
      .select({ role: memberships.role })
      .from(memberships)
      .where(and(eq(memberships.rigId, sql.placeholder('rigId')), eq(memberships.userId, sql.placeholder('userId'))))
      .prepare(),
  ).get({ rigId, userId })?.role;

const stationCount = sql<number>`(select count(*) from ${stations} where ${stations.rigId} = ${rigs.id})`;
const memberCount = sql<number>`(select count(*) from ${memberships} m2 where m2.rig_id = ${rigs.id})`;

const summaryColumns = {
  id: rigs.id,
  name: rigs.name,
  description: rigs.description,
  bitRate: rigs.bitRate,
  encoding: rigs.encoding,
  clockEdge: rigs.clockEdge,
  bitOrder: rigs.bitOrder,
  responseTimeoutMs: rigs.responseTimeoutMs,
  cpuHz: rigs.cpuHz,
  createdAt: rigs.createdAt,
  myRole: memberships.role,
  stationCount,
  memberCount,
};

function toSummary(r: {
  id: number;
  name: string;
  description: string;
  bitRate: number;
  encoding: LineSettings['encoding'];
  clockEdge: LineSettings['clockEdge'];
  bitOrder: LineSettings['bitOrder'];
  responseTimeoutMs: number;
  cpuHz: number;
  createdAt: Date;
  myRole: Role;
  stationCount: number;
  memberCount: number;
}): RigSummary {
  return {
    id: r.id,
    name: r.name,
    description: r.description,
    lineSettings: { bitRate: r.bitRate, encoding: r.encoding, clockEdge: r.clockEdge, bitOrder: r.bitOrder },
    responseTimeoutMs: r.responseTimeoutMs,
    cpuClockMHz: r.cpuHz / 1e6,
    myRole: r.myRole,
    stationCount: Number(r.stationCount),
    memberCount: Number(r.memberCount),
    createdAt: r.createdAt.toISOString(),
  };
}

export const toStation = (s: typeof stations.$inferSelect): Station => ({
  id: s.id,
  rigId: s.rigId,
  address: s.address,
  name: s.name,
  role: s.role,
});

/** Rigs the user belongs to, newest first. */
export function listRigs(db: Db, userId: number): RigSummary[] {
  return db
    .select(summaryColumns)
    .from(rigs)
    .innerJoin(memberships, and(eq(memberships.rigId, rigs.id), eq(memberships.userId, userId)))
    .orderBy(sql`${rigs.createdAt} desc`, sql`${rigs.id} desc`)
    .all()
    .map(toSummary);
}

export function listStations(db: Db, rigId: number): Station[] {
  return db.select().from(stations).where(eq(stations.rigId, rigId)).orderBy(asc(stations.address)).all().map(toStation);
}

export function getRigDetail(db: Db, rigId: number, userId: number): RigDetail {
  const row = db
    .select(summaryColumns)
    .from(rigs)
    .innerJoin(memberships, and(eq(memberships.rigId, rigs.id), eq(memberships.userId, userId)))
    .where(eq(rigs.id, rigId))
    .get();
  if (!row) throw notFound(`No rig with id ${rigId}`);
  return { ...toSummary(row), stations: listStations(db, rigId) };
}

/** Creates the rig with its creator as owner, in one transaction. */
export function createRig(db: Db, userId: number, input: RigValues): RigDetail {
  const rigId = db.transaction((tx) => {
    const rig = tx
      .insert(rigs)
      .values({ name: input.name, description: input.description, ...input.lineSettings, responseTimeoutMs: input.responseTimeoutMs, cpuHz: Math.round(input.cpuClockMHz * 1e6), createdBy: userId })
      .returning({ id: rigs.id })
      .get();
    tx.insert(memberships).values({ rigId: rig.id, userId, role: 'owner' }).run();
    return rig.id;
  });
  return getRigDetail(db, rigId, userId);
}

/** Applies only the keys present in `patch`; lineSettings is replaced as a whole. */
export function updateRig(db: Db, rigId: number, userId: number, patch: Partial<RigValues>): RigDetail {
  const set: Partial<typeof rigs.$inferInsert> = {};
  if (patch.name !== undefined) set.name = patch.name;
  if (patch.description !== undefined) set.description = patch.description;
  if (patch.lineSettings !== undefined) Object.assign(set, patch.lineSettings);
  if (patch.responseTimeoutMs !== undefined) set.responseTimeoutMs = patch.responseTimeoutMs;
  if (patch.cpuClockMHz !== undefined) set.cpuHz = Math.round(patch.cpuClockMHz * 1e6);
  if (Object.keys(set).length > 0) db.update(rigs).set(set).where(eq(rigs.id, rigId)).run();
  return getRigDetail(db, rigId, userId);
}

/** Stations, memberships and invitations go with it (foreign keys cascade). */
export function deleteRig(db: Db, rigId: number): void {
  const { changes } = db.delete(rigs).where(eq(rigs.id, rigId)).run();
  if (changes === 0) throw notFound(`No rig with id ${rigId}`);
}
