import { doublePrecision, index, integer, jsonb, pgTable, text, timestamp, unique, uuid } from 'drizzle-orm/pg-core';
import type { TracedOutline } from '../../../shared/layout/outline-trace.js';
import type { DerivedFigures } from '../../../shared/model/derived-figures.js';
import { researchGroups } from './groups.js';
import { users } from './users.js';

/**
 * A cavity model: a named geometry of a group. Its content lives in versions;
 * versions are never updated (editing writes version n+1), so a run always
 * points at exactly the document it computed.
 */
export const cavityModels = pgTable(
  'cavity_models',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    groupId: uuid('group_id')
      .notNull()
      .references(() => researchGroups.id, { onDelete: 'cascade' }),
    name: text('name').notNull(),
    latestVersion: integer('latest_version').notNull().default(1),
    /** Set for the demo devices computed from catalogue/ on first start. */
    referenceKey: text('reference_key'),
    createdBy: uuid('created_by').references(() => users.id, { onDelete: 'set null' }),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('cavity_models_group_updated').on(t.groupId, t.updatedAt.desc()), unique('cavity_models_group_reference').on(t.groupId, t.referenceKey)],
);

/**
 * One immutable version of a model document. The geometry family and the key
 * dimensions are columns so that the catalogue can filter on them.
 */
export const modelVersions = pgTable(
  'model_versions',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    modelId: uuid('model_id')
      .notNull()
      .references(() => cavityModels.id, { onDelete: 'cascade' }),
    groupId: uuid('group_id')
      .notNull()
      .references(() => researchGroups.id, { onDelete: 'cascade' }),
    version: integer('version').notNull(),
    document: jsonb('document').notNull(),
    family: text('family').notNull(),
    /** 'electrons' (2DEG: nm, meV) or 'microwave' (flat resonator: mm, k² in mm⁻²). */
    physics: text('physics').$type<'electrons' | 'microwave'>().notNull().default('electrons'),
    material: text('material').notNull(),
    effectiveMass: doublePrecision('effective_mass').notNull(),
    spacingNm: doublePrecision('spacing_nm').notNull(),
    fieldT: doublePrecision('field_t').notNull(),
    siteCount: integer('site_count').notNull(),
    leadCount: integer('lead_count').notNull(),
    hoppingMeV: doublePrecision('hopping_mev').notNull(),
    /** Key dimensions in nm (a microwave model's mm converted): width/height (bounding box), radius, length where the family has them. */
    widthNm: doublePrecision('width_nm'),
    heightNm: doublePrecision('height_nm'),
    radiusNm: doublePrecision('radius_nm'),
    lengthNm: doublePrecision('length_nm'),
    /** Ellipse semi-axes, annulus radii (nm) and the cavity's area (nm²); server/models/model-figures.ts. */
    rxNm: doublePrecision('rx_nm'),
    ryNm: doublePrecision('ry_nm'),
    innerNm: doublePrecision('inner_nm'),
    outerNm: doublePrecision('outer_nm'),
    areaNm2: doublePrecision('area_nm2'),
    keyDimensions: jsonb('key_dimensions').$type<Record<string, number>>().notNull(),
    /**
     * Site count, hopping, channel thresholds, validity ceilings and field scales, computed
     * once when the version is saved (shared/model/derived-figures.ts), so reading a version
     * or a run re-validates nothing. Null only until the start-up back-fill reaches an older row.
     */
    derived: jsonb('derived').$type<DerivedFigures>(),
    /**
     * The cavity outline traced from the site mask when the version is saved
     * (shared/layout/outline-trace.ts: polygons in the model's length unit, layout frame), so the
     * fabrication layout neither rasterises nor traces again. Null only until the start-up
     * back-fill (server/models/model-backfill.ts) reaches an older or restored row.
     */
    outline: jsonb('outline').$type<TracedOutline>(),
    createdBy: uuid('created_by').references(() => users.id, { onDelete: 'set null' }),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [unique('model_versions_model_version').on(t.modelId, t.version), index('model_versions_group').on(t.groupId)],
);
