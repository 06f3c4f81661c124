import { and, asc, eq, ne, sql, type Column } from 'drizzle-orm';
import type { Queryable, Tx } from '../db/client.js';
import { catalogueGenerations, modeImages, resonances } from '../db/schema/catalogue.js';
import { modelVersions } from '../db/schema/models.js';
import { runs } from '../db/schema/runs.js';
import { keyFields, keysetCondition, toKeyValue, type CursorPosition, type KeyValue } from './catalogue-cursor.js';
import { catalogueConditions, catalogueOrder, type CatalogueFilter } from './catalogue-query.js';

/** The columns a catalogue row needs (not details, not search_text). */
const rowColumns = {
  id: resonances.id,
  groupId: resonances.groupId,
  runId: resonances.runId,
  source: resonances.source,
  fitId: resonances.fitId,
  modelId: resonances.modelId,
  modelVersionId: resonances.modelVersionId,
  modelName: resonances.modelName,
  modelVersion: resonances.modelVersion,
  family: resonances.family,
  material: resonances.material,
  fieldT: resonances.fieldT,
  widthNm: resonances.widthNm,
  heightNm: resonances.heightNm,
  radiusNm: resonances.radiusNm,
  lengthNm: resonances.lengthNm,
  rxNm: resonances.rxNm,
  ryNm: resonances.ryNm,
  innerNm: resonances.innerNm,
  outerNm: resonances.outerNm,
  areaNm2: resonances.areaNm2,
  physics: resonances.physics,
  frequencyGhz: resonances.frequencyGhz,
  validityLimit: resonances.validityLimit,
  wavelengthSpacings: resonances.wavelengthSpacings,
  aboveValidity: resonances.aboveValidity,
  energy: resonances.energy,
  width: resonances.width,
  lifetimePs: resonances.lifetimePs,
  quality: resonances.quality,
  partialWidths: resonances.partialWidths,
  petermann: resonances.petermann,
  residual: resonances.residual,
  bound: resonances.bound,
  nearThreshold: resonances.nearThreshold,
  overlapping: resonances.overlapping,
  tags: resonances.tags,
  notes: resonances.notes,
  createdAt: resonances.createdAt,
};

export interface ResonanceRecord {
  id: string;
  groupId: string;
  /** Null for a fitted resonance of a measured trace. */
  runId: string | null;
  source: 'computed' | 'fitted';
  fitId: string | null;
  modelId: string;
  modelVersionId: string;
  modelName: string;
  modelVersion: number;
  family: string;
  material: string;
  fieldT: number;
  widthNm: number | null;
  heightNm: number | null;
  radiusNm: number | null;
  lengthNm: number | null;
  rxNm: number | null;
  ryNm: number | null;
  innerNm: number | null;
  outerNm: number | null;
  areaNm2: number | null;
  /** 'electrons' or 'microwave' (energy and width then in mm⁻², frequencyGhz set). */
  physics: string;
  frequencyGhz: number | null;
  validityLimit: number | null;
  wavelengthSpacings: number | null;
  aboveValidity: boolean | null;
  energy: number;
  width: number;
  lifetimePs: number | null;
  quality: number | null;
  partialWidths: { lead: string; width: number }[];
  /** Null for fitted resonances (a property of a computed pole). */
  petermann: number | null;
  residual: number | null;
  bound: boolean;
  nearThreshold: boolean;
  overlapping: boolean;
  tags: string[];
  notes: string;
  createdAt: Date;
}

export interface KeyedRecord {
  record: ResonanceRecord;
  /** The row's sort key in cursor form (see catalogue-cursor.ts). */
  key: KeyValue[];
}

/**
 * The query behind a page: up to `limit` rows of a search in its sort order, after
 * `offset` rows or strictly beyond a keyset cursor (rows before a cursor come in the
 * reverse order). Every sort has an index in exactly its order, so either way the plan is
 * an index scan that stops after `limit` rows (tests/server/catalogue-plans.test.ts).
 */
export function pageQuery(
  q: Queryable,
  groupId: string,
  filter: CatalogueFilter,
  at: { offset: number } | { cursor: CursorPosition },
  limit: number,
) {
  const cursor = 'cursor' in at ? at.cursor : undefined;
  const where = catalogueConditions(groupId, filter);
  const backwards = cursor?.toward === 'before';
  const dir = backwards ? (filter.dir === 'asc' ? 'desc' : 'asc') : filter.dir;
  const query = q
    .select({ row: rowColumns, ...keyFields(filter.sort) })
    .from(resonances)
    .where(cursor ? and(where, keysetCondition(filter.sort, filter.dir, cursor)) : where)
    .orderBy(...catalogueOrder(filter.sort, dir))
    .limit(limit)
    .$dynamic();
  return 'offset' in at && at.offset > 0 ? query.offset(at.offset) : query;
}

