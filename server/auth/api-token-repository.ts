import { and, desc, eq, isNull, sql } from 'drizzle-orm';
import type { Queryable } from '../db/client.js';
import { apiTokens } from '../db/schema/credentials.js';

type ApiTokenRow = typeof apiTokens.$inferSelect;

export async function insertApiToken(q: Queryable, userId: string, name: string, tokenHash: string): Promise<ApiTokenRow> {
  const [row] = await q.insert(apiTokens).values({ userId, name, tokenHash }).returning();
  return row!;
}

export async function activeApiTokens(q: Queryable, userId: string): Promise<ApiTokenRow[]> {
  return q
    .select()
    .from(apiTokens)
    .where(and(eq(apiTokens.userId, userId), isNull(apiTokens.revokedAt)))
    .orderBy(desc(apiTokens.createdAt));
}

/** Null when the token is not the user's or already revoked (the route answers 404 either way). */
export async function revokeApiToken(q: Queryable, userId: string, id: string): Promise<ApiTokenRow | undefined> {
  const [row] = await q
    .update(apiTokens)
    .set({ revokedAt: sql`now()` })
    .where(and(eq(apiTokens.id, id), eq(apiTokens.userId, userId), isNull(apiTokens.revokedAt)))
    .returning();
  return row;
}

export async function findActiveApiToken(q: Queryable, tokenHash: string): Promise<ApiTokenRow | undefined> {
  const [row] = await q
    .select()
    .from(apiTokens)
    .where(and(eq(apiTokens.tokenHash, tokenHash), isNull(apiTokens.revokedAt)));
  return row;
}

export async function touchApiToken(q: Queryable, id: string): Promise<void> {
  await q
    .update(apiTokens)
    .set({ lastUsedAt: sql`now()` })
    .where(eq(apiTokens.id, id));
}

/** Revokes every personal token of the user (password reset); returns how many. */
export async function revokeAllApiTokens(q: Queryable, userId: string): Promise<number> {
  const rows = await q
    .update(apiTokens)
    .set({ revokedAt: sql`now()` })
    .where(and(eq(apiTokens.userId, userId), isNull(apiTokens.revokedAt)))
    .returning({ id: apiTokens.id });
  return rows.length;
}
