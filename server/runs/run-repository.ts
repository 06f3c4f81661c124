import type { RunKind } from '../../shared/api/enums.js';
import { and, asc, count, desc, eq, inArray, sql, type SQL } from 'drizzle-orm';
import type { Queryable } from '../db/client.js';
import { resonances } from '../db/schema/catalogue.js';
import { cavityModels, modelVersions } from '../db/schema/models.js';
import { runs, spectra, type RunStatus } from '../db/schema/runs.js';
import { users } from '../db/schema/users.js';

export interface RunListFilter {
  status?: RunStatus;
  kind?: RunKind;
  modelId?: string;
  page: number;
  pageSize: number;
}

const runColumns = {
  run: runs,
  modelId: modelVersions.modelId,
  modelName: cavityModels.name,
  modelVersion: modelVersions.version,
  createdByName: users.name,
};

function runQuery(q: Queryable, where: SQL | undefined) {
  return q
    .select(runColumns)
    .from(runs)
    .innerJoin(modelVersions, eq(modelVersions.id, runs.modelVersionId))
    .innerJoin(cavityModels, eq(cavityModels.id, modelVersions.modelId))
    .leftJoin(users, eq(users.id, runs.createdBy))
    .where(where);
}

export async function listRuns(q: Queryable, groupId: string, f: RunListFilter) {
  const where = and(
    eq(runs.groupId, groupId),
    f.status ? eq(runs.status, f.status) : undefined,
    f.kind ? eq(runs.kind, f.kind) : undefined,
    f.modelId ? eq(modelVersions.modelId, f.modelId) : undefined,
  );
  const rows = await runQuery(q, where)
    .orderBy(desc(runs.createdAt))
    .limit(f.pageSize)
    .offset((f.page - 1) * f.pageSize);
  const [{ total }] = await q.select({ total: count() }).from(runs).innerJoin(modelVersions, eq(modelVersions.id, runs.modelVersionId)).where(where);
  return { rows, total };
}

/**
 * The pole searches of one model version, newest first, that are queued, running or completed
 * with their energy window overlapping [emin, emax]: their poles there are (or will be) in the
 * catalogue already, and a new search would file them again.
 */
export async function overlappingPoleSearches(q: Queryable, groupId: string, modelVersionId: string, emin: number, emax: number) {
  return q
    .select({ id: runs.id, status: runs.status, window: runs.window, createdAt: runs.createdAt, resonanceCount: runs.resonanceCount })
    .from(runs)
    .where(
      and(
        eq(runs.groupId, groupId),
        eq(runs.modelVersionId, modelVersionId),
        eq(runs.kind, 'pole-search'),
        inArray(runs.status, ['queued', 'running', 'completed']),
        sql`(${runs.window} ->> 'emin')::float8 < ${emax}`,
        sql`(${runs.window} ->> 'emax')::float8 > ${emin}`,
      ),
    )
    .orderBy(desc(runs.createdAt));
}

export async function findRun(q: Queryable, groupId: string, runId: string) {
  const [row] = await runQuery(q, and(eq(runs.groupId, groupId), eq(runs.id, runId)));
  return row ?? null;
}

export async function runResonances(q: Queryable, groupId: string, runId: string) {
  return q
    .select()
    .from(resonances)
    .where(and(eq(resonances.groupId, groupId), eq(resonances.runId, runId)))
    .orderBy(asc(resonances.energy));
}

export async function runSpectrum(q: Queryable, groupId: string, runId: string) {
  const [row] = await q
    .select({
      energies: spectra.energies,
      pairs: spectra.pairs,
      transmission: spectra.transmission,
      residual: spectra.residual,
      reflection: spectra.reflection,
    })
    .from(spectra)
    .where(and(eq(spectra.groupId, groupId), eq(spectra.runId, runId)));
  return row ?? null;
}
