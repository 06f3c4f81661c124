import type { FitResult } from '../../../shared/engine/fit.js';
import type { PoleComparison } from '../../../shared/api/fits.js';
import { sql } from 'drizzle-orm';
import { check, doublePrecision, index, integer, jsonb, pgTable, text, timestamp, uuid } from 'drizzle-orm/pg-core';
import { researchGroups } from './groups.js';
import { cavityModels, modelVersions } from './models.js';
import { runs } from './runs.js';
import { users } from './users.js';

/**
 * A measured trace a member uploaded (CSV/TSV): the file's text, kept so it can be fitted
 * again with other columns or rows, and the points of the column choice made at upload,
 * converted to energy (meV) and transmission T. Only a file that parsed cleanly is stored.
 */
export const measuredTraces = pgTable(
  'measured_traces',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    groupId: uuid('group_id')
      .notNull()
      .references(() => researchGroups.id, { onDelete: 'cascade' }),
    deviceName: text('device_name').notNull(),
    fileName: text('file_name').notNull(),
    temperatureMK: doublePrecision('temperature_mk').notNull(),
    notes: text('notes').notNull().default(''),
    /** The cavity model of the measured device, for comparing fits with its computed poles. */
    modelId: uuid('model_id').references(() => cavityModels.id, { onDelete: 'set null' }),
    content: text('content').notNull(),
    columns: jsonb('columns').$type<string[]>().notNull(),
    /** The column choice and units made at upload: { x, y, xUnit, yUnit, leverArm, firstLine, lastLine }. */
    selection: jsonb('selection').$type<Record<string, unknown>>().notNull(),
    energies: jsonb('energies').$type<number[]>().notNull(),
    transmission: jsonb('transmission').$type<number[]>().notNull(),
    createdBy: uuid('created_by').references(() => users.id, { onDelete: 'set null' }),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('measured_traces_group_created').on(t.groupId, t.createdAt.desc())],
);

export type FitStatus = 'queued' | 'running' | 'completed' | 'failed';

/**
 * One peak fit: of a range of a run's computed spectrum or of a measured trace. Small fits
 * are computed during the request (in a worker thread); larger ones go through the
 * `peak-fit` queue and report progress here. `result` holds the whole FitResult (parameters,
 * covariance, curve); `comparison` the nearest computed pole per fitted peak.
 */
export const peakFits = pgTable(
  'peak_fits',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    groupId: uuid('group_id')
      .notNull()
      .references(() => researchGroups.id, { onDelete: 'cascade' }),
    runId: uuid('run_id').references(() => runs.id, { onDelete: 'cascade' }),
    traceId: uuid('trace_id').references(() => measuredTraces.id, { onDelete: 'cascade' }),
    /** The model whose computed poles the fit is compared with (and filed under in the catalogue). */
    modelId: uuid('model_id').references(() => cavityModels.id, { onDelete: 'set null' }),
    modelVersionId: uuid('model_version_id').references(() => modelVersions.id, { onDelete: 'set null' }),
    /** The request as submitted: { lineshape, background, peaks, temperatureMK, range, pair, hints }. */
    request: jsonb('request').$type<Record<string, unknown>>().notNull(),
    status: text('status').$type<FitStatus>().notNull().default('queued'),
    progressFraction: doublePrecision('progress_fraction'),
    attempt: integer('attempt').notNull().default(0),
    /** Beaten by the worker while the fit computes; a running fit without it for POLEWARD_RUN_STALE_SECONDS lost its worker. */
    heartbeatAt: timestamp('heartbeat_at', { withTimezone: true }),
    jobId: text('job_id'),
    error: text('error'),
    result: jsonb('result').$type<FitResult>(),
    comparison: jsonb('comparison').$type<PoleComparison[]>(),
    createdBy: uuid('created_by').references(() => users.id, { onDelete: 'set null' }),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
    finishedAt: timestamp('finished_at', { withTimezone: true }),
  },
  (t) => [
    index('peak_fits_group_created').on(t.groupId, t.createdAt.desc()),
    check('peak_fits_status_known', sql`${t.status} in ('queued','running','completed','failed')`),
    check('peak_fits_one_source', sql`(${t.runId} is null) <> (${t.traceId} is null)`),
  ],
);
