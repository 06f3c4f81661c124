import type { Queryable } from '../db/client.js';
import type { AuthUser } from './authenticate.js';
import { groupsOfUser, type GroupOfUser } from './user-repository.js';

/** What the client keeps about the signed-in person (the API contract's Session). */
export interface Session {
  user: AuthUser;
  groups: GroupOfUser[];
  /** The pw_csrf value to echo in X-CSRF-Token; empty for personal-token callers, who need none. */
  csrfToken: string;
}

export async function sessionOf(q: Queryable, user: AuthUser, csrfToken: string): Promise<Session> {
  return { user: { id: user.id, email: user.email, name: user.name }, groups: await groupsOfUser(q, user.id), csrfToken };
}
