import { Router } from 'express';
import { z } from 'zod';
import { signedInUser } from '../auth/authenticate.js';
import { emailField } from '../auth/email-field.js';
import { requireAuth } from '../auth/require-auth.js';
import { requireRole } from '../auth/require-role.js';
import type { Db } from '../db/client.js';
import { membershipRole } from '../db/schema/groups.js';
import { validate } from '../http/validate.js';
import type { InvitationService } from '../invitations/invitation-service.js';
import type { GroupService } from './group-service.js';

export const role = z.enum(membershipRole.enumValues);
export const memberParams = z.object({ groupId: z.uuid(), userId: z.uuid() });
export const invitationParams = z.object({ groupId: z.uuid(), id: z.uuid() });
export const inviteBody = z.object({ email: emailField, role });
export const activityQuery = z.object({ limit: z.coerce.number().int().min(1).max(200).default(20) });
export const roleBody = z.object({ role });

/** /api/groups: everything below :groupId goes through requireRole, which scopes it to the caller's group. */
export function groupRoutes(d: { db: Db; groups: GroupService; invitations: InvitationService }): Router {
  const router = Router();

  router.get('/', requireAuth, async (req, res) => {
    res.json(await d.groups.groupsOf(signedInUser(req).id));
  });

  router.get('/:groupId', requireRole(), async (req, res) => {
    res.json(await d.groups.summary(req.membership!));
  });

  router.get('/:groupId/members', requireRole(), async (req, res) => {
    res.json(await d.groups.members(req.membership!.groupId));
  });

  router.patch('/:groupId/members/:userId', requireRole('admin'), validate({ params: memberParams, body: roleBody }), async (req, res) => {
    const { userId } = req.valid.params as z.infer<typeof memberParams>;
    await d.groups.changeRole(signedInUser(req).id, req.membership!.groupId, userId, (req.valid.body as { role: z.infer<typeof role> }).role);
    res.json(await d.groups.member(req.membership!.groupId, userId));
  });

  router.delete('/:groupId/members/:userId', requireRole('admin'), validate({ params: memberParams }), async (req, res) => {
    const { userId } = req.valid.params as z.infer<typeof memberParams>;
    await d.groups.removeMember(signedInUser(req).id, req.membership!.groupId, userId);
    res.status(204).end();
  });

  router.get('/:groupId/invitations', requireRole('admin'), async (req, res) => {
    res.json(await d.invitations.list(req.membership!.groupId));
  });

  router.post('/:groupId/invitations', requireRole('admin'), validate({ body: inviteBody }), async (req, res) => {
    const { email, role: r } = req.valid.body as z.infer<typeof inviteBody>;
    res.status(201).json(await d.invitations.invite(signedInUser(req), req.membership!, email, r));
  });

  router.delete('/:groupId/invitations/:id', requireRole('admin'), validate({ params: invitationParams }), async (req, res) => {
    const { id } = req.valid.params as z.infer<typeof invitationParams>;
    await d.invitations.revoke(signedInUser(req).id, req.membership!.groupId, id);
    res.status(204).end();
  });

  router.get('/:groupId/activity', requireRole(), validate({ query: activityQuery }), async (req, res) => {
    const { limit } = req.valid.query as z.infer<typeof activityQuery>;
    res.json(await d.groups.activity(req.membership!.groupId, limit, req.membership!.role === 'admin'));
  });

  return router;
}
