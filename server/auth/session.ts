import type { Queryable } from '../db/client.js';
import type { AuthUser } from './authenticate.js';
import { groupsOfUser } from './user-repository.js';
import type { Session } from '../../shared/api/auth.js';

export type { Session } from '../../shared/api/auth.js';

export async function sessionOf(q: Queryable, user: AuthUser, csrfToken: string): Promise<Session> {
  return {
    user: { id: user.id, email: user.email, name: user.name },
    groups: await groupsOfUser(q, user.id),
    csrfToken,
    siteOperator: user.siteOperator,
  };
}
