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
import { signedInUser } from '../auth/authenticate.js';
import type { Db } from '../db/client.js';
import { ApiError } from '../http/error-handler.js';
import { mountRoute } from '../http/mount-route.js';
import type { InvitationService } from '../invitations/invitation-service.js';
import type { GroupService } from './group-service.js';

/** /api/groups: everything below :groupId goes through the access guard, which scopes it to the caller's group. */
export function groupRoutes(d: { db: Db; groups: GroupService; invitations: InvitationService }): Router {
  const router = Router();

  mountRoute(router, listMyGroupsRoute, (_input, req) => d.groups.groupsOf(signedInUser(req).id));

  mountRoute(router, getGroupRoute, (_input, req) => d.groups.summary(req.membership!));

  mountRoute(router, listMembersRoute, (_input, req) => d.groups.members(req.membership!.groupId));

  mountRoute(router, changeMemberRoleRoute, async ({ params, body }, req) => {
    await d.groups.changeRole(signedInUser(req).id, req.membership!.groupId, params.userId, body.role);
    const member = await d.groups.member(req.membership!.groupId, params.userId);
    if (!member) throw new ApiError(404, 'not_found', 'No such member in this group.');
    return member;
  });

  mountRoute(router, removeMemberRoute, ({ params }, req) => d.groups.removeMember(signedInUser(req).id, req.membership!.groupId, params.userId));

  mountRoute(router, listInvitationsRoute, (_input, req) => d.invitations.list(req.membership!.groupId));

  mountRoute(router, inviteRoute, ({ body }, req) => d.invitations.invite(signedInUser(req), req.membership!, body.email, body.role));

  mountRoute(router, revokeInvitationRoute, ({ params }, req) => d.invitations.revoke(signedInUser(req).id, req.membership!.groupId, params.id));

  mountRoute(router, groupActivityRoute, ({ query }, req) => d.groups.activity(req.membership!.groupId, query.limit, req.membership!.role === 'admin'));

  return router;
}
