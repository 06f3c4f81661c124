import { sql } from 'drizzle-orm';
import { boolean, check, pgTable, text, timestamp, uuid } from 'drizzle-orm/pg-core';

/** People who can sign in. E-mails are stored lower-cased so uniqueness ignores case. */
export const users = pgTable(
  'users',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    email: text('email').notNull().unique(),
    name: text('name').notNull(),
    passwordHash: text('password_hash').notNull(),
    // Sessions issued before this instant are refused (set on password reset).
    passwordChangedAt: timestamp('password_changed_at', { withTimezone: true }).notNull().defaultNow(),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
    // The person who runs this installation: reads the local mail outbox (server/auth/site-operator.ts).
    siteOperator: boolean('site_operator').notNull().default(false),
  },
  (t) => [check('users_email_lower_case', sql`${t.email} = lower(${t.email})`)],
);
