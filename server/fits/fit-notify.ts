import { sql } from 'drizzle-orm';
import type { Queryable } from '../db/client.js';

/**
 * Tells the API processes that a fit changed (progress, state), on the same `run_events`
 * channel the runs use: the payload is the fit's id, which RunEvents fans out to the fit's
 * event streams. Never throws: a lost notification only delays the stream's next poll.
 */
export async function notifyFit(q: Queryable, fitId: string): Promise<void> {
  await q.execute(sql`select pg_notify('run_events', ${fitId})`).catch(() => {});
}
