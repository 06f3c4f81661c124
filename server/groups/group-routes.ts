import { Router } from 'express';
import {
  changeMemberRoleRoute,
  getGroupRoute,
  groupActivityRoute,
  inviteRoute,
  listInvitationsRoute,
  listMembersRoute,
  listMyGroupsRoute,
  removeMemberRoute,
  revokeInvitationRoute,
} from '../../shared/api/groups.js';
import { groupActivity } from '../audit/activity.js';
import { signedInUser } from '../auth/authenticate.js';
import { groupsOfUser } from '../auth/user-repository.js';
import type { Db } from '../db/client.js';
import { ApiError } from '../http/error-handler.js';
import { mountRoute } from '../http/mount-route.js';
import type { InvitationService } from '../invitations/invitation-service.js';
import { memberCount, membersOf } from './group-repository.js';
import type { GroupService } from './group-service.js';

/** /api/groups: everything below :groupId goes through the access guard, which scopes it to the caller's group. */
export function groupRoutes(d: { db: Db; groups: GroupService; invitations: InvitationService }): Router {
  const router = Router();

  mountRoute(router, listMyGroupsRoute, (_input, req) => groupsOfUser(d.db, signedInUser(req).id));

  mountRoute(router, getGroupRoute, async (_input, req) => {
    const m = req.membership!;
    return { id: m.groupId, name: m.groupName, slug: m.groupSlug, role: m.role, memberCount: await memberCount(d.db, m.groupId) };
  });

  mountRoute(router, listMembersRoute, (_input, req) => membersOf(d.db, req.membership!.groupId));

  mountRoute(router, changeMemberRoleRoute, async ({ params, body }, req) => {
    await d.groups.changeRole(signedInUser(req).id, req.membership!.groupId, params.userId, body.role);
    const member = (await membersOf(d.db, req.membership!.groupId)).find((m) => m.userId === params.userId);
    if (!member) throw new ApiError(404, 'not_found', 'No such member in this group.');
    return member;
  });

  mountRoute(router, removeMemberRoute, async ({ params }, req) => {
    await d.groups.removeMember(signedInUser(req).id, req.membership!.groupId, params.userId);
  });

  mountRoute(router, listInvitationsRoute, (_input, req) => d.invitations.list(req.membership!.groupId));

  mountRoute(router, inviteRoute, ({ body }, req) => d.invitations.invite(signedInUser(req), req.membership!, body.email, body.role));

  mountRoute(router, revokeInvitationRoute, async ({ params }, req) => {
    await d.invitations.revoke(signedInUser(req).id, req.membership!.groupId, params.id);
  });

  mountRoute(router, groupActivityRoute, ({ query }, req) =>
    groupActivity(d.db, req.membership!.groupId, query.limit, { withSecurity: req.membership!.role === 'admin' }),
  );

  return router;
}
