import { eq, sql } from 'drizzle-orm';
import type { User } from '../../shared/schemas';
import type { Db } from '../db/client';
import { prepared } from '../db/prepared';
import { users } from '../db/schema';

export type UserRow = typeof users.$inferSelect;

export const toUser = (row: Pick<UserRow, 'id' | 'email' | 'name'>): User => ({
  id: row.id,
  email: row.email,
  name: row.name,
});

/** e-mail addresses are stored trimmed and lower-case (the shared emailSchema normalises them) */
export const findUserByEmail = (db: Db, email: string): UserRow | undefined =>
  db.select().from(users).where(eq(users.email, email.trim().toLowerCase())).get();

/** passport reads the signed-in user on every request: a prepared statement per database handle */
export const findUserById = (db: Db, id: number): UserRow | undefined =>
  prepared(db, 'user by id', () => db.select().from(users).where(eq(users.id, sql.placeholder('id'))).prepare()).get({ id });
