import { and, asc, count, eq, ne, sql, type Column } from 'drizzle-orm';
import type { Queryable, Tx } from '../db/client.js';
import { modeImages, resonances } from '../db/schema/catalogue.js';
import { modelVersions } from '../db/schema/models.js';
import { runs } from '../db/schema/runs.js';
import { catalogueConditions, catalogueOrder, type CatalogueFilter, type CataloguePageRequest } from './catalogue-query.js';

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

/**
 * One page of a search and the number of matching rows. The count and the page are two
 * queries on two pool connections at once: with the (group_id, …) indexes both stay in the
 * milliseconds, while `count(*) over ()` would make PostgreSQL read and sort every match
 * just to return 25 (see scripts/bench-catalogue.ts for the figures).
 */
export async function searchResonances(
  q: Queryable,
  groupId: string,
  req: CataloguePageRequest,
): Promise<{ rows: ResonanceRecord[]; total: number }> {
  const where = catalogueConditions(groupId, req);
  const [rows, [counted]] = await Promise.all([
    q
      .select(rowColumns)
      .from(resonances)
      .where(where)
      .orderBy(...catalogueOrder(req.sort, req.dir))
      .limit(req.pageSize)
      .offset((req.page - 1) * req.pageSize),
    q.select({ total: count() }).from(resonances).where(where),
  ]);
  return { rows, total: counted?.total ?? 0 };
}

/** Builds a record from a raw driver row (snake_case keys), using each column's own decoder. */
function fromDriverRow(raw: Record<string, unknown>): ResonanceRecord {
  const out: Record<string, unknown> = {};
  for (const [key, col] of Object.entries(rowColumns) as [string, Column][]) {
    const value = raw[col.name];
    out[key] = value === null || value === undefined ? null : col.mapFromDriverValue(value);
  }
  return out as unknown as ResonanceRecord;
}

/**
 * Every row matching the filter, in the filter's sort order, handed out in batches of
 * `batchSize` from a server-side cursor, so an export of 100,000 rows holds one batch in
 * memory. Runs in a read-only repeatable-read transaction (one consistent snapshot);
 * `onBatch` returning false stops early (the client went away).
 */
export async function streamResonances(
  tx: Tx,
  groupId: string,
  filter: CatalogueFilter,
  batchSize: number,
  onBatch: (rows: ResonanceRecord[]) => Promise<boolean>,
): Promise<number> {
  const query = tx
    .select(rowColumns)
    .from(resonances)
    .where(catalogueConditions(groupId, filter))
    .orderBy(...catalogueOrder(filter.sort, filter.dir));
  await tx.execute(sql`declare catalogue_export no scroll cursor for ${query}`);
  let sent = 0;
  for (;;) {
    const result = await tx.execute(sql.raw(`fetch ${Math.trunc(batchSize)} from catalogue_export`));
    const rows = (result.rows as Record<string, unknown>[]).map(fromDriverRow);
    if (rows.length === 0) break;
    sent += rows.length;
    if (!(await onBatch(rows))) break;
    if (rows.length < batchSize) break;
  }
  await tx.execute(sql`close catalogue_export`);
  return sent;
}

export interface ResonanceContext {
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
