import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createDb, type DbHandle } from '../../server/db/client.ts';
import { applyMigrations } from '../../server/db/migrate.ts';
import { outboxMails } from '../../server/db/schema.ts';
import { startMailCatcher } from '../../server/dev/mail-catcher.ts';
import { createLogger } from '../../server/logger.ts';
import { deliverDueMails, queueMail, retryDelaySeconds } from '../../server/mail/outbox.ts';
import { createTransport } from '../../server/mail/transport.ts';
import { testDatabaseUrl } from './support.ts';

async function freePort(): Promise<number> {
  return new Promise((resolve) => {
    const s = net.createServer().listen(0, '127.0.0.1', () => {
      const { port } = s.address() as net.AddressInfo;
      s.close(() => resolve(port));
    });
  });
}

describe('the mail outbox against a real SMTP server on loopback', () => {
  let db: DbHandle;
  const logger = createLogger('silent');
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-mail-'));

  beforeAll(async () => {
    db = createDb(testDatabaseUrl(), 3);
    await applyMigrations(db.db, db.pool);
    await db.db.delete(outboxMails);
  });
  afterAll(async () => {
    await db.close();
    fs.rmSync(dir, { recursive: true, force: true });
  });

  it('delivers a queued mail; the catcher keeps it and mailparser reads subject, recipients and body', async () => {
    const catcher = await startMailCatcher({ port: 0, dir: path.join(dir, 'a') });
    try {
      const id = await queueMail(db.db, {
        kind: 'test',
        recipients: ['trader@nordvale.example', 'risk@nordvale.example'],
        subject: 'Regime call: westerly, confidence high',
        textBody: 'Wetter in the northern catchments.',
        htmlBody: '<p>Wetter in the northern catchments.</p>',
      });
      const transport = createTransport(`smtp://127.0.0.1:${catcher.port}`);
      expect(await deliverDueMails(db, transport, 'Liftwise <liftwise@nordvale.example>', logger)).toBe(1);
      transport.close();
      const [row] = await db.db.select().from(outboxMails).where(eq(outboxMails.id, id));
      expect(row).toMatchObject({ state: 'sent', attempts: 1, lastError: null });
      const mails = await catcher.list();
      expect(mails).toHaveLength(1);
      expect(mails[0].subject).toBe('Regime call: westerly, confidence high');
      expect(mails[0].to.sort()).toEqual(['risk@nordvale.example', 'trader@nordvale.example']);
      expect(mails[0].text.trim()).toBe('Wetter in the northern catchments.');
      expect(mails[0].html).toContain('<p>Wetter in the northern catchments.</p>');
    } finally {
      await catcher.stop();
    }
  });

  it('keeps the mail while the mail server is down and sends it when the server returns', async () => {
    const port = await freePort();
    const id = await queueMail(db.db, { kind: 'test', recipients: ['met@nordvale.example'], subject: 'held', textBody: 'x' });
    const transport = createTransport(`smtp://127.0.0.1:${port}`);
    expect(await deliverDueMails(db, transport, 'a@nordvale.example', logger)).toBe(0);
    let [row] = await db.db.select().from(outboxMails).where(eq(outboxMails.id, id));
    expect(row.state).toBe('pending');
    expect(row.attempts).toBe(1);
    expect(row.lastError).toMatch(/ECONNREFUSED|connect/i);
    expect(row.nextAttemptAt.getTime()).toBeGreaterThan(Date.now());

    const catcher = await startMailCatcher({ port, dir: path.join(dir, 'b') });
    try {
      // Make the retry due now rather than waiting for the backoff.
      await db.db.update(outboxMails).set({ nextAttemptAt: new Date() }).where(eq(outboxMails.id, id));
      expect(await deliverDueMails(db, transport, 'a@nordvale.example', logger)).toBe(1);
      [row] = await db.db.select().from(outboxMails).where(eq(outboxMails.id, id));
      expect(row).toMatchObject({ state: 'sent', attempts: 2 });
      expect((await catcher.list()).map((m) => m.subject)).toEqual(['held']);
    } finally {
      transport.close();
      await catcher.stop();
    }
  });

  it('backs off exponentially up to fifteen minutes', () => {
    expect([1, 2, 3, 4].map(retryDelaySeconds)).toEqual([5, 10, 20, 40]);
    expect(retryDelaySeconds(30)).toBe(900);
  });
});
