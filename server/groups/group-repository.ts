import { and, count, eq } from 'drizzle-orm';
import type { Queryable } from '../db/client.js';
import { memberships, type MembershipRole } from '../db/schema/groups.js';
import { users } from '../db/schema/users.js';
import type { Member } from '../../shared/api/groups.js';

export async function memberCount(q: Queryable, groupId: string): Promise<number> {
  const [row] = await q.select({ n: count() }).from(memberships).where(eq(memberships.groupId, groupId));
  return row?.n ?? 0;
}

export async function membersOf(q: Queryable, groupId: string): Promise<Member[]> {
  const rows = await q
    .select({ userId: users.id, email: users.email, name: users.name, role: memberships.role, joinedAt: memberships.joinedAt })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.groupId, groupId))
    .orderBy(users.name);
  return rows.map((r) => ({ ...r, joinedAt: r.joinedAt.toISOString() }));
}

/**
 * Locks all memberships of the group (a handful of rows) for the rest of the
 * transaction, so two admins demoting each other at once cannot leave no admin.
 */
export async function lockMemberships(q: Queryable, groupId: string) {
  return q.select({ userId: memberships.userId, role: memberships.role }).from(memberships).where(eq(memberships.groupId, groupId)).for('update');
}

export async function setMemberRole(q: Queryable, groupId: string, userId: string, role: MembershipRole): Promise<void> {
  await q
    .update(memberships)
    .set({ role })
    .where(and(eq(memberships.groupId, groupId), eq(memberships.userId, userId)));
}

export async function deleteMembership(q: Queryable, groupId: string, userId: string): Promise<void> {
  await q.delete(memberships).where(and(eq(memberships.groupId, groupId), eq(memberships.userId, userId)));
}

/** Adds the membership unless the user already has one there; returns whether it was added. */
export async function addMembership(q: Queryable, groupId: string, userId: string, role: MembershipRole): Promise<boolean> {
  const rows = await q.insert(memberships).values({ groupId, userId, role }).onConflictDoNothing().returning({ id: memberships.id });
  return rows.length > 0;
}