/** Runs pageQuery; rows come back in the sort order, each with its key in cursor form. */
export async function pageOfResonances(
  q: Queryable,
  groupId: string,
  filter: CatalogueFilter,
  at: { offset: number } | { cursor: CursorPosition },
  limit: number,
): Promise<KeyedRecord[]> {
  // Read as plain driver rows and decoded column by column: drizzle's generic row mapping
  // of nested selections cost more than the query itself for export batches of 1,000.
  const result = await q.execute(pageQuery(q, groupId, filter, at, limit).getSQL());
  const keyNames = Object.keys(keyFields(filter.sort));
  const out = (result.rows as Record<string, unknown>[]).map((raw) => ({ record: fromDriverRow(raw), key: keyNames.map((k) => toKeyValue(raw[k])) }));
  return 'cursor' in at && at.cursor.toward === 'before' ? out.reverse() : out;
}

const rowDecoders = Object.entries(rowColumns).map(([key, col]) => [key, col.name, col as Column] as const);

/** A record from a plain driver row (snake_case keys), each value through its column's own decoder. */
function fromDriverRow(raw: Record<string, unknown>): ResonanceRecord {
  const out: Record<string, unknown> = {};
  for (const [key, name, col] of rowDecoders) {
    const value = raw[name];
    out[key] = value === null || value === undefined ? null : col.mapFromDriverValue(value);
  }
  return out as unknown as ResonanceRecord;
}

/** The group's catalogue generation (0 before its first change); requests read it with the membership instead. */
export async function catalogueGeneration(q: Queryable, groupId: string): Promise<number> {
  const [row] = await q.select({ generation: catalogueGenerations.generation }).from(catalogueGenerations).where(eq(catalogueGenerations.groupId, groupId));
  return row?.generation ?? 0;
}

/** The count query: the matches, at most `cap` + 1 of them when a cap is given. */
export function countQuery(q: Queryable, groupId: string, filter: CatalogueFilter, cap?: number) {
  const matches = q.select({ one: sql`1`.as('one') }).from(resonances).where(catalogueConditions(groupId, filter)).$dynamic();
  const bounded = cap === undefined ? matches : matches.limit(cap + 1);
  return q.select({ n: sql<number>`count(*)::int` }).from(bounded.as('matches'));
}

/**
 * The exact number of matches, counting at most `cap` of them (null when there are more):
 * a wrong guess about a filter's size then costs a bounded scan, never the whole table.
 */
export async function countResonances(q: Queryable, groupId: string, filter: CatalogueFilter, cap?: number): Promise<number | null> {
  const [row] = await countQuery(q, groupId, filter, cap);
  const n = row?.n ?? 0;
  return cap !== undefined && n > cap ? null : n;
}

/**
 * PostgreSQL's own estimate of the number of matches (the planner's row estimate from the
 * table statistics that ANALYZE and autovacuum keep), read from EXPLAIN without running
 * the query: a fraction of a millisecond whatever the size of the catalogue.
 */
export async function estimateResonances(q: Queryable, groupId: string, filter: CatalogueFilter): Promise<number> {
  const matches = q.select({ one: sql`1` }).from(resonances).where(catalogueConditions(groupId, filter));
  const result = await q.execute(sql`explain (format json) ${matches}`);
  const plan = (result.rows[0] as Record<string, unknown> | undefined)?.['QUERY PLAN'];
  const parsed = (typeof plan === 'string' ? JSON.parse(plan) : plan) as { Plan?: { 'Plan Rows'?: number } }[] | undefined;
  const rows = parsed?.[0]?.Plan?.['Plan Rows'];
  return typeof rows === 'number' && Number.isFinite(rows) ? Math.max(0, Math.round(rows)) : 0;
}

/**
 * Every row matching the filter, in the filter's sort order, handed out in batches of
 * `batchSize`, each batch one keyset page after the last row of the one before, so an
 * export of 100,000 rows holds one batch in memory and every batch is an index range
 * scan. Call it in a read-only repeatable-read transaction (one consistent snapshot);
 * `onBatch` returning false stops early (the client went away).
 */
