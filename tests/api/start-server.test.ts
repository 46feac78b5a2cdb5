import { describe, expect, it } from 'vitest';
import { startServer } from '../../server/index';
import { TEST_BCRYPT_COST, tempDbPath } from './helpers';

describe('startServer', () => {
  it('listens on a free port, serves the API and mails links under its own address', async () => {
    const db = tempDbPath();
    const server = await startServer({ port: 0, dbPath: db.path, demo: true, bcryptCost: TEST_BCRYPT_COST, smtpUrl: '' });
    try {
      expect(server.url).toMatch(/^http:\/\/localhost:\d+$/);
      const res = await fetch(`${server.url.replace('localhost', '127.0.0.1')}/api/session`);
      expect(res.status).toBe(200);
      const info = await res.json();
      expect(info.demo.accounts).toHaveLength(3);
      const cookie = res.headers.get('set-cookie')!.split(';')[0];
      const reset = await fetch(`${server.url.replace('localhost', '127.0.0.1')}/api/password-resets`, {
        method: 'POST',
        headers: { 'content-type': 'application/json', 'x-csrf-token': info.csrfToken, cookie },
        body: JSON.stringify({ email: 'owner@demo.test' }),
      });
      expect(reset.status).toBe(202);
    } finally {
      await server.close();
    }
    const { default: Database } = await import('better-sqlite3');
    const sqlite = new Database(db.path);
    const mail = sqlite.prepare('select text from mail_messages').get() as { text: string };
    sqlite.close();
    expect(mail.text).toContain(`${server.url}/reset-password/`);
    db.cleanup();
  });
});
