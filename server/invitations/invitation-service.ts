import { writeAudit } from '../audit/audit-log.js';
import { hashOpaqueToken, newOpaqueToken } from '../auth/opaque-token.js';
import { hashPassword, verifyPassword } from '../auth/password.js';
import type { PasswordHasher } from '../auth/password-hasher.js';
import { recordSecurityEvent } from '../audit/security-event.js';
import type { GroupMembership } from '../auth/require-role.js';
import { findUserByEmail, insertUser, normaliseEmail, type UserRow } from '../auth/user-repository.js';
import type { Db } from '../db/client.js';
import type { MembershipRole } from '../db/schema/groups.js';
import { addMembership, membersOf } from '../groups/group-repository.js';
import { ApiError } from '../http/error-handler.js';
import { invitationMail } from '../mail/invitation-mail.js';
import type { Mailer } from '../mail/mailer.js';
import {
  insertInvitation,
  invitationByTokenHash,
  markInvitationAccepted,
  openInvitations,
  revokeInvitation,
  revokeOpenInvitationsFor,
  type InvitationWithGroup,
  type OpenInvitation,
} from './invitation-repository.js';
import type { InvitationPreview } from '../../shared/api/auth.js';

/** Invitation links are valid for 7 days. */
const invitationLifetimeMs = 7 * 24 * 60 * 60 * 1000;

interface InvitationServiceDeps {
  db: Db;
  mailer: Mailer;
  publicUrl: string;
  passwordCost: number;
  passwords: PasswordHasher;
}

function unknownInvitation(): ApiError {
  return new ApiError(404, 'not_found', 'This invitation link is not known; check that it was copied whole.');
}

/** 410: the link existed but cannot be used any more (accepted, revoked or expired). */
function checkUsable(found: InvitationWithGroup | undefined): InvitationWithGroup {
  if (!found) throw unknownInvitation();
  const { inv } = found;
  if (inv.acceptedAt) throw new ApiError(410, 'invitation_gone', 'This invitation has already been accepted.');
  if (inv.revokedAt) throw new ApiError(410, 'invitation_gone', 'This invitation has been withdrawn by the group.');
  if (inv.expiresAt.getTime() <= Date.now()) {
    throw new ApiError(410, 'invitation_gone', 'This invitation has expired; ask the group admin for a new one.');
  }
  return found;
}

export class InvitationService {
  constructor(private readonly deps: InvitationServiceDeps) {}

  list(groupId: string): Promise<OpenInvitation[]> {
    return openInvitations(this.deps.db, groupId);
  }

  /**
   * Creates the invitation (replacing any open one for the same e-mail) and mails the
   * link. The row is committed first: if the mail fails the admin sees 502 and can
   * simply invite again, which replaces it.
   */
  async invite(actor: { id: string; name: string }, group: GroupMembership, email: string, role: MembershipRole): Promise<OpenInvitation> {
    const { db, mailer, publicUrl } = this.deps;
    const address = normaliseEmail(email);
    const token = newOpaqueToken();
    const expiresAt = new Date(Date.now() + invitationLifetimeMs);
    const row = await db.transaction(async (tx) => {
      const members = await membersOf(tx, group.groupId);
      if (members.some((m) => m.email === address)) {
        throw new ApiError(409, 'already_member', `${address} is already a member of this group.`);
      }
      await revokeOpenInvitationsFor(tx, group.groupId, address);
      const created = await insertInvitation(tx, {
        groupId: group.groupId,
        email: address,
        role,
        tokenHash: hashOpaqueToken(token),
        invitedBy: actor.id,
        expiresAt,
      });
      await writeAudit(tx, { groupId: group.groupId, actorId: actor.id, action: 'invitation.created', subject: address, details: { role } });
      return created;
    });
    const link = `${publicUrl}/invitation?token=${encodeURIComponent(token)}`;
    try {
      await mailer.send(invitationMail({ to: address, inviterName: actor.name, groupName: group.groupName, role, link, expiresAt }));
    } catch (err) {
      throw new ApiError(
        502,
        'mail_failed',
        `The invitation was saved but the e-mail to ${address} could not be sent (${(err as Error).message}); invite again to retry.`,
      );
    }
    return {
      id: row.id,
      email: row.email,
      role: row.role,
      invitedBy: { id: actor.id, name: actor.name },
      createdAt: row.createdAt.toISOString(),
      expiresAt: row.expiresAt.toISOString(),
      status: 'pending',
    };
  }

  async revoke(actorId: string, groupId: string, id: string): Promise<void> {
    await this.deps.db.transaction(async (tx) => {
      const row = await revokeInvitation(tx, groupId, id);
      if (!row) throw new ApiError(404, 'not_found', 'No open invitation with this id in this group.');
      await writeAudit(tx, { groupId, actorId, action: 'invitation.revoked', subject: row.email, details: { role: row.role } });
    });
  }

  async preview(token: string): Promise<InvitationPreview> {
    const { inv, groupName, inviterName } = checkUsable(await invitationByTokenHash(this.deps.db, hashOpaqueToken(token)));
    return { email: inv.email, groupName, role: inv.role, invitedBy: inviterName };
  }

  /**
   * Accepts once (the invitation row is locked). A new e-mail gets an account with this
   * name and password; an e-mail that already has an account must give that account's
   * password, so the link alone never signs anybody in to an existing account.
   * The link is checked before any password is hashed or compared, so an anonymous
   * caller without a live link costs no bcrypt work.
   */
  async accept(token: string, name: string, password: string): Promise<UserRow> {
    const { db, passwords, passwordCost } = this.deps;
    const tokenHash = hashOpaqueToken(token);
    const { inv: seen } = checkUsable(await invitationByTokenHash(db, tokenHash));
    const existing = await findUserByEmail(db, seen.email);
    let newHash: string | null = null;
    if (existing) {
      if (!(await verifyPassword(password, existing.passwordHash, passwords))) {
        await recordSecurityEvent(db, {
          groupId: seen.groupId,
          actorId: null,
          accountId: existing.id,
          action: 'auth.sign_in_failed',
          subject: existing.email,
          details: { via: 'invitation' },
        });
        throw new ApiError(401, 'invalid_credentials', `${seen.email} already has a Poleward account: enter its password to accept.`);
      }
    } else {
      newHash = await hashPassword(password, passwordCost, passwords);
    }
    return db.transaction(async (tx) => {
      const { inv } = checkUsable(await invitationByTokenHash(tx, tokenHash, true));
      let user = await findUserByEmail(tx, inv.email);
      if (user ? user.id !== existing?.id : existing) {
        // The account was created (or removed) between the check and the lock.
        throw new ApiError(409, 'conflict', `An account for ${inv.email} has just changed; open the link again.`);
      }
      user ??= await insertUser(tx, { email: inv.email, name, passwordHash: newHash! });
      const added = await addMembership(tx, inv.groupId, user.id, inv.role);
      await markInvitationAccepted(tx, inv.id);
      await writeAudit(tx, {
        groupId: inv.groupId,
        actorId: user.id,
        accountId: user.id,
        action: 'invitation.accepted',
        subject: inv.email,
        details: { role: inv.role, alreadyMember: !added },
      });
      return user;
    });
  }
}
