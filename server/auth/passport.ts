import type { Request } from 'express';
import { Passport } from 'passport';
import { Strategy as LocalStrategy } from 'passport-local';
import type { User } from '../../shared/schemas';
import type { AppContext } from '../context';
import { authenticate } from '../services/session';
import { findUserById, toUser } from '../services/users';
import './user';

/**
 * One Passport instance per app (not the global singleton), so several apps in one test process
 * each use their own database. The session holds only the user id.
 */
export function createPassport(ctx: Pick<AppContext, 'db' | 'hasher'>) {
  const passport = new Passport();
  passport.use(
    new LocalStrategy({ usernameField: 'email', passwordField: 'password', session: true }, (email, password, done) => {
      authenticate(ctx, email, password).then(
        (user) => done(null, user ?? false),
        (err) => done(err),
      );
    }),
  );
  passport.serializeUser<number>((user, done) => done(null, (user as User).id));
  passport.deserializeUser<number>((id, done) => {
    try {
      const row = findUserById(ctx.db, id);
      // an account that no longer exists ends the sign-in instead of failing the request
      done(null, row ? toUser(row) : false);
    } catch (err) {
      done(err);
    }
  });
  return passport;
}

export type FlaglinePassport = ReturnType<typeof createPassport>;

/** Runs the local strategy on an already validated body; resolves to the user or null. */
export function verifyCredentials(passport: FlaglinePassport, req: Request): Promise<User | null> {
  return new Promise((resolve, reject) => {
    passport.authenticate('local', { session: false }, (err: unknown, user: User | false) => {
      if (err) reject(err);
      else resolve(user || null);
    })(req, req.res!, reject);
  });
}

/** Signs in; passport 0.7's req.login regenerates the session id first (session fixation). */
export const signIn = (req: Request, user: User) =>
  new Promise<void>((resolve, reject) => req.login(user, (err) => (err ? reject(err) : resolve())));

/**
 * Signs out. req.logout regenerates the session, and express-session would store the new, empty
 * one; it is dropped instead, so a signed-out browser has no session row, like any visitor.
 */
export const signOut = (req: Request) =>
  new Promise<void>((resolve, reject) =>
    req.logout((err) => {
      if (err) return reject(err);
      req.session.destroy((destroyErr) => (destroyErr ? reject(destroyErr) : resolve()));
    }),
  );
