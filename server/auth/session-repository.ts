import { and, eq, gt, isNull, lt, or, sql } from 'drizzle-orm';
import type { Db, Queryable } from '../db/client.js';
import { catalogueGenerations } from '../db/schema/catalogue.js';
import { sessions } from '../db/schema/credentials.js';
import { memberships, researchGroups, type MembershipRole } from '../db/schema/groups.js';
import { users } from '../db/schema/users.js';

type SessionRow = typeof sessions.$inferSelect;

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

/** What a request needs of its session, its user and, when its path names a group, the caller's membership there. */
export interface SessionInGroup {
  sessionId: string;
  user: { id: string; email: string; name: string; siteOperator: boolean };
  /** Null when the caller is not a member of the group (or no group was asked about). */
  membership: { groupName: string; groupSlug: string; role: MembershipRole; catalogueGeneration: number } | null;
}

/** What a request needs of the caller's membership in the group of its path (joined by both queries that read it). */
export const membershipColumns = {
  groupName: researchGroups.name,
  groupSlug: researchGroups.slug,
  role: memberships.role,
  catalogueGeneration: sql<number>`coalesce(${catalogueGenerations.generation}, 0)::float8`,
};

function prepareSessionInGroup(db: Db) {
  return db
    .select({
      sessionId: sessions.id,
      user: { id: users.id, email: users.email, name: users.name, siteOperator: users.siteOperator },
      ...membershipColumns,
    })
    .from(sessions)
    .innerJoin(users, eq(users.id, sessions.userId))
    .leftJoin(memberships, and(eq(memberships.userId, sessions.userId), eq(memberships.groupId, sql.placeholder('groupId'))))
    .leftJoin(researchGroups, eq(researchGroups.id, memberships.groupId))
    .leftJoin(catalogueGenerations, eq(catalogueGenerations.groupId, memberships.groupId))
    .where(
      and(
        eq(sessions.id, sql.placeholder('sessionId')),
        eq(sessions.userId, sql.placeholder('userId')),
        isNull(sessions.revokedAt),
        gt(sessions.expiresAt, sql`now()`),
      ),
    )
    .prepare('live_session_in_group');
}

const sessionInGroupStatements = new WeakMap<Db, ReturnType<typeof prepareSessionInGroup>>();

/**
 * findLiveSession and the caller's membership of one group in one round trip: a prepared
 * statement (parsed and planned once per connection) that every group route's request runs,
 * so its session, its role and the group's catalogue generation are all read at the same
 * moment, as fresh as separate queries would be. `groupId` null: no group, membership null.
 */
export async function findLiveSessionInGroup(db: Db, id: string, userId: string, groupId: string | null): Promise<SessionInGroup | undefined> {
  let statement = sessionInGroupStatements.get(db);
  if (!statement) sessionInGroupStatements.set(db, (statement = prepareSessionInGroup(db)));
  const [row] = await statement.execute({ sessionId: id, userId, groupId });
  if (!row) return undefined;
  const membership =
    row.role !== null && row.groupName !== null && row.groupSlug !== null
      ? { groupName: row.groupName, groupSlug: row.groupSlug, role: row.role, catalogueGeneration: Number(row.catalogueGeneration) }
      : null;
  return { sessionId: row.sessionId, user: row.user, membership };
}
