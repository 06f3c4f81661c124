import { sql, type SQL } from 'drizzle-orm';
import {
  bigint,
  boolean,
  customType,
  doublePrecision,
  index,
  integer,
  jsonb,
  pgTable,
  primaryKey,
  text,
  timestamp,
  unique,
  uuid,
  type AnyPgColumn,
} from 'drizzle-orm/pg-core';
import { researchGroups } from './groups.js';
import { cavityModels, modelVersions } from './models.js';
import { runs } from './runs.js';
import { peakFits } from './fits.js';

const bytea = customType<{ data: Buffer; driverData: Buffer }>({ dataType: () => 'bytea' });
const tsvector = customType<{ data: string }>({ dataType: () => 'tsvector' });

/**
 * A nullable double as a sort and filter key: null (an infinite lifetime or Q of a bound
 * state, a dimension the family lacks) becomes +Infinity, which sorts after every finite
 * value and compares as infinite. Catalogue queries use this same expression, so the
 * planner matches them to the expression indexes below.
 */
export function nullAsInfinity(column: AnyPgColumn): SQL {
  return sql`coalesce(${column}, 'Infinity'::float8)`;
}

/**
 * One resonance (pole) found by a run. Geometry columns are copied from the
 * model version so that catalogue searches filter and sort on one table with
 * plain b-tree indexes. (run_id, idx) is unique: a retried run rewrites its
 * rows instead of adding copies.
 * A fitted resonance (source 'fitted') is a peak fit filed under the model it was
 * compared with: fit_id is set, idx is null, run_id is the fitted run (null for a
 * measured trace), and petermann/residual (properties of a computed pole) are null.
 */
export const resonances = pgTable(
  'resonances',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    groupId: uuid('group_id')
      .notNull()
      .references(() => researchGroups.id, { onDelete: 'cascade' }),
    runId: uuid('run_id').references(() => runs.id, { onDelete: 'cascade' }),
    /** 'computed' (a pole a run found) or 'fitted' (a peak fit). */
    source: text('source').$type<'computed' | 'fitted'>().notNull().default('computed'),
    fitId: uuid('fit_id').references(() => peakFits.id, { onDelete: 'cascade' }),
    modelId: uuid('model_id')
      .notNull()
      .references(() => cavityModels.id, { onDelete: 'cascade' }),
    modelVersionId: uuid('model_version_id')
      .notNull()
      .references(() => modelVersions.id, { onDelete: 'cascade' }),
    idx: integer('idx'),
    energy: doublePrecision('energy').notNull(),
    width: doublePrecision('width').notNull(),
    lifetimePs: doublePrecision('lifetime_ps'),
    quality: doublePrecision('quality'),
    partialWidths: jsonb('partial_widths').$type<{ lead: string; width: number }[]>().notNull(),
    petermann: doublePrecision('petermann'),
    residual: doublePrecision('residual'),
    bound: boolean('bound').notNull(),
    nearThreshold: boolean('near_threshold').notNull(),
    overlapping: boolean('overlapping').notNull(),
    /**
     * Lattice validity (shared/model/resonance-validity.ts): the energy below which the model's
     * lattice is trusted (its unit: meV, or mm⁻² in the microwave mode), the wavelength in lattice
     * spacings at this resonance's energy (null: infinite) and whether the resonance lies above
     * the limit. Null only until a back-fill reaches an old row.
     */
    validityLimit: doublePrecision('validity_limit'),
    wavelengthSpacings: doublePrecision('wavelength_spacings'),
    aboveValidity: boolean('above_validity'),
    /** 'electrons' or 'microwave'; in the microwave mode energy and width are k² (mm⁻²) and frequency_ghz = Re f. */
    physics: text('physics').$type<'electrons' | 'microwave'>().notNull().default('electrons'),
    frequencyGhz: doublePrecision('frequency_ghz'),
    details: jsonb('details').$type<Record<string, unknown>>().notNull().default({}),
    tags: text('tags')
      .array()
      .notNull()
      .default(sql`'{}'::text[]`),
    notes: text('notes').notNull().default(''),
    // Copied from the model version for one-table searches.
    modelName: text('model_name').notNull(),
    modelVersion: integer('model_version').notNull(),
    family: text('family').notNull(),
    material: text('material').notNull(),
    fieldT: doublePrecision('field_t').notNull(),
    spacingNm: doublePrecision('spacing_nm').notNull(),
    widthNm: doublePrecision('width_nm'),
    heightNm: doublePrecision('height_nm'),
    radiusNm: doublePrecision('radius_nm'),
    lengthNm: doublePrecision('length_nm'),
    rxNm: doublePrecision('rx_nm'),
    ryNm: doublePrecision('ry_nm'),
    innerNm: doublePrecision('inner_nm'),
    outerNm: doublePrecision('outer_nm'),
    areaNm2: doublePrecision('area_nm2'),
    searchText: tsvector('search_text').generatedAlwaysAs((): SQL => sql`to_tsvector('simple', ${resonances.modelName} || ' ' || ${resonances.notes})`),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [
    unique('resonances_run_idx').on(t.runId, t.idx),
    // Catalogue sort keys: one b-tree per sort of the catalogue, in the sort's exact order
    // with the tie-breakers (energy, then id), so a page is read straight off the index
    // without a Sort, and a keyset cursor (key, energy, id) > (…) is an index bound.
    // Energy is a key column of every one, so an energy window is checked in the index.
    index('resonances_group_energy_key').on(t.groupId, t.energy, t.id),
    index('resonances_group_width_key').on(t.groupId, t.width, t.energy, t.id),
    // Bound states (Q, τ infinite) lead a descending Q or τ order: `bound` after the key lets
    // "bound=false" be checked in the index instead of fetching each bound row to drop it.
    index('resonances_group_quality_key').on(t.groupId, nullAsInfinity(t.quality), t.energy, t.id, t.bound),
    index('resonances_group_lifetime_key').on(t.groupId, nullAsInfinity(t.lifetimePs), t.energy, t.id, t.bound),
    index('resonances_group_created_key').on(t.groupId, t.createdAt, t.energy, t.id),
    index('resonances_group_model_key').on(t.groupId, t.modelName, t.modelVersion, t.energy, t.id),
    index('resonances_group_geometry_key').on(
      t.groupId,
      t.family,
      nullAsInfinity(t.widthNm),
      nullAsInfinity(t.heightNm),
      nullAsInfinity(t.radiusNm),
      nullAsInfinity(t.lengthNm),
      t.energy,
      t.id,
    ),
    index('resonances_group_tags_key').on(t.groupId, t.tags, t.energy, t.id),
    // One per geometry dimension (sort=dim.NAME); the same expressions serve dim.NAME.min/max.
    index('resonances_group_dim_width_key').on(t.groupId, nullAsInfinity(t.widthNm), t.energy, t.id),
    index('resonances_group_dim_height_key').on(t.groupId, nullAsInfinity(t.heightNm), t.energy, t.id),
    index('resonances_group_dim_radius_key').on(t.groupId, nullAsInfinity(t.radiusNm), t.energy, t.id),
    index('resonances_group_dim_length_key').on(t.groupId, nullAsInfinity(t.lengthNm), t.energy, t.id),
    index('resonances_group_dim_rx_key').on(t.groupId, nullAsInfinity(t.rxNm), t.energy, t.id),
    index('resonances_group_dim_ry_key').on(t.groupId, nullAsInfinity(t.ryNm), t.energy, t.id),
    index('resonances_group_dim_inner_key').on(t.groupId, nullAsInfinity(t.innerNm), t.energy, t.id),
    index('resonances_group_dim_outer_key').on(t.groupId, nullAsInfinity(t.outerNm), t.energy, t.id),
    index('resonances_group_dim_area_key').on(t.groupId, nullAsInfinity(t.areaNm2), t.energy, t.id),
    // The usual "one family, by energy" search.
    index('resonances_group_family_energy_key').on(t.groupId, t.family, t.energy, t.id),
    index('resonances_tags').using('gin', t.tags),
    index('resonances_search_text').using('gin', t.searchText),
  ],
);

