import { inArray } from 'drizzle-orm';
import type { SessionInfo, User } from '../../shared/schemas';
import type { AppContext } from '../context';
import { users } from '../db/schema';
import { DEMO_ACCOUNTS, DEMO_PASSWORD } from '../seed/demo';
import { findUserByEmail, toUser } from './users';

/** The user when e-mail and password match; null otherwise (same time spent either way). */
export async function authenticate(
  ctx: Pick<AppContext, 'db' | 'hasher'>,
  email: string,
  password: string,
): Promise<User | null> {
  const row = findUserByEmail(ctx.db, email);
  if (!row) {
    await ctx.hasher.burn(password);
    return null;
  }
  return (await ctx.hasher.verify(password, row.passwordHash)) ? toUser(row) : null;
}

/** Demo accounts are shown only in demo mode and only while they exist in this database. */
export function demoInfo(ctx: Pick<AppContext, 'db' | 'demo'>): SessionInfo['demo'] {
  if (!ctx.demo) return null;
  const emails = DEMO_ACCOUNTS.map((a) => a.email);
  const present = new Set(
    ctx.db
      .select({ email: users.email })
      .from(users)
      .where(inArray(users.email, emails))
      .all()
      .map((r) => r.email),
  );
  const accounts = DEMO_ACCOUNTS.filter((a) => present.has(a.email)).map(({ email, role }) => ({ email, role }));
  return accounts.length ? { password: DEMO_PASSWORD, accounts } : null;
}
