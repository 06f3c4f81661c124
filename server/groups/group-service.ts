import { writeAudit } from '../audit/audit-log.js';
import type { Db } from '../db/client.js';
import type { MembershipRole } from '../db/schema/groups.js';
import { ApiError } from '../http/error-handler.js';
import { groupActivity } from '../audit/activity.js';
import { findUserById, groupsOfUser } from '../auth/user-repository.js';
import { deleteMembership, lockMemberships, memberCount, membersOf, setMemberRole } from './group-repository.js';

function noSuchMember(): ApiError {
  return new ApiError(404, 'not_found', 'No such member in this group.');
}

/** Re-checked under the lock: the actor may have been demoted since requireRole looked. */
function assertStillAdmin(members: { userId: string; role: MembershipRole }[], actorId: string): void {
  if (members.find((m) => m.userId === actorId)?.role !== 'admin') {
    throw new ApiError(403, 'forbidden', 'This needs the admin role in this group; yours has just changed.');
  }
}

function lastAdmin(): ApiError {
  return new ApiError(409, 'last_admin', 'A group needs at least one admin: make another member admin first.');
}

/** Membership rules: role changes and removals, never leaving a group without an admin. */
export class GroupService {
  constructor(private readonly db: Db) {}

  /** The groups the person belongs to, with their role in each. */
  groupsOf(userId: string) {
    return groupsOfUser(this.db, userId);
  }

  async summary(m: { groupId: string; groupName: string; groupSlug: string; role: MembershipRole }) {
    return { id: m.groupId, name: m.groupName, slug: m.groupSlug, role: m.role, memberCount: await memberCount(this.db, m.groupId) };
  }

  members(groupId: string) {
    return membersOf(this.db, groupId);
  }

  async member(groupId: string, userId: string) {
    return (await membersOf(this.db, groupId)).find((m) => m.userId === userId);
  }

  /** The group's recent audit entries; security entries only for admins. */
  activity(groupId: string, limit: number, withSecurity: boolean) {
    return groupActivity(this.db, groupId, limit, { withSecurity });
  }

  async changeRole(actorId: string, groupId: string, userId: string, role: MembershipRole): Promise<void> {
    await this.db.transaction(async (tx) => {
      const members = await lockMemberships(tx, groupId);
      assertStillAdmin(members, actorId);
      const target = members.find((m) => m.userId === userId);
      if (!target) throw noSuchMember();
      if (target.role === role) return;
      const admins = members.filter((m) => m.role === 'admin').length;
      if (target.role === 'admin' && admins <= 1) throw lastAdmin();
      await setMemberRole(tx, groupId, userId, role);
      const user = await findUserById(tx, userId);
      await writeAudit(tx, {
        groupId,
        actorId,
        accountId: userId,
        action: 'member.role_changed',
        subject: user?.email ?? userId,
        details: { userId, from: target.role, to: role },
      });
    });
  }

  async removeMember(actorId: string, groupId: string, userId: string): Promise<void> {
    await this.db.transaction(async (tx) => {
      const members = await lockMemberships(tx, groupId);
      assertStillAdmin(members, actorId);
      const target = members.find((m) => m.userId === userId);
      if (!target) throw noSuchMember();
      if (target.role === 'admin' && members.filter((m) => m.role === 'admin').length <= 1) throw lastAdmin();
      await deleteMembership(tx, groupId, userId);
      const user = await findUserById(tx, userId);
      await writeAudit(tx, {
        groupId,
        actorId,
        accountId: userId,
        action: 'member.removed',
        subject: user?.email ?? userId,
        details: { userId, role: target.role },
      });
    });
  }
}
