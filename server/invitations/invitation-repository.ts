import { and, desc, eq, isNull, sql } from 'drizzle-orm';
import type { Queryable } from '../db/client.js';
import { researchGroups, type MembershipRole } from '../db/schema/groups.js';
import { invitations } from '../db/schema/invitations.js';
import { users } from '../db/schema/users.js';
import type { Invitation } from '../../shared/api/groups.js';

export type InvitationRow = typeof invitations.$inferSelect;

/** An invitation neither accepted nor revoked, as GET /invitations lists it. */
export type OpenInvitation = Invitation;

/** Invitations neither accepted nor revoked, newest first; expired ones are shown as such. */
export async function openInvitations(q: Queryable, groupId: string): Promise<OpenInvitation[]> {
  const rows = await q
    .select({ inv: invitations, inviterName: users.name })
    .from(invitations)
    .leftJoin(users, eq(users.id, invitations.invitedBy))
    .where(and(eq(invitations.groupId, groupId), isNull(invitations.acceptedAt), isNull(invitations.revokedAt)))
    .orderBy(desc(invitations.createdAt));
  const now = Date.now();
  return rows.map(({ inv, inviterName }) => ({
    id: inv.id,
    email: inv.email,
    role: inv.role,
    invitedBy: inv.invitedBy && inviterName !== null ? { id: inv.invitedBy, name: inviterName } : null,
    createdAt: inv.createdAt.toISOString(),
    expiresAt: inv.expiresAt.toISOString(),
    status: inv.expiresAt.getTime() > now ? 'pending' : 'expired',
  }));
}

export async function insertInvitation(
  q: Queryable,
  values: { groupId: string; email: string; role: MembershipRole; tokenHash: string; invitedBy: string; expiresAt: Date },
): Promise<InvitationRow> {
  const [row] = await q.insert(invitations).values(values).returning();
  return row!;
}

/** Revokes the open invitations of one e-mail in one group (a new one replaces them). */
export async function revokeOpenInvitationsFor(q: Queryable, groupId: string, email: string): Promise<void> {
  await q
    .update(invitations)
    .set({ revokedAt: sql`now()` })
    .where(and(eq(invitations.groupId, groupId), eq(invitations.email, email), isNull(invitations.acceptedAt), isNull(invitations.revokedAt)));
}

export async function revokeInvitation(q: Queryable, groupId: string, id: string): Promise<InvitationRow | undefined> {
  const [row] = await q
    .update(invitations)
    .set({ revokedAt: sql`now()` })
    .where(and(eq(invitations.id, id), eq(invitations.groupId, groupId), isNull(invitations.acceptedAt), isNull(invitations.revokedAt)))
    .returning();
  return row;
}

export interface InvitationWithGroup {
  inv: InvitationRow;
  groupName: string;
  inviterName: string | null;
}

/** Looks an invitation up by its link token; `lock` holds the row until the transaction ends. */
export async function invitationByTokenHash(q: Queryable, tokenHash: string, lock = false): Promise<InvitationWithGroup | undefined> {
  const query = q
    .select({ inv: invitations, groupName: researchGroups.name, inviterName: users.name })
    .from(invitations)
    .innerJoin(researchGroups, eq(researchGroups.id, invitations.groupId))
    .leftJoin(users, eq(users.id, invitations.invitedBy))
    .where(eq(invitations.tokenHash, tokenHash));
  const [row] = lock ? await query.for('update', { of: invitations }) : await query;
  return row;
}

export async function markInvitationAccepted(q: Queryable, id: string): Promise<void> {
  await q
    .update(invitations)
    .set({ acceptedAt: sql`now()` })
    .where(eq(invitations.id, id));
}
