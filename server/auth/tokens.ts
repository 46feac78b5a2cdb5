import { createHash, randomBytes } from 'node:crypto';

/** A single-use secret for an e-mailed link: only its hash is stored, so a database leak reveals no usable link. */
export function newToken(): { token: string; tokenHash: string } {
  const token = randomBytes(32).toString('base64url');
  return { token, tokenHash: hashToken(token) };
}

export const hashToken = (token: string) => createHash('sha256').update(token, 'utf8').digest('hex');

export const INVITATION_LIFETIME_MS = 7 * 24 * 60 * 60 * 1000;
export const RESET_LIFETIME_MS = 60 * 60 * 1000;
