import { and, eq, isNull, sql } from 'drizzle-orm';
import type { Queryable } from '../db/client.js';
import { passwordResetTokens } from '../db/schema/credentials.js';

export async function insertResetToken(q: Queryable, userId: string, tokenHash: string, expiresAt: Date): Promise<void> {
  await q.insert(passwordResetTokens).values({ userId, tokenHash, expiresAt });
}

/** Reads the row without locking it: the cheap first check, before any password is hashed. */
export async function findResetToken(q: Queryable, tokenHash: string) {
  const [row] = await q.select().from(passwordResetTokens).where(eq(passwordResetTokens.tokenHash, tokenHash));
  return row;
}

/** Locks the row so two confirmations racing with the same link cannot both succeed. */
export async function lockResetToken(q: Queryable, tokenHash: string) {
  const [row] = await q.select().from(passwordResetTokens).where(eq(passwordResetTokens.tokenHash, tokenHash)).for('update');
  return row;
}

/** Marks every open link of the user used: after a reset, older links must not work either. */
export async function useAllResetTokens(q: Queryable, userId: string): Promise<void> {
  await q
    .update(passwordResetTokens)
    .set({ usedAt: sql`now()` })
    .where(and(eq(passwordResetTokens.userId, userId), isNull(passwordResetTokens.usedAt)));
}