/**
 * The catalogue generation of each group: a counter that a trigger on `resonances` raises
 * in the same transaction as every statement that inserts, updates or deletes the group's
 * rows (migrations/0014_catalogue_generation_trigger.sql; TRUNCATE raises every group's).
 * Every API process reads it with the caller's membership on each request, so answers and
 * counts cached under a generation are dropped by the first request after any change, made
 * by any process (API, workers, restores, cascaded deletes). No row yet reads as 0.
 * No foreign key: a group's deletion cascades to its resonances, whose trigger must not
 * need the group row that is going away; a leftover counter of a deleted group is harmless.
 */
export const catalogueGenerations = pgTable('catalogue_generations', {
  groupId: uuid('group_id').primaryKey(),
  generation: bigint('generation', { mode: 'number' }).notNull().default(0),
});

/** The mode vector ψ_R of a resonance (Float64 interleaved re, im), kept for later maps (currents, Husimi). */
export const resonanceModes = pgTable('resonance_modes', {
  resonanceId: uuid('resonance_id')
    .primaryKey()
    .references(() => resonances.id, { onDelete: 'cascade' }),
  sites: integer('sites').notNull(),
  vector: bytea('vector').notNull(),
});

/** Rendered mode images (PNG), a thumbnail and a full-size one per resonance. */
export const modeImages = pgTable(
  'mode_images',
  {
    resonanceId: uuid('resonance_id')
      .notNull()
      .references(() => resonances.id, { onDelete: 'cascade' }),
    size: text('size').$type<'thumb' | 'full'>().notNull(),
    width: integer('width').notNull(),
    height: integer('height').notNull(),
    etag: text('etag').notNull(),
    png: bytea('png').notNull(),
  },
  (t) => [primaryKey({ columns: [t.resonanceId, t.size] })],
);
