/**
 * The local stand-in for the organisation's mail server (development and tests only): an SMTP
 * server on loopback that keeps every message it receives, as .eml files in a folder, so the
 * Outbox screen can show them and tests can parse them. Production never starts it.
 */
import { randomUUID } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { simpleParser } from 'mailparser';
import { SMTPServer } from 'smtp-server';

export interface CaughtMail {
  id: string;
  receivedAt: string;
  from: string;
  to: string[];
  subject: string;
  text: string;
  html: string | null;
}

export interface MailCatcher {
  port: number;
  dir: string;
  list(): Promise<CaughtMail[]>;
  stop(): Promise<void>;
}

export async function startMailCatcher(options: { host?: string; port: number; dir: string }): Promise<MailCatcher> {
  fs.mkdirSync(options.dir, { recursive: true });
  const server = new SMTPServer({
    secure: false,
    authOptional: true,
    disabledCommands: ['STARTTLS', 'AUTH'],
    logger: false,
    size: 20 * 1024 * 1024,
    onData(stream, _session, callback) {
      const chunks: Buffer[] = [];
      stream.on('data', (c: Buffer) => chunks.push(c));
      stream.on('end', () => {
        const name = `${new Date().toISOString().replace(/[:.]/g, '-')}-${randomUUID().slice(0, 8)}.eml`;
        fs.promises.writeFile(path.join(options.dir, name), Buffer.concat(chunks)).then(() => callback(), callback);
      });
      stream.on('error', callback);
    },
  });
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(options.port, options.host ?? '127.0.0.1', () => resolve());
  });
  const address = server.server.address();
  const port = typeof address === 'object' && address ? address.port : options.port;
  return {
    port,
    dir: options.dir,
    list: () => readCaughtMails(options.dir),
    stop: () => new Promise<void>((resolve) => server.close(() => resolve())),
  };
}

/** Every caught message, newest first. */
export async function readCaughtMails(dir: string): Promise<CaughtMail[]> {
  if (!fs.existsSync(dir)) return [];
  const files = (await fs.promises.readdir(dir)).filter((f) => f.endsWith('.eml')).sort().reverse();
  return Promise.all(
    files.map(async (file) => {
      const parsed = await simpleParser(await fs.promises.readFile(path.join(dir, file)));
      const to = Array.isArray(parsed.to) ? parsed.to : parsed.to ? [parsed.to] : [];
      return {
        id: file.replace(/\.eml$/, ''),
        receivedAt: (parsed.date ?? new Date()).toISOString(),
        from: parsed.from?.text ?? '',
        to: to.flatMap((a) => a.value.map((v) => v.address ?? '')).filter(Boolean),
        subject: parsed.subject ?? '',
        text: parsed.text ?? '',
        html: typeof parsed.html === 'string' ? parsed.html : null,
      };
    }),
  );
}
