import type { Queryable } from '../db/client.js';
import type { AuthUser } from './authenticate.js';
import { groupsOfUser, type GroupOfUser } from './user-repository.js';

/** What the client keeps about the signed-in person (the API contract's Session). */
export interface Session {
  user: { id: string; email: string; name: string };
  groups: GroupOfUser[];
  /** The session's CSRF value to echo in X-CSRF-Token; empty for personal-token callers, who need none. */
  csrfToken: string;
  /** True for the site operator, the one person who may read the local mail outbox. */
  siteOperator: boolean;
}

export async function sessionOf(q: Queryable, user: AuthUser, csrfToken: string): Promise<Session> {
  return {
    user: { id: user.id, email: user.email, name: user.name },
    groups: await groupsOfUser(q, user.id),
    csrfToken,
    siteOperator: user.siteOperator,
  };
}
