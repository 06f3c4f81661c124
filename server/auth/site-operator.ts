import { and, asc, eq, sql } from 'drizzle-orm';
import type { Queryable } from '../db/client.js';
import { memberships } from '../db/schema/groups.js';
import { users } from '../db/schema/users.js';

/**
 * The site operator is the person who runs this installation. Only they may read the
 * local mail outbox, which holds every group's reset and invitation links: a group
 * admin reading it could take over accounts of other groups. A local set-up gives the
 * role to its first admin (the preferred e-mail if given, else the admin who joined
 * first); nothing happens when someone already holds it. Returns the operator's e-mail.
 */
export async function ensureSiteOperator(q: Queryable, preferredEmail?: string): Promise<string | null> {
  const [current] = await q.select({ email: users.email }).from(users).where(eq(users.siteOperator, true)).limit(1);
  if (current) return current.email;
  const [first] = await q
    .select({ id: users.id, email: users.email })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.role, 'admin'), preferredEmail ? eq(users.email, preferredEmail) : sql`true`))
    .orderBy(asc(memberships.joinedAt), asc(users.email))
    .limit(1);
  if (!first) return preferredEmail ? ensureSiteOperator(q) : null;
  await q.update(users).set({ siteOperator: true }).where(eq(users.id, first.id));
  return first.email;
}
