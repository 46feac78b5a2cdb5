import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { TestProject } from 'vitest/node';
import { buildClient, clientBuildReason } from '../../server/cli/client-build';
import { startServer } from '../../server/index';

declare module 'vitest' {
  export interface ProvidedContext {
    baseUrl: string;
    /** the server's database file: tests read mail sent to people who cannot sign in (yet) there */
    dbPath: string;
  }
}

/** Builds the client (the same freshness rule as `npm start`), then serves it with a throwaway database. */
export default async function setup(project: TestProject) {
  if (clientBuildReason()) await buildClient();
  const dir = mkdtempSync(join(tmpdir(), 'flagline-browser-'));
  const dbPath = join(dir, 'flagline.db');
  const server = await startServer({
    port: 0,
    dbPath,
    demo: true,
    bcryptCost: 4,
    // every test signs in several times from one address; the limiter has its own API tests
    rateLimit: { signIn: 1000, signInPerAddress: 10_000, signInBackoffMaxMs: 0, reset: 1000, resetPerRecipient: 1000, invitationsPerUser: 1000, invitationsPerRecipient: 1000 },
    // the development mailbox (demo mode), whatever the environment says
    smtpUrl: '',
  });
  project.provide('baseUrl', server.url);
  project.provide('dbPath', dbPath);
  return async () => {
    await server.close();
    rmSync(dir, { recursive: true, force: true });
  };
}
