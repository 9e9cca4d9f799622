import { count, desc, eq } from 'drizzle-orm';
import type { MailMessage, MailSummary } from '@shared/auth/schemas';
import type { Database } from '@server/db/client';
import { mailMessages } from '@server/db/schema/mail-messages';

/** One page of the local test mail server's messages, newest first, and how many there are. */
export async function listMail(db: Database, page: { limit: number; offset: number }): Promise<{ messages: MailSummary[]; total: number }> {
  const rows = await db
    .select({ id: mailMessages.id, receivedAt: mailMessages.receivedAt, from: mailMessages.fromHeader, to: mailMessages.envelopeTo, subject: mailMessages.subject })
    .from(mailMessages)
    .orderBy(desc(mailMessages.receivedAt), desc(mailMessages.id))
    .limit(page.limit)
    .offset(page.offset);
  const [total] = await db.select({ n: count() }).from(mailMessages);
  return { messages: rows.map((r) => ({ ...r, receivedAt: r.receivedAt.toISOString() })), total: total?.n ?? 0 };
}

/** One message of the local test mail server with its bodies, or null when there is no such message. */
export async function getMail(db: Database, id: number): Promise<MailMessage | null> {
  const [r] = await db.select().from(mailMessages).where(eq(mailMessages.id, id));
  return r ? { id: r.id, receivedAt: r.receivedAt.toISOString(), from: r.fromHeader, to: r.envelopeTo, subject: r.subject, text: r.textBody, html: r.htmlBody } : null;
}
