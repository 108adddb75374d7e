/**
 * Outgoing e-mail. With SMTP_URL set, mail goes to that server (and a copy of
 * each message is kept in the outbox table). Without it (development and demo),
 * the app runs a fake SMTP server on a loopback port that receives every message
 * over real SMTP, parses it and stores it in the outbox, where the outbox page
 * shows it: invitations and resets can be followed end to end, and nothing
 * leaves the machine.
 */
import type { AddressInfo } from 'node:net';
import { simpleParser, type AddressObject } from 'mailparser';
import nodemailer, { type Transporter } from 'nodemailer';
import { SMTPServer } from 'smtp-server';
import { desc, eq } from 'drizzle-orm';
import { readConfig } from './config';
import type { Db } from './db';
import { outbox, type OutboxRow } from './schema';

/** A message to send: always both a text and an HTML part. */
export type MailMessage = { to: string; subject: string; text: string; html: string };

const MAX_MESSAGE_BYTES = 2 * 1024 * 1024;

type Capture = { server: SMTPServer; transport: Transporter; port: number };
const captures = new WeakMap<Db, Promise<Capture>>();
let smtpTransport: { url: string; transport: Transporter } | null = null;

function addressText(value: AddressObject | AddressObject[] | undefined): string {
  if (!value) return '';
  return (Array.isArray(value) ? value : [value]).map((a) => a.text).join(', ');
}

function startCapture(db: Db): Promise<Capture> {
  return new Promise((resolve, reject) => {
    const server = new SMTPServer({
      name: 'quiesce-outbox.localhost',
      banner: 'Quiesce local outbox (messages are stored, never delivered)',
      authOptional: true,
      disabledCommands: ['STARTTLS', 'AUTH'],
      size: MAX_MESSAGE_BYTES,
      logger: false,
      onConnect(session, callback) {
        // Loopback only: the server listens on 127.0.0.1, this is a second guard.
        if (session.remoteAddress !== '127.0.0.1' && session.remoteAddress !== '::ffff:127.0.0.1') {
          callback(new Error('Only local connections are accepted.'));
          return;
        }
        callback();
      },
      onData(stream, _session, callback) {
        simpleParser(stream)
          .then(async (mail) => {
            await db.insert(outbox).values({
              to: addressText(mail.to),
              from: addressText(mail.from),
              subject: mail.subject ?? '',
              text: mail.text ?? '',
              html: typeof mail.html === 'string' ? mail.html : (mail.textAsHtml ?? ''),
              messageId: mail.messageId ?? null,
            });
            callback();
          })
          .catch((error: unknown) => callback(error instanceof Error ? error : new Error(String(error))));
      },
    });
    server.on('error', (error) => console.error('[quiesce] local outbox SMTP server error:', error.message));
    server.listen(0, '127.0.0.1', () => {
      const port = (server.server.address() as AddressInfo).port;
      server.server.unref();
      const transport = nodemailer.createTransport({ host: '127.0.0.1', port, secure: false, ignoreTLS: true });
      resolve({ server, transport, port });
    });
    server.server.once('error', reject);
  });
}

function captureFor(db: Db): Promise<Capture> {
  let capture = captures.get(db);
  if (!capture) {
    capture = startCapture(db);
    captures.set(db, capture);
    capture.catch(() => captures.delete(db));
  }
  return capture;
}

/** Returns the loopback port of the local outbox SMTP server for this database (starting it if needed). */
export async function getCapturePort(db: Db): Promise<number> {
  return (await captureFor(db)).port;
}

/** Sends one message: through SMTP_URL, or into the local outbox when mail is captured. */
export async function sendMail(db: Db, message: MailMessage): Promise<void> {
  const config = readConfig();
  const envelope = { from: config.mailFrom, to: message.to, subject: message.subject, text: message.text, html: message.html };
  if (config.captureMail) {
    await (await captureFor(db)).transport.sendMail(envelope);
    return;
  }
  if (!smtpTransport || smtpTransport.url !== config.smtpUrl) {
    smtpTransport = { url: config.smtpUrl ?? '', transport: nodemailer.createTransport(config.smtpUrl ?? '') };
  }
  const info = (await smtpTransport.transport.sendMail(envelope)) as { messageId?: string };
  await db.insert(outbox).values({ ...message, from: config.mailFrom, messageId: info.messageId ?? null });
}

/** Lists outbox messages, newest first (optionally only those to one address). */
export async function listOutbox(db: Db, options: { to?: string; limit?: number } = {}): Promise<OutboxRow[]> {
  const query = db.select().from(outbox);
  const filtered = options.to ? query.where(eq(outbox.to, options.to.toLowerCase())) : query;
  return filtered.orderBy(desc(outbox.id)).limit(Math.min(options.limit ?? 100, 500));
}

/** Returns one outbox message, or null. */
export async function getOutboxMessage(db: Db, id: number): Promise<OutboxRow | null> {
  const [row] = await db.select().from(outbox).where(eq(outbox.id, id));
  return row ?? null;
}
