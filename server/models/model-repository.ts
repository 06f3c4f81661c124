import { and, count, desc, eq, ilike, sql } from 'drizzle-orm';
import type { Queryable } from '../db/client.js';
import { cavityModels, modelVersions } from '../db/schema/models.js';
import { runs } from '../db/schema/runs.js';
import { users } from '../db/schema/users.js';
import type { CheckedModel } from './model-figures.js';

export interface ModelListFilter {
  search?: string;
  family?: string;
  page: number;
  pageSize: number;
}

const summaryColumns = {
  id: cavityModels.id,
  name: cavityModels.name,
  latestVersion: cavityModels.latestVersion,
  updatedAt: cavityModels.updatedAt,
  createdById: cavityModels.createdBy,
  createdByName: users.name,
  family: modelVersions.family,
  material: modelVersions.material,
  physics: modelVersions.physics,
  spacingNm: modelVersions.spacingNm,
  fieldT: modelVersions.fieldT,
  siteCount: modelVersions.siteCount,
  leadCount: modelVersions.leadCount,
  keyDimensions: modelVersions.keyDimensions,
  versionId: modelVersions.id,
};

/** The group's models with the figures of their latest version, newest first. */
export async function listModels(q: Queryable, groupId: string, f: ModelListFilter) {
  const where = and(
    eq(cavityModels.groupId, groupId),
    f.search ? ilike(cavityModels.name, `%${f.search.replace(/[%_\\]/g, (c) => '\\' + c)}%`) : undefined,
    f.family ? eq(modelVersions.family, f.family) : undefined,
  );
  const base = q
    .select(summaryColumns)
    .from(cavityModels)
    .innerJoin(modelVersions, and(eq(modelVersions.modelId, cavityModels.id), eq(modelVersions.version, cavityModels.latestVersion)))
    .leftJoin(users, eq(users.id, cavityModels.createdBy))
    .where(where);
  const rows = await base
    .orderBy(desc(cavityModels.updatedAt))
    .limit(f.pageSize)
    .offset((f.page - 1) * f.pageSize);
  const [{ total }] = await q
    .select({ total: count() })
    .from(cavityModels)
    .innerJoin(modelVersions, and(eq(modelVersions.modelId, cavityModels.id), eq(modelVersions.version, cavityModels.latestVersion)))
    .where(where);
  return { rows, total };
}

export async function findModel(q: Queryable, groupId: string, modelId: string) {
  const [row] = await q
    .select(summaryColumns)
    .from(cavityModels)
    .innerJoin(modelVersions, and(eq(modelVersions.modelId, cavityModels.id), eq(modelVersions.version, cavityModels.latestVersion)))
    .leftJoin(users, eq(users.id, cavityModels.createdBy))
    .where(and(eq(cavityModels.groupId, groupId), eq(cavityModels.id, modelId)));
  return row ?? null;
}

/** One version of a group's model (the latest when version is omitted). */
export async function findVersion(q: Queryable, groupId: string, modelId: string, version?: number) {
  const [row] = await q
    .select({
      id: modelVersions.id,
      modelId: modelVersions.modelId,
      modelName: cavityModels.name,
      version: modelVersions.version,
      document: modelVersions.document,
      createdAt: modelVersions.createdAt,
      family: modelVersions.family,
      material: modelVersions.material,
      fieldT: modelVersions.fieldT,
      spacingNm: modelVersions.spacingNm,
      siteCount: modelVersions.siteCount,
      widthNm: modelVersions.widthNm,
      heightNm: modelVersions.heightNm,
      radiusNm: modelVersions.radiusNm,
      lengthNm: modelVersions.lengthNm,
      keyDimensions: modelVersions.keyDimensions,
      derived: modelVersions.derived,
    })
    .from(modelVersions)
    .innerJoin(cavityModels, eq(cavityModels.id, modelVersions.modelId))
    .where(
      and(
        eq(modelVersions.groupId, groupId),
        eq(modelVersions.modelId, modelId),
        eq(modelVersions.version, version ?? sql<number>`${cavityModels.latestVersion}`),
      ),
    );
  return row ?? null;
}

export async function listVersions(q: Queryable, groupId: string, modelId: string) {
  return q
    .select({
      version: modelVersions.version,
      createdAt: modelVersions.createdAt,
      createdById: modelVersions.createdBy,
      createdByName: users.name,
      usedByRuns: sql<number>`(select count(*)::int from ${runs} where ${runs.modelVersionId} = ${modelVersions.id})`,
    })
    .from(modelVersions)
    .leftJoin(users, eq(users.id, modelVersions.createdBy))
    .where(and(eq(modelVersions.groupId, groupId), eq(modelVersions.modelId, modelId)))
    .orderBy(desc(modelVersions.version));
}

export async function insertModel(q: Queryable, groupId: string, userId: string, name: string, referenceKey: string | null) {
  const [row] = await q.insert(cavityModels).values({ groupId, name, createdBy: userId, referenceKey, latestVersion: 1 }).returning({ id: cavityModels.id });
  return row.id;
}

export async function insertVersion(
  q: Queryable,
  groupId: string,
  modelId: string,
  version: number,
  userId: string,
  checked: Pick<CheckedModel, 'model' | 'columns' | 'derived' | 'outline'>,
) {
  const [row] = await q
    .insert(modelVersions)
    .values({ groupId, modelId, version, createdBy: userId, document: checked.model, derived: checked.derived, outline: checked.outline, ...checked.columns })
    .returning({ id: modelVersions.id });
  await q.update(cavityModels).set({ latestVersion: version, updatedAt: new Date() }).where(eq(cavityModels.id, modelId));
  return row.id;
}

/** Locks the model row so two concurrent edits cannot both write version n+1. */
export async function lockModel(q: Queryable, groupId: string, modelId: string) {
  const [row] = await q
    .select({ id: cavityModels.id, latestVersion: cavityModels.latestVersion, name: cavityModels.name })
    .from(cavityModels)
    .where(and(eq(cavityModels.groupId, groupId), eq(cavityModels.id, modelId)))
    .for('update');
  return row ?? null;
}

export async function renameModel(q: Queryable, modelId: string, name: string) {
  await q.update(cavityModels).set({ name }).where(eq(cavityModels.id, modelId));
}
