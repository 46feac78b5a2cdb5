import { and, asc, eq, gt, isNull } from 'drizzle-orm';
import type { Invitation, InvitationPreview, Role, User } from '../../shared/schemas';
import type { AppContext } from '../context';
import type { Db } from '../db/client';
import { invitations, memberships, rigs, users } from '../db/schema';
import { INVITATION_LIFETIME_MS, hashToken, newToken } from '../auth/tokens';
import { HttpError, badRequest, conflict, gone, notFound } from '../http/errors';
import { invitationMail } from '../mail/templates';
import { findUserByEmail, toUser } from './users';

type InvitationRow = typeof invitations.$inferSelect;

const invitationColumns = {
  id: invitations.id,
  rigId: invitations.rigId,
  email: invitations.email,
  role: invitations.role,
  invitedBy: users.name,
  createdAt: invitations.createdAt,
  expiresAt: invitations.expiresAt,
};

const toInvitation = (r: {
  id: number;
  rigId: number;
  email: string;
  role: Role;
  invitedBy: string;
  createdAt: Date;
  expiresAt: Date;
}): Invitation => ({ ...r, createdAt: r.createdAt.toISOString(), expiresAt: r.expiresAt.toISOString() });

const pending = (now: Date) => and(isNull(invitations.acceptedAt), gt(invitations.expiresAt, now));

/** Invitations of the rig that can still be accepted, oldest first. */
export function listPendingInvitations(db: Db, rigId: number, now = new Date()): Invitation[] {
  return db
    .select(invitationColumns)
    .from(invitations)
    .innerJoin(users, eq(users.id, invitations.invitedBy))
    .where(and(eq(invitations.rigId, rigId), pending(now)))
    .orderBy(asc(invitations.createdAt), asc(invitations.id))
    .all()
    .map(toInvitation);
}

/**
 * Invites an address to a rig and mails the link. Inviting an address that already has a pending
 * invitation to this rig replaces it (the older link stops working), so "send again" is just
 * another invite. If the mail cannot be sent, the invitation is withdrawn again.
 */
export async function createInvitation(
  ctx: Pick<AppContext, 'db' | 'mailer' | 'publicUrl'>,
  rigId: number,
  inviter: User,
  input: { email: string; role: Role },
): Promise<Invitation> {
  const { db } = ctx;
  const email = input.email.trim().toLowerCase();
  ctx.mailer.ensureCanSend('invitations');
  ctx.mailer.limits.checkInvitation(email, inviter.id);
  const { token, tokenHash } = newToken();
  const now = new Date();
  const expiresAt = new Date(now.getTime() + INVITATION_LIFETIME_MS);
  const { id, rigName } = db.transaction((tx) => {
    const rig = tx.select({ name: rigs.name }).from(rigs).where(eq(rigs.id, rigId)).get();
    if (!rig) throw notFound(`No rig with id ${rigId}`);
    const existing = findUserByEmail(tx, email);
    if (existing) {
      const member = tx
        .select({ role: memberships.role })
        .from(memberships)
        .where(and(eq(memberships.rigId, rigId), eq(memberships.userId, existing.id)))
        .get();
      if (member) throw conflict(`${email} is already a member of this rig (${member.role})`);
    }
    tx.delete(invitations)
      .where(and(eq(invitations.rigId, rigId), eq(invitations.email, email), isNull(invitations.acceptedAt)))
      .run();
    const row = tx
      .insert(invitations)
      .values({ rigId, email, role: input.role, tokenHash, invitedBy: inviter.id, createdAt: now, expiresAt })
      .returning({ id: invitations.id })
      .get();
    return { id: row.id, rigName: rig.name };
  });
  try {
    await ctx.mailer.send(
      invitationMail({
        to: email,
        rigName,
        role: input.role,
        inviterName: inviter.name,
        link: `${ctx.publicUrl}/invitations/${token}`,
        expiresAt,
      }),
    );
  } catch (err) {
    db.delete(invitations).where(eq(invitations.id, id)).run();
    console.error('[flagline] invitation mail failed:', err);
    throw new HttpError(502, `The invitation mail to ${email} could not be sent; nothing was saved, try again later`);
  }
  ctx.mailer.limits.countInvitation(email, inviter.id);
  return { id, rigId, email, role: input.role, invitedBy: inviter.name, createdAt: now.toISOString(), expiresAt: expiresAt.toISOString() };
}

