import { desc, eq } from 'drizzle-orm';
import type { Db } from '../db/client';
import { outbox } from '../db/schema/index';
import type { MailMessage, Mailer } from './mailer';
import type { OutboxMessage } from '../../shared/auth';

/** Sends a message and, once the SMTP server accepted it, keeps it in the outbox that admins read. */
export async function sendMail(db: Db, mailer: Mailer, msg: MailMessage): Promise<void> {
  const { messageId } = await mailer.send(msg);
  db.insert(outbox).values({ to: msg.to, subject: msg.subject, text: msg.text, messageId }).run();
}

/** Sends without letting a mail failure undo the action that caused it; failures are logged. */
export function sendMailInBackground(db: Db, mailer: Mailer, msg: MailMessage): Promise<void> {
  return sendMail(db, mailer, msg).catch((e: unknown) => {
    console.error('[keelson] mail not sent', msg.to, msg.subject, e);
  });
}

/** The outbox, newest first; with `to`, only the messages sent to that address. */
export function listOutbox(db: Db, opts: { to?: string; limit?: number } = {}): OutboxMessage[] {
  const q = db.select().from(outbox);
  const rows = (opts.to ? q.where(eq(outbox.to, opts.to)) : q).orderBy(desc(outbox.id)).limit(opts.limit ?? 200).all();
  return rows.map((m) => ({
    id: m.id,
    to: m.to,
    subject: m.subject,
    text: m.text,
    createdAt: m.createdAt,
  }));
}
