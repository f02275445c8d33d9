import type { Config } from '../config.ts';
import type { DbHandle } from '../db/client.ts';
import { startMailCatcher, type MailCatcher } from '../dev/mail-catcher.ts';
import type { Logger } from '../logger.ts';
import { startMailSender, type MailSender } from './outbox.ts';
import { createTransport } from './transport.ts';

export interface MailService {
  sender: MailSender;
  /** the local stand-in, outside production when no SMTP_URL is set */
  catcher: MailCatcher | null;
  stop(): Promise<void>;
}

/** Starts the outbox sender, against the configured mail server or, in development and tests, the local catcher. */
export async function startMail(config: Config, db: DbHandle, logger: Logger, options: { intervalMs?: number } = {}): Promise<MailService> {
  let catcher: MailCatcher | null = null;
  let smtpUrl = config.smtpUrl;
  if (!smtpUrl) {
    catcher = await startMailCatcher({ port: config.mailCatcherPort, dir: config.mailCatcherDir });
    smtpUrl = `smtp://127.0.0.1:${catcher.port}`;
    logger.info({ port: catcher.port }, 'local mail catcher listening');
  }
  const transport = createTransport(smtpUrl);
  const sender = startMailSender(db, transport, config.mailFrom, logger, options.intervalMs);
  return {
    sender,
    catcher,
    stop: async () => {
      sender.stop();
      transport.close();
      await catcher?.stop();
    },
  };
}
