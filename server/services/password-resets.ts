import { and, eq, gt, isNull, sql } from 'drizzle-orm';
import type { User } from '../../shared/schemas';
import type { AppContext } from '../context';
import type { Db } from '../db/client';
import { passwordResets, sessions, users } from '../db/schema';
import { RESET_LIFETIME_MS, hashToken, newToken } from '../auth/tokens';
import { gone, notFound } from '../http/errors';
import { passwordResetMail } from '../mail/templates';
import { findUserByEmail, findUserById, toUser } from './users';

type ResetRow = typeof passwordResets.$inferSelect;

/**
 * Mails a reset link when the address has an account. The caller answers 202 either way, so the
 * answer does not reveal which addresses have accounts, and so does the time it takes: both paths
 * check the limits, make a token and render the mail; only an existing account then stores the
 * token and hands the mail to the transport, without waiting for it (an SMTP round trip would
 * otherwise tell the two apart). A mail that cannot be sent is logged and its token withdrawn.
 */
export function requestPasswordReset(ctx: Pick<AppContext, 'db' | 'mailer' | 'publicUrl'>, email: string): void {
  ctx.mailer.ensureCanSend('password-reset links');
  ctx.mailer.limits.takeReset(email);
  const user = findUserByEmail(ctx.db, email);
  const { token, tokenHash } = newToken();
  const expiresAt = new Date(Date.now() + RESET_LIFETIME_MS);
  const mail = passwordResetMail({ to: user?.email ?? email, name: user?.name ?? email, link: `${ctx.publicUrl}/reset-password/${token}`, expiresAt });
  if (!user) return;
  const row = ctx.db.insert(passwordResets).values({ userId: user.id, tokenHash, expiresAt }).returning({ id: passwordResets.id }).get();
  ctx.mailer.send(mail).catch((err: unknown) => {
    console.error('[flagline] password reset mail failed:', err);
    try {
      ctx.db.delete(passwordResets).where(eq(passwordResets.id, row.id)).run();
    } catch (cleanupErr) {
      console.error('[flagline] could not withdraw the unsent reset link:', cleanupErr);
    }
  });
}

function usableReset(db: Db, token: string, now = new Date()): ResetRow {
  const row = db.select().from(passwordResets).where(eq(passwordResets.tokenHash, hashToken(token))).get();
  if (!row) throw notFound('This reset link is not valid; check that you copied all of it');
  if (row.usedAt) throw gone('This reset link has already been used; ask for a new one if you still need it');
  if (row.expiresAt <= now) throw gone('This reset link has expired (links last one hour); ask for a new one');
  return row;
}

export function previewPasswordReset(db: Db, token: string): { email: string } {
  const reset = usableReset(db, token);
  return { email: findUserById(db, reset.userId)!.email };
}

/**
 * Sets the new password, uses up this and every other open reset link of the account, and ends
 * every existing sign-in of the account — all in one transaction. The caller signs the user in.
 */
export async function completePasswordReset(ctx: Pick<AppContext, 'db' | 'hasher'>, token: string, password: string): Promise<User> {
  const reset = usableReset(ctx.db, token);
  const passwordHash = await ctx.hasher.hash(password);
  return ctx.db.transaction((tx) => {
    const now = new Date();
    const claimed = tx
      .update(passwordResets)
      .set({ usedAt: now })
      .where(and(eq(passwordResets.id, reset.id), isNull(passwordResets.usedAt), gt(passwordResets.expiresAt, now)))
      .run();
    if (claimed.changes !== 1) throw gone('This reset link has already been used or has expired');
    tx.update(passwordResets)
      .set({ usedAt: now })
      .where(and(eq(passwordResets.userId, reset.userId), isNull(passwordResets.usedAt)))
      .run();
    const user = tx.update(users).set({ passwordHash }).where(eq(users.id, reset.userId)).returning().get();
    tx.delete(sessions).where(sql`json_extract(${sessions.data}, '$.passport.user') = ${reset.userId}`).run();
    return toUser(user);
  });
}
