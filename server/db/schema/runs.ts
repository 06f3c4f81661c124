import { sql } from 'drizzle-orm';
import { boolean, check, doublePrecision, index, integer, jsonb, pgTable, text, timestamp, uuid } from 'drizzle-orm/pg-core';
import { researchGroups } from './groups.js';
import { modelVersions } from './models.js';
import { users } from './users.js';

import type { RunKind, RunStatus } from '../../../shared/api/enums.js';
import type { RunCertificate, RunEstimate } from '../../../shared/api/runs.js';

export type { RunStatus };

/**
 * A computation on one model version: a pole search or a transmission sweep
 * (later: fits, parameter sweeps). `attempt` counts worker attempts; a worker
 * writes its results only while the run's attempt is still its own, so a lost
 * worker that wakes up late cannot write a second copy.
 */
export const runs = pgTable(
  'runs',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    groupId: uuid('group_id')
      .notNull()
      .references(() => researchGroups.id, { onDelete: 'cascade' }),
    modelVersionId: uuid('model_version_id')
      .notNull()
      .references(() => modelVersions.id, { onDelete: 'restrict' }),
    kind: text('kind').$type<RunKind>().notNull(),
    status: text('status').$type<RunStatus>().notNull().default('queued'),
    /** The energy window and method parameters, as submitted (meV). */
    window: jsonb('window').$type<Record<string, number>>().notNull(),
    note: text('note').notNull().default(''),
    progressStage: text('progress_stage'),
    progressFraction: doublePrecision('progress_fraction'),
    jobId: text('job_id'),
    attempt: integer('attempt').notNull().default(0),
    cancelRequested: boolean('cancel_requested').notNull().default(false),
    heartbeatAt: timestamp('heartbeat_at', { withTimezone: true }),
    error: text('error'),
    engineVersion: text('engine_version'),
    thresholds: jsonb('thresholds').$type<number[]>(),
    certificate: jsonb('certificate').$type<RunCertificate>(),
    stats: jsonb('stats'),
    estimate: jsonb('estimate').$type<RunEstimate>(),
    resonanceCount: integer('resonance_count'),
    createdBy: uuid('created_by').references(() => users.id, { onDelete: 'set null' }),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
    startedAt: timestamp('started_at', { withTimezone: true }),
    finishedAt: timestamp('finished_at', { withTimezone: true }),
  },
  (t) => [
    index('runs_group_created').on(t.groupId, t.createdAt.desc()),
    index('runs_status_heartbeat').on(t.status, t.heartbeatAt),
    check('runs_status_known', sql`${t.status} in ('queued','running','completed','failed','cancelled')`),
  ],
);

/** The transmission spectrum a run computed over its window (one per run). */
export const spectra = pgTable('spectra', {
  runId: uuid('run_id')
    .primaryKey()
    .references(() => runs.id, { onDelete: 'cascade' }),
  groupId: uuid('group_id')
    .notNull()
    .references(() => researchGroups.id, { onDelete: 'cascade' }),
  energies: jsonb('energies').$type<number[]>().notNull(),
  /** Lead pairs (from → to) in the order of `transmission`'s rows. */
  pairs: jsonb('pairs').$type<{ from: number; to: number }[]>().notNull(),
  transmission: jsonb('transmission').$type<number[][]>().notNull(),
  residual: jsonb('residual').$type<number[]>().notNull(),
  /** R_ℓ(E): reflection[lead][energy], summed over the lead's open channels; null for runs stored before it was kept. */
  reflection: jsonb('reflection').$type<number[][]>(),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
});
