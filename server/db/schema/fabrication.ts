import { sql } from 'drizzle-orm';
import { check, doublePrecision, index, integer, pgTable, primaryKey, text, timestamp, uuid } from 'drizzle-orm/pg-core';
import { resonances } from './catalogue.js';
import { peakFits } from './fits.js';
import { researchGroups } from './groups.js';
import { users } from './users.js';

/**
 * The fabrication state of a resonance (shared/fabrication/fabrication-states.ts). One row per
 * resonance that was ever proposed; withdrawing a proposal deletes it. Every change also goes
 * to the audit log (who, when, why), which is the record's history.
 */
export const resonanceFabrication = pgTable(
  'resonance_fabrication',
  {
    resonanceId: uuid('resonance_id')
      .primaryKey()
      .references(() => resonances.id, { onDelete: 'cascade' }),
    groupId: uuid('group_id')
      .notNull()
      .references(() => researchGroups.id, { onDelete: 'cascade' }),
    state: text('state').notNull(),
    reason: text('reason').notNull(),
    toleranceEnergyMeV: doublePrecision('tolerance_energy_mev'),
    toleranceMinQuality: doublePrecision('tolerance_min_quality'),
    proposedBy: uuid('proposed_by').references(() => users.id, { onDelete: 'set null' }),
    proposedAt: timestamp('proposed_at', { withTimezone: true }).notNull(),
    reviewedBy: uuid('reviewed_by').references(() => users.id, { onDelete: 'set null' }),
    reviewedAt: timestamp('reviewed_at', { withTimezone: true }),
    reviewReason: text('review_reason'),
    batch: text('batch'),
    sentAt: timestamp('sent_at', { withTimezone: true }),
    measuredEnergy: doublePrecision('measured_energy'),
    measuredWidth: doublePrecision('measured_width'),
    measuredEnergySigma: doublePrecision('measured_energy_sigma'),
    measuredWidthSigma: doublePrecision('measured_width_sigma'),
    measuredSource: text('measured_source'),
    measuredFitId: uuid('measured_fit_id').references(() => peakFits.id, { onDelete: 'set null' }),
    measuredBy: uuid('measured_by').references(() => users.id, { onDelete: 'set null' }),
    measuredAt: timestamp('measured_at', { withTimezone: true }),
    updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [
    index('resonance_fabrication_group_state').on(t.groupId, t.state, t.updatedAt.desc()),
    check('resonance_fabrication_state_known', sql`${t.state} in ('candidate','under_review','approved','rejected','sent','measured')`),
  ],
);

/** Comments on a resonance; `mentions` are the members named (user ids), who get an e-mail. */
export const resonanceComments = pgTable(
  'resonance_comments',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    groupId: uuid('group_id')
      .notNull()
      .references(() => researchGroups.id, { onDelete: 'cascade' }),
    resonanceId: uuid('resonance_id')
      .notNull()
      .references(() => resonances.id, { onDelete: 'cascade' }),
    authorId: uuid('author_id').references(() => users.id, { onDelete: 'set null' }),
    body: text('body').notNull(),
    mentions: uuid('mentions')
      .array()
      .notNull()
      .default(sql`'{}'::uuid[]`),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('resonance_comments_resonance').on(t.groupId, t.resonanceId, t.createdAt)],
);

/** Kinds of e-mail a user turned off (shared/api/fabrication.ts NOTIFICATION_KINDS); no row = on. */
export const notificationOptOuts = pgTable(
  'notification_opt_outs',
  {
    userId: uuid('user_id')
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    kind: text('kind').notNull(),
  },
  (t) => [primaryKey({ columns: [t.userId, t.kind] })],
);

export type NotificationStatus = 'queued' | 'sent' | 'failed';

/**
 * One e-mail notification to one person, written in the transaction of the change it reports
 * and sent by the `notification` queue (server/fabrication/notification-job.ts) with retries.
 * The message is composed when the row is written, so a retry sends the same text; status
 * 'sent' makes a duplicated job a no-op. Failed ones are listed to the group's admins.
 */
export const notifications = pgTable(
  'notifications',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    groupId: uuid('group_id').references(() => researchGroups.id, { onDelete: 'cascade' }),
    userId: uuid('user_id').references(() => users.id, { onDelete: 'cascade' }),
    kind: text('kind').notNull(),
    toAddress: text('to_address').notNull(),
    subject: text('subject').notNull(),
    textBody: text('text_body').notNull(),
    htmlBody: text('html_body').notNull(),
    link: text('link').notNull(),
    status: text('status').$type<NotificationStatus>().notNull().default('queued'),
    attempts: integer('attempts').notNull().default(0),
    error: text('error'),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
    sentAt: timestamp('sent_at', { withTimezone: true }),
  },
  (t) => [
    index('notifications_group_status').on(t.groupId, t.status, t.createdAt.desc()),
    check('notifications_status_known', sql`${t.status} in ('queued','sent','failed')`),
  ],
);
