/** Groups, their members and invitations, and the group's audit log. */
import * as z from 'zod';
import { activityEntrySchema } from './account.js';
import { emailField, groupOfUserSchema } from './auth.js';
import { roleSchema } from './enums.js';
import { groupParams, personRef, timestamp } from './fields.js';
import { declareRoute, empty, json } from './route.js';

export const groupDetailSchema = groupOfUserSchema.extend({ memberCount: z.number().int().nonnegative() }).meta({ id: 'GroupDetail' });
export type GroupDetail = z.infer<typeof groupDetailSchema>;

export const memberSchema = z.object({ userId: z.uuid(), email: z.string(), name: z.string(), role: roleSchema, joinedAt: timestamp() }).meta({ id: 'Member' });
export type Member = z.infer<typeof memberSchema>;

export const INVITATION_STATUSES = ['pending', 'expired'] as const;
export const invitationSchema = z
  .object({
    id: z.uuid(),
    email: z.string(),
    role: roleSchema,
    invitedBy: personRef.nullable(),
    createdAt: timestamp(),
    expiresAt: timestamp(),
    status: z.enum(INVITATION_STATUSES),
  })
  .meta({ id: 'Invitation' });
export type Invitation = z.infer<typeof invitationSchema>;

export const memberParams = z.object({ groupId: z.uuid(), userId: z.uuid() });
export const invitationParams = z.object({ groupId: z.uuid(), id: z.uuid() });
export const inviteBody = z.object({ email: emailField, role: roleSchema });
export const roleBody = z.object({ role: roleSchema });
export const activityQuery = z.object({ limit: z.coerce.number().int().min(1).max(200).default(20) });

export const listMyGroupsRoute = declareRoute({
  id: 'listMyGroups',
  method: 'get',
  path: '/groups',
  tag: 'groups',
  summary: "The caller's groups and roles",
  access: 'signed-in',
  answer: json(200, 'Groups, by name', z.array(groupOfUserSchema)),
});

export const getGroupRoute = declareRoute({
  id: 'getGroup',
  method: 'get',
  path: '/groups/{groupId}',
  tag: 'groups',
  summary: 'One group',
  access: 'member',
  params: groupParams,
  answer: json(200, 'The group', groupDetailSchema),
});

export const listMembersRoute = declareRoute({
  id: 'listMembers',
  method: 'get',
  path: '/groups/{groupId}/members',
  tag: 'groups',
  summary: 'Members of the group, by name',
  access: 'member',
  params: groupParams,
  answer: json(200, 'Members', z.array(memberSchema)),
});

export const changeMemberRoleRoute = declareRoute({
  id: 'changeMemberRole',
  method: 'patch',
  path: '/groups/{groupId}/members/{userId}',
  tag: 'groups',
  summary: "Change a member's role",
  access: 'admin',
  params: memberParams,
  body: roleBody,
  answer: json(200, 'The updated member', memberSchema),
  errors: { 409: 'last_admin: the group would have no admin' },
});

export const removeMemberRoute = declareRoute({
  id: 'removeMember',
  method: 'delete',
  path: '/groups/{groupId}/members/{userId}',
  tag: 'groups',
  summary: 'Remove a member from the group',
  access: 'admin',
  params: memberParams,
  answer: empty(204, 'Removed'),
  errors: { 409: 'last_admin' },
});

export const listInvitationsRoute = declareRoute({
  id: 'listInvitations',
  method: 'get',
  path: '/groups/{groupId}/invitations',
  tag: 'groups',
  summary: 'Open invitations, newest first',
  access: 'admin',
  params: groupParams,
  answer: json(200, 'Invitations', z.array(invitationSchema)),
});

export const inviteRoute = declareRoute({
  id: 'invite',
  method: 'post',
  path: '/groups/{groupId}/invitations',
  tag: 'groups',
  summary: 'Invite someone by e-mail (replaces an open invitation for the same e-mail)',
  access: 'admin',
  params: groupParams,
  body: inviteBody,
  answer: json(201, 'Invitation saved and mailed', invitationSchema),
  errors: { 409: 'already_member', 502: 'mail_failed: saved, but the e-mail could not be sent' },
});

export const revokeInvitationRoute = declareRoute({
  id: 'revokeInvitation',
  method: 'delete',
  path: '/groups/{groupId}/invitations/{id}',
  tag: 'groups',
  summary: 'Withdraw an invitation (its link then answers 410)',
  access: 'admin',
  params: invitationParams,
  answer: empty(204, 'Withdrawn'),
});

export const groupActivityRoute = declareRoute({
  id: 'groupActivity',
  method: 'get',
  path: '/groups/{groupId}/activity',
  tag: 'groups',
  summary: "The group's audit log, newest first",
  access: 'member',
  params: groupParams,
  query: activityQuery,
  answer: json(200, 'Entries', z.array(activityEntrySchema)),
});
