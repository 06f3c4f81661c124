import { index, jsonb, pgTable, text, timestamp, uuid } from 'drizzle-orm/pg-core';
import { researchGroups } from './groups.js';
import { users } from './users.js';

/**
 * Who did what, when. group_id is null for account-level events (sign-in, tokens);
 * actor_id is null for anonymous ones (a password-reset request, a failed sign-in).
 * account_id is the account the event concerns (the one signed in to, whose role
 * changed, whose mail was read): its owner sees the entry on the account page.
 */
export const auditLog = pgTable(
  'audit_log',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    groupId: uuid('group_id').references(() => researchGroups.id, { onDelete: 'cascade' }),
    actorId: uuid('actor_id').references(() => users.id, { onDelete: 'set null' }),
    accountId: uuid('account_id').references(() => users.id, { onDelete: 'cascade' }),
    action: text('action').notNull(),
    subject: text('subject').notNull(),
    details: jsonb('details').$type<Record<string, unknown>>().notNull().default({}),
    at: timestamp('at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('audit_log_group_at').on(t.groupId, t.at.desc()), index('audit_log_account_at').on(t.accountId, t.at.desc())],
);
