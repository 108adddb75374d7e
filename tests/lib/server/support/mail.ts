/** Reads captured mail from a test database's outbox. */
import type { Db } from '../../../../src/lib/server/db';
import { listOutbox } from '../../../../src/lib/server/mail';

/** The newest message to an address, or throws. */
export async function lastMailTo(db: Db, to: string) {
  const [message] = await listOutbox(db, { to, limit: 1 });
  if (!message) throw new Error(`no mail to ${to}`);
  return message;
}

/** The first link in a message's text part whose path starts with `prefix`. */
export function linkIn(text: string, prefix: string): string {
  const match = text.match(new RegExp(`https?://[^\\s]+${prefix.replace(/[/]/g, '\\/')}[^\\s]*`));
  if (!match) throw new Error(`no ${prefix} link in:\n${text}`);
  return match[0];
}

/** The token at the end of a link. */
export function tokenOf(url: string): string {
  return new URL(url).pathname.split('/').pop() ?? '';
}
