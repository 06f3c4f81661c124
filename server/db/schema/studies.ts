import { sql } from 'drizzle-orm';
import { boolean, check, doublePrecision, index, integer, jsonb, pgTable, primaryKey, text, timestamp, uuid } from 'drizzle-orm/pg-core';
import { researchGroups } from './groups.js';
import { modelVersions } from './models.js';
import { users } from './users.js';

export type StudyKind = 'sweep' | 'ensemble';
export type StudyStatus = 'queued' | 'running' | 'completed' | 'failed' | 'cancelled';
export type StudyStepStatus = 'queued' | 'running' | 'completed' | 'failed' | 'cancelled';

/**
 * A parameter study (a sweep of one or two numbers of a model) or a tolerance
 * ensemble on one model version (server/studies, docs/physics-model.md "Parameter
 * studies and tolerance ensembles"). Its steps are computed as separate queue jobs;
 * `outcome` holds the linked trajectories or the ensemble statistics once every step
 * has ended.
 */
export const studies = pgTable(
  'studies',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    groupId: uuid('group_id')
      .notNull()
      .references(() => researchGroups.id, { onDelete: 'cascade' }),
    modelVersionId: uuid('model_version_id')
      .notNull()
      .references(() => modelVersions.id, { onDelete: 'restrict' }),
    kind: text('kind').$type<StudyKind>().notNull(),
    name: text('name').notNull().default(''),
    /** The request as validated: parameters or ensemble spec, window, search options. */
    definition: jsonb('definition').$type<Record<string, unknown>>().notNull(),
    status: text('status').$type<StudyStatus>().notNull().default('queued'),
    stepCount: integer('step_count').notNull(),
    cancelRequested: boolean('cancel_requested').notNull().default(false),
    estimateSeconds: doublePrecision('estimate_seconds'),
    outcome: jsonb('outcome').$type<Record<string, unknown>>(),
    error: text('error'),
    createdBy: uuid('created_by').references(() => users.id, { onDelete: 'set null' }),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
    finishedAt: timestamp('finished_at', { withTimezone: true }),
  },
  (t) => [
    index('studies_group_created').on(t.groupId, t.createdAt.desc()),
    check('studies_kind_known', sql`${t.kind} in ('sweep','ensemble')`),
    check('studies_status_known', sql`${t.status} in ('queued','running','completed','failed','cancelled')`),
  ],
);

/**
 * One step of a study (a parameter value, or a realisation of an ensemble; index 0 of
 * an ensemble is the nominal model). `attempt` counts worker attempts: an attempt
 * writes the step's end only while the attempt is still its own, so a worker that was
 * given up for lost and wakes up late writes nothing. (study, index) is the key, so a
 * step is never stored twice.
 */
export const studySteps = pgTable(
  'study_steps',
  {
    studyId: uuid('study_id')
      .notNull()
      .references(() => studies.id, { onDelete: 'cascade' }),
    index: integer('index').notNull(),
    status: text('status').$type<StudyStepStatus>().notNull().default('queued'),
    attempt: integer('attempt').notNull().default(0),
    jobId: text('job_id'),
    /** Key of the search result in study_step_results. */
    resultKey: text('result_key'),
    /** True when the search result was found stored (an identical step computed before). */
    reused: boolean('reused').notNull().default(false),
    /** Newton continuations into the next step (compact: from, energy, width, mode as base64 float32). */
    continuation: jsonb('continuation').$type<Record<string, unknown>>(),
    /** What was drawn for an ensemble realisation (seed, jitter, roughness). */
    record: jsonb('record').$type<Record<string, unknown>>(),
    error: text('error'),
    seconds: doublePrecision('seconds'),
    worker: text('worker'),
    startedAt: timestamp('started_at', { withTimezone: true }),
    finishedAt: timestamp('finished_at', { withTimezone: true }),
  },
  (t) => [
    primaryKey({ columns: [t.studyId, t.index] }),
    index('study_steps_status').on(t.studyId, t.status),
    check('study_steps_status_known', sql`${t.status} in ('queued','running','completed','failed','cancelled')`),
  ],
);

/**
 * Pole-search results of study steps, keyed by a hash of (model document, window,
 * search options, engine version): a step identical to one computed before reuses it.
 * `search` holds the poles with their modes (base64 float32) and the site list;
 * `transmission` the step's row of the transmission map T(E, p) with its column count
 * (null until a study asking for a map computed it; a study asking for another column
 * count computes it again and replaces it).
 */
export const studyStepResults = pgTable('study_step_results', {
  key: text('key').primaryKey(),
  engineVersion: text('engine_version').notNull(),
  search: jsonb('search').$type<Record<string, unknown>>().notNull(),
  transmission: jsonb('transmission').$type<Record<string, unknown>>(),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
});
