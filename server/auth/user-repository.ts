import { eq, sql } from 'drizzle-orm';
import type { Queryable } from '../db/client.js';
import { memberships, researchGroups } from '../db/schema/groups.js';
import { users } from '../db/schema/users.js';
import type { GroupOfUser } from '../../shared/api/auth.js';

export type UserRow = typeof users.$inferSelect;

export function normaliseEmail(email: string): string {
  return email.trim().toLowerCase();
}

export async function findUserByEmail(q: Queryable, email: string): Promise<UserRow | undefined> {
  const [row] = await q
    .select()
    .from(users)
    .where(eq(users.email, normaliseEmail(email)));
  return row;
}

export async function findUserById(q: Queryable, id: string): Promise<UserRow | undefined> {
  const [row] = await q.select().from(users).where(eq(users.id, id));
  return row;
}

export async function insertUser(q: Queryable, values: { email: string; name: string; passwordHash: string }): Promise<UserRow> {
  const [row] = await q
    .insert(users)
    .values({ ...values, email: normaliseEmail(values.email) })
    .returning();
  return row!;
}

/** Also moves password_changed_at, which ends every session issued before. */
export async function updatePasswordHash(q: Queryable, userId: string, passwordHash: string): Promise<void> {
  await q
    .update(users)
    .set({ passwordHash, passwordChangedAt: sql`now()` })
    .where(eq(users.id, userId));
}

export async function groupsOfUser(q: Queryable, userId: string): Promise<GroupOfUser[]> {
  return q
    .select({ id: researchGroups.id, name: researchGroups.name, slug: researchGroups.slug, role: memberships.role })
    .from(memberships)
    .innerJoin(researchGroups, eq(researchGroups.id, memberships.groupId))
    .where(eq(memberships.userId, userId))
    .orderBy(researchGroups.name);
}
