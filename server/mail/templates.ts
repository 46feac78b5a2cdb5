import type { Role } from '../../shared/schemas';
import { headerText } from './header-text';
import type { OutgoingMail } from './mailer';

const escapeHtml = (s: string) =>
  s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);

const ROLE_WORDS: Record<Role, string> = {
  owner: 'owner (everything, including members and deleting)',
  analyst: 'analyst (upload, decode, notes, field maps)',
  viewer: 'viewer (read, download, comment)',
};

export function invitationMail(p: {
  to: string;
  rigName: string;
  role: Role;
  inviterName: string;
  link: string;
  expiresAt: Date;
}): OutgoingMail {
  const expires = p.expiresAt.toUTCString();
  // names are user-supplied and go into the subject and into one-line spots of the body
  const inviterName = headerText(p.inviterName);
  const rigName = headerText(p.rigName);
  return {
    to: p.to,
    subject: `${inviterName} invited you to the rig "${rigName}" on Flagline`,
    text:
      `${inviterName} invited you to join the rig "${rigName}" on Flagline as ${ROLE_WORDS[p.role]}.\n\n` +
      `Accept the invitation here:\n${p.link}\n\n` +
      `The link works once and expires ${expires}. If you did not expect this mail, ignore it.\n`,
    html:
      `<p>${escapeHtml(inviterName)} invited you to join the rig <strong>${escapeHtml(rigName)}</strong> ` +
      `on Flagline as ${escapeHtml(ROLE_WORDS[p.role])}.</p>` +
      `<p><a href="${escapeHtml(p.link)}">Accept the invitation</a></p>` +
      `<p>The link works once and expires ${escapeHtml(expires)}. If you did not expect this mail, ignore it.</p>`,
  };
}

export function passwordResetMail(p: { to: string; name: string; link: string; expiresAt: Date }): OutgoingMail {
  const expires = p.expiresAt.toUTCString();
  const name = headerText(p.name);
  return {
    to: p.to,
    subject: 'Reset your Flagline password',
    text:
      `Hello ${name},\n\nSomeone (hopefully you) asked to reset the password of your Flagline account.\n\n` +
      `Choose a new password here:\n${p.link}\n\n` +
      `The link works once and expires ${expires}. If you did not ask for this, ignore this mail; ` +
      `your password stays as it is.\n`,
    html:
      `<p>Hello ${escapeHtml(name)},</p><p>Someone (hopefully you) asked to reset the password of your Flagline account.</p>` +
      `<p><a href="${escapeHtml(p.link)}">Choose a new password</a></p>` +
      `<p>The link works once and expires ${escapeHtml(expires)}. If you did not ask for this, ignore this mail; your password stays as it is.</p>`,
  };
}
