import { inArray } from 'drizzle-orm';
import type { Queryable } from '../db/client.js';
import { users } from '../db/schema/users.js';

/** The e-mail of each author id (people are named by e-mail in a backup), looked up once per id. */
export function authorEmails(q: Queryable): (userId: string | null) => Promise<string | null> {
  const known = new Map<string, string | null>();
  return async (userId) => {
    if (!userId) return null;
    if (!known.has(userId)) {
      const [u] = await q
        .select({ email: users.email })
        .from(users)
        .where(inArray(users.id, [userId]));
      known.set(userId, u?.email ?? null);
    }
    return known.get(userId) ?? null;
  };
}
