/**
 * Writing e-mail notifications: who gets one (members by role, minus whoever caused it, minus
 * those who turned the kind off), the message with its link, and the queue job, all in the
 * caller's transaction.
 */
import { and, eq, inArray } from 'drizzle-orm';
import type { NotificationKind } from '../../shared/api/fabrication.js';
import type { Queryable } from '../db/client.js';
import { notificationOptOuts, notifications } from '../db/schema/fabrication.js';
import { memberships, type MembershipRole } from '../db/schema/groups.js';
import { users } from '../db/schema/users.js';
import { escapeHtml } from '../mail/escape-html.js';
import type { NotificationQueue } from './notification-queue.js';

interface Recipient {
  id: string;
  email: string;
  name: string;
}

interface NotificationSpec {
  groupId: string | null;
  kind: NotificationKind;
  recipients: Recipient[];
  /** Whoever caused it gets no mail about their own act. */
  actorId: string | null;
  subject: string;
  /** Paragraphs of plain text. */
  lines: string[];
  link: string;
  linkLabel: string;
}

/** Members of a group, optionally only those with one of the roles. */
export async function groupMembers(q: Queryable, groupId: string, roles?: MembershipRole[]): Promise<Recipient[]> {
  const where = roles ? and(eq(memberships.groupId, groupId), inArray(memberships.role, roles)) : eq(memberships.groupId, groupId);
  return q.select({ id: users.id, email: users.email, name: users.name }).from(memberships).innerJoin(users, eq(users.id, memberships.userId)).where(where);
}

export async function userById(q: Queryable, id: string | null): Promise<Recipient | null> {
  if (!id) return null;
  const [u] = await q.select({ id: users.id, email: users.email, name: users.name }).from(users).where(eq(users.id, id));
  return u ?? null;
}

/** Writes one notification per recipient who wants this kind and queues it; returns their ids. */
export async function recordNotifications(q: Queryable, queue: NotificationQueue | null, spec: NotificationSpec): Promise<string[]> {
  const unique = new Map(spec.recipients.filter((r) => r.id !== spec.actorId).map((r) => [r.id, r]));
  if (unique.size === 0) return [];
  const off = await q
    .select({ userId: notificationOptOuts.userId })
    .from(notificationOptOuts)
    .where(and(eq(notificationOptOuts.kind, spec.kind), inArray(notificationOptOuts.userId, [...unique.keys()])));
  for (const o of off) unique.delete(o.userId);
  if (unique.size === 0) return [];
  const text = `${spec.lines.join('\n\n')}\n\n${spec.linkLabel}: ${spec.link}\n\nYou can turn these e-mails off on your account page.\n`;
  const html =
    spec.lines.map((l) => `<p>${escapeHtml(l)}</p>`).join('') +
    `<p><a href="${escapeHtml(spec.link)}">${escapeHtml(spec.linkLabel)}</a></p>` +
    '<p>You can turn these e-mails off on your account page.</p>';
  const rows = await q
    .insert(notifications)
    .values(
      [...unique.values()].map((r) => ({
        groupId: spec.groupId,
        userId: r.id,
        kind: spec.kind,
        toAddress: r.email,
        subject: spec.subject,
        textBody: `Hello ${r.name},\n\n${text}`,
        htmlBody: `<p>Hello ${escapeHtml(r.name)},</p>${html}`,
        link: spec.link,
      })),
    )
    .returning({ id: notifications.id });
  const ids = rows.map((r) => r.id);
  if (queue) await queue.enqueue(q, ids);
  return ids;
}
