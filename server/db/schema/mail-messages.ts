import { customType, index, int, mysqlTable, varchar } from 'drizzle-orm/mysql-core';
import { idColumn, jsonColumn, timeColumn } from './columns';

/** MEDIUMTEXT (up to 16 MiB) for message bodies. */
const mediumtext = customType<{ data: string; driverData: string }>({
  dataType() {
    return 'mediumtext';
  },
});

/**
 * Messages received by the local fake SMTP server (development, demo and tests only), kept so the
 * admin mailbox page survives restarts.
 */
export const mailMessages = mysqlTable(
  'mail_messages',
  {
    id: idColumn(),
    /** Message-ID header, when present. */
    messageId: varchar('message_id', { length: 255 }),
    /** SMTP envelope sender and recipients. */
    envelopeFrom: varchar('envelope_from', { length: 254 }),
    envelopeTo: jsonColumn<string[]>('envelope_to').notNull(),
    fromHeader: varchar('from_header', { length: 500 }),
    toHeader: varchar('to_header', { length: 1000 }),
    subject: varchar('subject', { length: 500 }).notNull(),
    textBody: mediumtext('text_body'),
    htmlBody: mediumtext('html_body'),
    /** The whole message as received (RFC 5322). */
    raw: mediumtext('raw').notNull(),
    sizeBytes: int('size_bytes', { unsigned: true }).notNull(),
    receivedAt: timeColumn('received_at').notNull(),
  },
  (t) => [index('mail_messages_received_idx').on(t.receivedAt)],
);
