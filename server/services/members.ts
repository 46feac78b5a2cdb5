import { and, asc, eq, sql } from 'drizzle-orm';
import type { Member, Role } from '../../shared/schemas';
import type { Db } from '../db/client';
import { memberships, users } from '../db/schema';
import { conflict, notFound } from '../http/errors';

const roleRank = sql<number>`case ${memberships.role} when 'owner' then 0 when 'analyst' then 1 else 2 end`;

export function listMembers(db: Db, rigId: number): Member[] {
  return db
    .select({ userId: users.id, email: users.email, name: users.name, role: memberships.role })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.rigId, rigId))
    .orderBy(roleRank, asc(users.name), asc(users.id))
    .all();
}

function getMember(db: Db, rigId: number, userId: number): Member {
  const member = db
    .select({ userId: users.id, email: users.email, name: users.name, role: memberships.role })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.rigId, rigId), eq(memberships.userId, userId)))
    .get();
  if (!member) throw notFound(`User ${userId} is not a member of this rig`);
  return member;
}

function ownerCount(db: Db, rigId: number): number {
  return db
    .select({ n: sql<number>`count(*)` })
    .from(memberships)
    .where(and(eq(memberships.rigId, rigId), eq(memberships.role, 'owner')))
    .get()!.n;
}

const LAST_OWNER = 'A rig must keep at least one owner: make another member owner first';

/** Changes a member's role; refuses (409) to demote the rig's last owner. */
export function changeMemberRole(db: Db, rigId: number, userId: number, role: Role): Member {
  return db.transaction((tx) => {
    const member = getMember(tx, rigId, userId);
    if (member.role === role) return member;
    if (member.role === 'owner' && ownerCount(tx, rigId) <= 1) throw conflict(LAST_OWNER);
    tx.update(memberships)
      .set({ role })
      .where(and(eq(memberships.rigId, rigId), eq(memberships.userId, userId)))
      .run();
    return { ...member, role };
  });
}

/** Removes a member (or lets one leave); refuses (409) to remove the rig's last owner. */
export function removeMember(db: Db, rigId: number, userId: number): void {
  db.transaction((tx) => {
    const member = getMember(tx, rigId, userId);
    if (member.role === 'owner' && ownerCount(tx, rigId) <= 1) throw conflict(LAST_OWNER);
    tx.delete(memberships)
      .where(and(eq(memberships.rigId, rigId), eq(memberships.userId, userId)))
      .run();
  });
}
