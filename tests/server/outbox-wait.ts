// Reads what the local SMTP stand-in stored, waiting for mail sent in the background.
import { desc, eq } from 'drizzle-orm';
import type { Db } from '../../server/db/client.js';
import { outboxMessages } from '../../server/db/schema/outbox.js';

export async function waitForMailTo(db: Db, to: string, timeoutMs = 5000) {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const [row] = await db.select().from(outboxMessages).where(eq(outboxMessages.toAddress, to)).orderBy(desc(outboxMessages.receivedAt)).limit(1);
    if (row) return row;
    if (Date.now() > deadline) throw new Error(`no mail to ${to} reached the stand-in within ${timeoutMs} ms`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

/** The token query parameter of the first link to `path` in a mail's text. */
export function tokenFromLink(text: string, path: string): string {
  const match = new RegExp(`(https?://\\S+${path}\\?token=\\S+)`).exec(text);
  if (!match) throw new Error(`no ${path} link in the mail text:\n${text}`);
  const token = new URL(match[1]!).searchParams.get('token');
  if (!token) throw new Error(`the ${path} link has no token`);
  return token;
}
