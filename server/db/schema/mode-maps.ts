import type { ModeMapPayload } from '../../../shared/api/mode-maps.js';
import { sql } from 'drizzle-orm';
import { check, customType, doublePrecision, index, integer, jsonb, pgTable, text, timestamp, unique, uuid } from 'drizzle-orm/pg-core';
import { resonances } from './catalogue.js';
import { researchGroups } from './groups.js';
import { modelVersions } from './models.js';
import { users } from './users.js';

const bytea = customType<{ data: Buffer; driverData: Buffer }>({ dataType: () => 'bytea' });

/**
 * The probability current of a catalogued pole's mode, computed by its run
 * (docs/physics-model.md, "Current and Husimi maps"). Compact: the cavity mask as a
 * bitset over the grid (bit i·ny + j, most significant bit first) and (j_x, j_y) per
 * site as little-endian float32 in the lexicographic site order; currents in 1/ps for
 * Σ|ψ|² = 1.
 */
export const resonanceCurrents = pgTable('resonance_currents', {
  resonanceId: uuid('resonance_id')
    .primaryKey()
    .references(() => resonances.id, { onDelete: 'cascade' }),
  nx: integer('nx').notNull(),
  ny: integer('ny').notNull(),
  mask: bytea('mask').notNull(),
  vectors: bytea('vectors').notNull(),
  /** Current from the cavity into each lead (1/ps): the partial widths over ħ. */
  leadCurrents: jsonb('lead_currents').$type<{ name: string; side: string; current: number }[]>().notNull(),
});

export type ModeMapStatus = 'queued' | 'running' | 'completed' | 'failed';

/**
 * A map computed on demand (a scattering state's current and density at one energy, or
 * a Husimi map of a resonance or a scattering state), cached by its parameters:
 * (group, cache_key) is unique, so asking twice returns the same row.
 */
export const modeMaps = pgTable(
  'mode_maps',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    groupId: uuid('group_id')
      .notNull()
      .references(() => researchGroups.id, { onDelete: 'cascade' }),
    modelVersionId: uuid('model_version_id')
      .notNull()
      .references(() => modelVersions.id, { onDelete: 'cascade' }),
    resonanceId: uuid('resonance_id').references(() => resonances.id, { onDelete: 'cascade' }),
    /** The request as validated (source and Husimi options). */
    params: jsonb('params').$type<Record<string, unknown>>().notNull(),
    cacheKey: text('cache_key').notNull(),
    status: text('status').$type<ModeMapStatus>().notNull().default('queued'),
    progressStage: text('progress_stage'),
    progressFraction: doublePrecision('progress_fraction'),
    attempt: integer('attempt').notNull().default(0),
    /** Beaten by the computing worker; the supervisor hands a map with an old one to another worker. */
    heartbeatAt: timestamp('heartbeat_at', { withTimezone: true }),
    jobId: text('job_id'),
    error: text('error'),
    engineVersion: text('engine_version'),
    result: jsonb('result').$type<ModeMapPayload>(),
    createdBy: uuid('created_by').references(() => users.id, { onDelete: 'set null' }),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
    finishedAt: timestamp('finished_at', { withTimezone: true }),
  },
  (t) => [
    unique('mode_maps_group_key').on(t.groupId, t.cacheKey),
    index('mode_maps_resonance').on(t.resonanceId),
    index('mode_maps_status_heartbeat').on(t.status, t.heartbeatAt),
    check('mode_maps_status_known', sql`${t.status} in ('queued','running','completed','failed')`),
  ],
);
