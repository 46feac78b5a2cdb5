import { createHash } from 'node:crypto';
import bcrypt from 'bcryptjs';

export const PRODUCTION_BCRYPT_COST = 12;

/**
 * bcrypt only reads the first 72 bytes; passwords may be up to 200 characters, so the password is
 * first reduced to a fixed-length SHA-256 digest (base64: no NUL bytes, 44 characters).
 */
const prehash = (password: string) => createHash('sha256').update(password, 'utf8').digest('base64');

export interface PasswordHasher {
  hash(password: string): Promise<string>;
  verify(password: string, hash: string): Promise<boolean>;
  /** compares against a throwaway hash so an unknown e-mail costs as much time as a wrong password */
  burn(password: string): Promise<void>;
}

export function createPasswordHasher(cost: number = PRODUCTION_BCRYPT_COST): PasswordHasher {
  const dummy = bcrypt.hashSync(prehash('flagline-timing-equaliser'), cost);
  return {
    hash: (password) => bcrypt.hash(prehash(password), cost),
    verify: (password, hash) => bcrypt.compare(prehash(password), hash),
    burn: async (password) => {
      await bcrypt.compare(prehash(password), dummy);
    },
  };
}