export function deleteInvitation(db: Db, rigId: number, invitationId: number): void {
  const { changes } = db
    .delete(invitations)
    .where(and(eq(invitations.id, invitationId), eq(invitations.rigId, rigId)))
    .run();
  if (changes === 0) throw notFound(`No invitation with id ${invitationId} on this rig`);
}

/** The invitation behind a link: 404 unknown, 410 used or expired. */
function usableInvitation(db: Db, token: string, now = new Date()): InvitationRow {
  const row = db.select().from(invitations).where(eq(invitations.tokenHash, hashToken(token))).get();
  if (!row) throw notFound('This invitation link is not valid; check that you copied all of it');
  if (row.acceptedAt) throw gone('This invitation has already been used; sign in, or ask the rig owner for a new one');
  if (row.expiresAt <= now) throw gone('This invitation has expired; ask the rig owner to invite you again');
  return row;
}

export function previewInvitation(db: Db, token: string): InvitationPreview {
  const inv = usableInvitation(db, token);
  const rig = db.select({ name: rigs.name }).from(rigs).where(eq(rigs.id, inv.rigId)).get()!;
  const inviter = db.select({ name: users.name }).from(users).where(eq(users.id, inv.invitedBy)).get()!;
  return {
    rigName: rig.name,
    email: inv.email,
    role: inv.role,
    invitedBy: inviter.name,
    accountExists: findUserByEmail(db, inv.email) !== undefined,
  };
}

/**
 * Accepts an invitation. An address without an account gets one (name required) with the given
 * password; an address that has an account proves it with that account's password (401 otherwise).
 * Marking the invitation used, creating the account and adding the membership happen in one
 * transaction; the caller signs the user in afterwards.
 */
export async function acceptInvitation(
  ctx: Pick<AppContext, 'db' | 'hasher'>,
  token: string,
  input: { name?: string; password: string },
): Promise<{ user: User; rigId: number }> {
  const { db, hasher } = ctx;
  const inv = usableInvitation(db, token);
  const existing = findUserByEmail(db, inv.email);
  let newPasswordHash: string | undefined;
  if (existing) {
    if (!(await hasher.verify(input.password, existing.passwordHash))) {
      throw new HttpError(401, `Wrong password for ${inv.email}; use the password of your existing account`);
    }
  } else {
    if (!input.name) throw badRequest('Some fields need attention', { name: 'Enter your name' });
    newPasswordHash = await hasher.hash(input.password);
  }
  return db.transaction((tx) => {
    // re-checked inside the transaction: two tabs accepting at once get one success and one 410
    const now = new Date();
    const claimed = tx
      .update(invitations)
      .set({ acceptedAt: now })
      .where(and(eq(invitations.id, inv.id), pending(now)))
      .run();
    if (claimed.changes !== 1) throw gone('This invitation has already been used or has expired');
    let userRow = findUserByEmail(tx, inv.email);
    if (!userRow) {
      if (!newPasswordHash || !input.name) throw conflict('An account for this address was created meanwhile; sign in and try again');
      userRow = tx.insert(users).values({ email: inv.email, name: input.name, passwordHash: newPasswordHash }).returning().get();
    }
    // already a member (e.g. invited twice): keep the role they have
    tx.insert(memberships).values({ rigId: inv.rigId, userId: userRow.id, role: inv.role }).onConflictDoNothing().run();
    return { user: toUser(userRow), rigId: inv.rigId };
  });
}
