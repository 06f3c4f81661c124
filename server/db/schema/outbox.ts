import { index, pgTable, text, timestamp, uuid } from 'drizzle-orm/pg-core';

/**
 * Messages received by the local SMTP stand-in. They live in the database so the API
 * can list them even when the stand-in runs in another process.
 */
export const outboxMessages = pgTable(
  'outbox_messages',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    fromAddress: text('from_address').notNull(),
    toAddress: text('to_address').notNull(),
    subject: text('subject').notNull(),
    textBody: text('text_body').notNull(),
    htmlBody: text('html_body'),
    receivedAt: timestamp('received_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('outbox_messages_received').on(t.receivedAt.desc())],
);
