import { eq } from 'drizzle-orm';
import type { User } from '../../shared/schemas';
import type { Db } from '../db/client';
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

export const findUserById = (db: Db, id: number): UserRow | undefined =>
  db.select().from(users).where(eq(users.id, id)).get();
