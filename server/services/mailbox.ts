import { desc, eq } from 'drizzle-orm';
import type { MailMessage } from '../../shared/schemas';
import type { Db } from '../db/client';
import { mailMessages } from '../db/schema';

const MAILBOX_LIMIT = 200;

/**
 * The development mailbox of one person: only messages addressed to their own e-mail, newest
 * first. (Everyone else's mail holds reset and invitation links that would let a reader sign in
 * as them.) The mailer stores one plain lower-case address per message.
 */
export function listMailFor(db: Db, email: string): MailMessage[] {
  return db
    .select()
    .from(mailMessages)
    .where(eq(mailMessages.to, email.trim().toLowerCase()))
    .orderBy(desc(mailMessages.id))
    .limit(MAILBOX_LIMIT)
    .all()
    .map((m) => ({ id: m.id, to: m.to, subject: m.subject, text: m.text, html: m.html, createdAt: m.createdAt.toISOString() }));
}
