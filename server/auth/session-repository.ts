import { and, eq, gt, isNull, lt, or, sql } from 'drizzle-orm';
import type { Queryable } from '../db/client.js';
import { sessions } from '../db/schema/credentials.js';
import { users } from '../db/schema/users.js';

export type SessionRow = typeof sessions.$inferSelect;
type UserRow = typeof users.$inferSelect;

/** Drops the user's sessions that ended more than a day ago (called at sign-in, so the table stays small). */
export async function pruneSessions(q: Queryable, userId: string): Promise<void> {
  await q
    .delete(sessions)
    .where(and(eq(sessions.userId, userId), or(lt(sessions.expiresAt, sql`now() - interval '1 day'`), lt(sessions.revokedAt, sql`now() - interval '1 day'`))));
}

export async function insertSession(
  q: Queryable,
  values: { userId: string; expiresAt: Date; ip: string | null; userAgent: string | null },
): Promise<SessionRow> {
  const [row] = await q.insert(sessions).values(values).returning();
  return row!;
}

/** The session with its user, when it is neither revoked nor expired. */
export async function findLiveSession(q: Queryable, id: string, userId: string): Promise<{ session: SessionRow; user: UserRow } | undefined> {
  const [row] = await q
    .select({ session: sessions, user: users })
    .from(sessions)
    .innerJoin(users, eq(users.id, sessions.userId))
    .where(and(eq(sessions.id, id), eq(sessions.userId, userId), isNull(sessions.revokedAt), gt(sessions.expiresAt, sql`now()`)));
  return row;
}

export async function revokeSession(q: Queryable, id: string): Promise<boolean> {
  const rows = await q
    .update(sessions)
    .set({ revokedAt: sql`now()` })
    .where(and(eq(sessions.id, id), isNull(sessions.revokedAt)))
    .returning({ id: sessions.id });
  return rows.length > 0;
}

/** Ends every open session of the user (password reset); returns how many. */
export async function revokeAllSessions(q: Queryable, userId: string): Promise<number> {
  const rows = await q
    .update(sessions)
    .set({ revokedAt: sql`now()` })
    .where(and(eq(sessions.userId, userId), isNull(sessions.revokedAt)))
    .returning({ id: sessions.id });
  return rows.length;
}
