import { index, pgEnum, pgTable, text, timestamp, unique, uuid } from 'drizzle-orm/pg-core';
import { users } from './users.js';

/** Roles inside one research group; admin can also do what designer and reviewer do. */
export const membershipRole = pgEnum('membership_role', ['admin', 'designer', 'reviewer', 'viewer']);
export type MembershipRole = (typeof membershipRole.enumValues)[number];

/** The owner of everything a lab computes: every group-owned row carries group_id. */
export const researchGroups = pgTable('research_groups', {
  id: uuid('id').primaryKey().defaultRandom(),
  name: text('name').notNull(),
  slug: text('slug').notNull().unique(),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
});

export const memberships = pgTable(
  'memberships',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    groupId: uuid('group_id')
      .notNull()
      .references(() => researchGroups.id, { onDelete: 'cascade' }),
    userId: uuid('user_id')
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    role: membershipRole('role').notNull(),
    joinedAt: timestamp('joined_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [unique('memberships_group_user').on(t.groupId, t.userId), index('memberships_user').on(t.userId)],
);
