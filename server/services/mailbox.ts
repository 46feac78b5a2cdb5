import { and, desc, eq } from 'drizzle-orm';
import type { MailMessage } from '../../shared/schemas';
import type { Db } from '../db/client';
import { mailMessages, memberships } from '../db/schema';

const MAILBOX_LIMIT = 200;

export const ownsAnyRig = (db: Db, userId: number): boolean =>
  db
    .select({ id: memberships.id })
    .from(memberships)
    .where(and(eq(memberships.userId, userId), eq(memberships.role, 'owner')))
    .limit(1)
    .get() !== undefined;

/** The fake transport's messages, newest first. */
export function listMail(db: Db): MailMessage[] {
  return db
    .select()
    .from(mailMessages)
    .orderBy(desc(mailMessages.id))
    .limit(MAILBOX_LIMIT)
    .all()
    .map((m) => ({ id: m.id, to: m.to, subject: m.subject, text: m.text, html: m.html, createdAt: m.createdAt.toISOString() }));
}