export async function streamResonances(
  tx: Tx,
  groupId: string,
  filter: CatalogueFilter,
  batchSize: number,
  onBatch: (rows: ResonanceRecord[]) => Promise<boolean>,
): Promise<number> {
  let sent = 0;
  let cursor: CursorPosition | undefined;
  for (;;) {
    const rows = await pageOfResonances(tx, groupId, filter, cursor ? { cursor } : { offset: 0 }, batchSize);
    if (rows.length === 0) break;
    sent += rows.length;
    if (!(await onBatch(rows.map((r) => r.record)))) break;
    if (rows.length < batchSize) break;
    cursor = { toward: 'after', key: rows.at(-1)!.key, page: 1 };
  }
  return sent;
}

interface ResonanceContext {
  row: ResonanceRecord;
  /** Null for a fitted resonance of a measured trace. */
  run: {
    id: string;
    kind: string;
    window: Record<string, number>;
    certificate: unknown;
    status: string;
    thresholds: number[] | null;
  } | null;
  /** document.leads of the model version the run computed. */
  leads: unknown;
}

export async function findResonance(q: Queryable, groupId: string, id: string): Promise<ResonanceRecord | undefined> {
  const [row] = await q
    .select(rowColumns)
    .from(resonances)
    .where(and(eq(resonances.id, id), eq(resonances.groupId, groupId)));
  return row;
}

/** A resonance with its run and the leads of its model version; undefined when it is not the group's. */
export async function findResonanceContext(q: Queryable, groupId: string, id: string): Promise<ResonanceContext | undefined> {
  const [found] = await q
    .select({
      row: rowColumns,
      runKind: runs.kind,
      runWindow: runs.window,
      runCertificate: runs.certificate,
      runStatus: runs.status,
      runThresholds: runs.thresholds,
      leads: sql<unknown>`${modelVersions.document} -> 'leads'`,
    })
    .from(resonances)
    .leftJoin(runs, eq(runs.id, resonances.runId))
    .innerJoin(modelVersions, eq(modelVersions.id, resonances.modelVersionId))
    .where(and(eq(resonances.id, id), eq(resonances.groupId, groupId)));
  if (!found) return undefined;
  return {
    row: found.row,
    run:
      found.row.runId === null || found.runKind === null
        ? null
        : {
            id: found.row.runId,
            kind: found.runKind,
            window: found.runWindow ?? {},
            certificate: found.runCertificate ?? null,
            status: found.runStatus ?? '',
            thresholds: found.runThresholds,
          },
    leads: found.leads,
  };
}

/** The other poles of the same run, by energy (to draw the resonance among its neighbours). */
export async function otherPolesOfRun(
  q: Queryable,
  groupId: string,
  runId: string | null,
  exceptId: string,
): Promise<{ id: string; energy: number; width: number }[]> {
  if (runId === null) return [];
  return q
    .select({ id: resonances.id, energy: resonances.energy, width: resonances.width })
    .from(resonances)
    .where(and(eq(resonances.groupId, groupId), eq(resonances.runId, runId), ne(resonances.id, exceptId)))
    .orderBy(asc(resonances.energy), asc(resonances.id));
}

/** Sets tags and/or notes; undefined when the resonance is not the group's. */
export async function updateResonanceLabels(
  q: Queryable,
  groupId: string,
  id: string,
  change: { tags?: string[]; notes?: string },
): Promise<ResonanceRecord | undefined> {
  const [row] = await q
    .update(resonances)
    .set(change)
    .where(and(eq(resonances.id, id), eq(resonances.groupId, groupId)))
    .returning(rowColumns);
  return row;
}

/**
 * The stored mode image of one of the group's resonances. When the caller already holds
 * `knownEtag`, the PNG bytes are not read (the answer is a 304 anyway).
 */
export async function findModeImage(
  q: Queryable,
  groupId: string,
  id: string,
  size: 'thumb' | 'full',
  knownEtags: string[],
): Promise<{ etag: string; png: Buffer | null } | undefined> {
  const known = knownEtags.length > 0 ? sql`${modeImages.etag} in (${sql.join(knownEtags.map((e) => sql`${e}`), sql`, `)})` : sql`false`;
  const [row] = await q
    .select({
      etag: modeImages.etag,
      png: sql<Buffer | null>`case when ${known} then null else ${modeImages.png} end`,
    })
    .from(modeImages)
    .innerJoin(resonances, eq(resonances.id, modeImages.resonanceId))
    .where(and(eq(modeImages.resonanceId, id), eq(resonances.groupId, groupId), eq(modeImages.size, size)));
  return row;
}
