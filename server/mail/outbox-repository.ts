import { desc, eq } from 'drizzle-orm';
import type { Queryable } from '../db/client.js';
import { outboxMessages } from '../db/schema/outbox.js';
import type { OutboxMessage, OutboxSummary } from '../../shared/api/outbox.js';

type Row = typeof outboxMessages.$inferSelect;

function toMessage(r: Row): OutboxMessage {
  return {
    id: r.id,
    to: r.toAddress,
    subject: r.subject,
    text: r.textBody,
    ...(r.htmlBody ? { html: r.htmlBody } : {}),
    receivedAt: r.receivedAt.toISOString(),
  };
}

export async function storeOutboxMessage(q: Queryable, m: Omit<typeof outboxMessages.$inferInsert, 'id'>): Promise<void> {
  await q.insert(outboxMessages).values(m);
}

export async function recentOutboxMessages(q: Queryable, limit = 100): Promise<OutboxSummary[]> {
  const rows = await q
    .select({ id: outboxMessages.id, to: outboxMessages.toAddress, subject: outboxMessages.subject, receivedAt: outboxMessages.receivedAt })
    .from(outboxMessages)
    .orderBy(desc(outboxMessages.receivedAt))
    .limit(limit);
  return rows.map((r) => ({ ...r, receivedAt: r.receivedAt.toISOString() }));
}

export async function findOutboxMessage(q: Queryable, id: string): Promise<OutboxMessage | undefined> {
  const [row] = await q.select().from(outboxMessages).where(eq(outboxMessages.id, id));
  return row && toMessage(row);
}
