/**
 * `npm start` (and `npm run dev`, which passes --dev): build the client when needed, apply
 * migrations, seed the demo on an empty database in demo mode, serve API and client on PORT.
 * FLAGLINE_SKIP_BUILD=1 skips the client build check (serves whatever dist/client holds).
 */
import { defaultDbPath } from '../db/client';
import { startServer } from '../index';
import { chooseMailMode, mailStartupNotice } from '../mail/mailer';
import { DEMO_ACCOUNTS, DEMO_PASSWORD } from '../seed/demo';
import { buildClient, clientBuildReason } from './client-build';

function demoMode(): boolean {
  const flag = process.env.FLAGLINE_DEMO;
  if (flag === '1') return true;
  if (flag === '0') return false;
  return process.env.NODE_ENV !== 'production';
}

function port(): number {
  const raw = process.env.PORT ?? '3000';
  const n = Number(raw);
  if (!Number.isInteger(n) || n < 0 || n > 65535) {
    console.error(`PORT must be a port number 0–65535, not "${raw}"`);
    process.exit(2);
  }
  return n;
}

async function main() {
  const dev = process.argv.includes('--dev');
  const demo = demoMode();
  const dbPath = defaultDbPath();

  if (!dev && process.env.FLAGLINE_SKIP_BUILD !== '1') {
    const reason = clientBuildReason();
    if (reason) {
      console.log(`Building the client (${reason})…`);
      await buildClient();
    }
  }

  const server = await startServer({ port: port(), dbPath, demo, dev });
  console.log(`Flagline${dev ? ' (development)' : ''} is running at ${server.url}  (database: ${dbPath})`);
  if (demo) {
    console.log(`Demo mode: sign in with ${DEMO_ACCOUNTS.map((a) => `${a.email} (${a.role})`).join(', ')}`);
    console.log(`           password for all three: ${DEMO_PASSWORD}`);
  }
  const mail = mailStartupNotice(chooseMailMode({ smtpUrl: process.env.FLAGLINE_SMTP_URL, mailbox: demo || dev }));
  if (mail) console.log(mail);

  const stop = () => {
    void server.close().finally(() => process.exit(0));
  };
  process.once('SIGINT', stop);
  process.once('SIGTERM', stop);
}

main().catch((err) => {
  console.error('Flagline could not start:', err instanceof Error ? err.message : err);
  process.exit(1);
});
