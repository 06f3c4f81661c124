import { and, eq } from 'drizzle-orm';
import type { RequestHandler } from 'express';
import type { Db } from '../db/client.js';
import { catalogueGenerations } from '../db/schema/catalogue.js';
import { memberships, researchGroups, type MembershipRole } from '../db/schema/groups.js';
import { ApiError } from '../http/error-handler.js';
import { signedInUser } from './authenticate.js';
import { checkCsrf } from './csrf.js';
import { membershipColumns } from './session-repository.js';

export interface GroupMembership {
  groupId: string;
  groupName: string;
  groupSlug: string;
  role: MembershipRole;
  /** The group's catalogue generation when the membership was read (catalogue_generations). */
  catalogueGeneration: number;
}

declare module 'express-serve-static-core' {
  interface Request {
    /** The caller's membership in the route's :groupId, set by requireRole. */
    membership?: GroupMembership;
  }
}

const uuidPattern = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

export function groupNotFound(): ApiError {
  return new ApiError(404, 'not_found', 'No such group, or you are not a member of it.');
}

async function findMembership(db: Db, groupId: string, userId: string): Promise<Omit<GroupMembership, 'groupId'> | undefined> {
  const [row] = await db
    .select(membershipColumns)
    .from(memberships)
    .innerJoin(researchGroups, eq(researchGroups.id, memberships.groupId))
    .leftJoin(catalogueGenerations, eq(catalogueGenerations.groupId, memberships.groupId))
    .where(and(eq(memberships.groupId, groupId), eq(memberships.userId, userId)));
  return row && { ...row, catalogueGeneration: Number(row.catalogueGeneration) };
}

/**
 * Resolves :groupId to the caller's membership. Not a member (or no such group) → 404,
 * so a group's existence never leaks; a member with the wrong role → 403. Admin passes
 * every role check; no roles given = any member. Also enforces sign-in and CSRF.
 * Needs `app.locals.db` (set by createApp).
 */
export function requireRole(...roles: MembershipRole[]): RequestHandler {
  return async (req, _res, next) => {
    const user = signedInUser(req);
    const groupId = req.params.groupId;
    if (typeof groupId !== 'string' || !uuidPattern.test(groupId)) throw groupNotFound();
    // Read with the session by authenticate when the path names this group (one query for both).
    const row =
      req.groupAccess?.groupId === groupId.toLowerCase() ? req.groupAccess.membership : await findMembership(req.app.locals.db as Db, groupId, user.id);
    if (!row) throw groupNotFound();
    // Set before the CSRF check, so a refusal is recorded in this group's activity.
    req.membership = { groupId, ...row };
    checkCsrf(req);
    if (roles.length > 0 && row.role !== 'admin' && !roles.includes(row.role)) {
      const wanted = roles.length === 1 ? `the ${roles[0]} role` : `one of the roles ${roles.join(', ')}`;
      throw new ApiError(403, 'forbidden', `This needs ${wanted} in this group; you are ${row.role}.`);
    }
    next();
  };
}
