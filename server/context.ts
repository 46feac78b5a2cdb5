import type { DbHandle } from './db/client';
import type { PasswordHasher } from './auth/passwords';
import type { SqliteSessionStore } from './auth/session-store';
import type { Mailer } from './mail/mailer';

/** What services need from the running app; built once by createApp. */
export interface AppContext {
  db: DbHandle['db'];
  hasher: PasswordHasher;
  mailer: Mailer;
  sessionStore: SqliteSessionStore;
  /** base of links in e-mails; startServer fills it in once the port is known */
  publicUrl: string;
  demo: boolean;
}
