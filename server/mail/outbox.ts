/**
 * Writing to the outbox and delivering from it. Delivery is at least once per mail row: a row is
 * marked sent only after the SMTP server accepted it.
 */
import { and, asc, eq, lte } from 'drizzle-orm';
import type { Transporter } from 'nodemailer';
import type { Database, DbHandle } from '../db/client.ts';
import { outboxMails } from '../db/schema.ts';
import type { Logger } from '../logger.ts';

export interface MailToQueue {
  kind: string;
  relatedType?: string;
  relatedId?: string;
  recipients: string[];
  subject: string;
  textBody: string;
  htmlBody?: string;
}

type Tx = Parameters<Parameters<Database['transaction']>[0]>[0];

/** Queues a mail inside the caller's transaction: it exists exactly when the caller's change does. */
export async function queueMail(tx: Database | Tx, mail: MailToQueue): Promise<string> {
  const [row] = await tx.insert(outboxMails).values(mail).returning({ id: outboxMails.id });
  return row.id;
}

/** Seconds to wait before attempt n + 1: 5 s doubling, at most 15 minutes. */
export function retryDelaySeconds(attempts: number): number {
  return Math.min(5 * 2 ** Math.max(0, attempts - 1), 15 * 60);
}

export const MAX_ATTEMPTS = 30;

/** Delivers every due mail once; returns how many were sent. Safe to run from several processes (SKIP LOCKED). */
export async function deliverDueMails(db: DbHandle, transport: Transporter, from: string, logger: Logger, batch = 20): Promise<number> {
  let sent = 0;
  await db.db.transaction(async (tx) => {
    const due = await tx
      .select()
      .from(outboxMails)
      .where(and(eq(outboxMails.state, 'pending'), lte(outboxMails.nextAttemptAt, new Date())))
      .orderBy(asc(outboxMails.createdAt))
      .limit(batch)
      .for('update', { skipLocked: true });
    for (const mail of due) {
      try {
        await transport.sendMail({ from, to: mail.recipients, subject: mail.subject, text: mail.textBody, html: mail.htmlBody ?? undefined });
        await tx.update(outboxMails).set({ state: 'sent', sentAt: new Date(), attempts: mail.attempts + 1, lastError: null }).where(eq(outboxMails.id, mail.id));
        sent += 1;
      } catch (err) {
        const attempts = mail.attempts + 1;
        const message = (err as Error).message?.slice(0, 500) ?? String(err);
        await tx
          .update(outboxMails)
          .set({
            attempts,
            lastError: message,
            state: attempts >= MAX_ATTEMPTS ? 'failed' : 'pending',
            nextAttemptAt: new Date(Date.now() + retryDelaySeconds(attempts) * 1000),
          })
          .where(eq(outboxMails.id, mail.id));
        logger.warn({ mailId: mail.id, attempts, err: message }, 'mail not delivered; will retry');
      }
    }
  });
  return sent;
}

export interface MailSender {
  /** deliver now instead of waiting for the next tick (tests, publish) */
  kick(): Promise<number>;
  stop(): void;
}

/** Polls the outbox every `intervalMs`. */
export function startMailSender(db: DbHandle, transport: Transporter, from: string, logger: Logger, intervalMs = 2000): MailSender {
  let running: Promise<number> | null = null;
  const tick = () => {
    running ??= deliverDueMails(db, transport, from, logger)
      .catch((err) => {
        logger.error({ err }, 'mail sender failed');
        return 0;
      })
      .finally(() => {
        running = null;
      });
    return running;
  };
  const timer = setInterval(() => void tick(), intervalMs);
  timer.unref();
  return { kick: tick, stop: () => clearInterval(timer) };
}
