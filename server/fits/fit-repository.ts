import type { FitResult } from '../../shared/engine/fit.js';
import { and, asc, desc, eq, sql } from 'drizzle-orm';
import type { Queryable } from '../db/client.js';
import { resonances } from '../db/schema/catalogue.js';
import { measuredTraces, peakFits } from '../db/schema/fits.js';
import { cavityModels, modelVersions } from '../db/schema/models.js';
import { runs, spectra } from '../db/schema/runs.js';
import { users } from '../db/schema/users.js';
import type { CandidatePole } from './fit-comparison.js';

const traceSummaryColumns = {
  id: measuredTraces.id,
  deviceName: measuredTraces.deviceName,
  fileName: measuredTraces.fileName,
  temperatureMK: measuredTraces.temperatureMK,
  notes: measuredTraces.notes,
  modelId: measuredTraces.modelId,
  modelName: cavityModels.name,
  columns: measuredTraces.columns,
  selection: measuredTraces.selection,
  points: sql<number>`jsonb_array_length(${measuredTraces.energies})`.mapWith(Number),
  createdBy: users.name,
  createdAt: measuredTraces.createdAt,
};

export async function listTraces(q: Queryable, groupId: string) {
  return q
    .select(traceSummaryColumns)
    .from(measuredTraces)
    .leftJoin(cavityModels, eq(cavityModels.id, measuredTraces.modelId))
    .leftJoin(users, eq(users.id, measuredTraces.createdBy))
    .where(eq(measuredTraces.groupId, groupId))
    .orderBy(desc(measuredTraces.createdAt), asc(measuredTraces.id))
    .limit(500);
}

export async function findTrace(q: Queryable, groupId: string, id: string) {
  const [row] = await q
    .select({ ...traceSummaryColumns, energies: measuredTraces.energies, transmission: measuredTraces.transmission })
    .from(measuredTraces)
    .leftJoin(cavityModels, eq(cavityModels.id, measuredTraces.modelId))
    .leftJoin(users, eq(users.id, measuredTraces.createdBy))
    .where(and(eq(measuredTraces.groupId, groupId), eq(measuredTraces.id, id)));
  return row;
}

export async function modelOfGroup(q: Queryable, groupId: string, modelId: string) {
  const [row] = await q
    .select({ id: cavityModels.id, name: cavityModels.name, latestVersion: cavityModels.latestVersion })
    .from(cavityModels)
    .where(and(eq(cavityModels.groupId, groupId), eq(cavityModels.id, modelId)));
  return row;
}

export async function runWithSpectrum(q: Queryable, groupId: string, runId: string) {
  const [row] = await q
    .select({
      id: runs.id,
      status: runs.status,
      modelVersionId: runs.modelVersionId,
      modelId: modelVersions.modelId,
      energies: spectra.energies,
      pairs: spectra.pairs,
      transmission: spectra.transmission,
    })
    .from(runs)
    .innerJoin(modelVersions, eq(modelVersions.id, runs.modelVersionId))
    .leftJoin(spectra, eq(spectra.runId, runs.id))
    .where(and(eq(runs.groupId, groupId), eq(runs.id, runId)));
  return row;
}

const fitColumns = {
  id: peakFits.id,
  runId: peakFits.runId,
  traceId: peakFits.traceId,
  modelId: peakFits.modelId,
  modelName: cavityModels.name,
  modelVersionId: peakFits.modelVersionId,
  request: peakFits.request,
  status: peakFits.status,
  progressFraction: peakFits.progressFraction,
  attempt: peakFits.attempt,
  error: peakFits.error,
  comparison: peakFits.comparison,
  deviceName: measuredTraces.deviceName,
  createdBy: users.name,
  createdAt: peakFits.createdAt,
  finishedAt: peakFits.finishedAt,
};

export async function listFits(q: Queryable, groupId: string) {
  return q
    .select({
      ...fitColumns,
      peaks: sql<FitResult['peaks'] | null>`${peakFits.result} -> 'peaks'`,
      warnings: sql<FitResult['warnings'] | null>`${peakFits.result} -> 'warnings'`,
    })
    .from(peakFits)
    .leftJoin(cavityModels, eq(cavityModels.id, peakFits.modelId))
    .leftJoin(measuredTraces, eq(measuredTraces.id, peakFits.traceId))
    .leftJoin(users, eq(users.id, peakFits.createdBy))
    .where(eq(peakFits.groupId, groupId))
    .orderBy(desc(peakFits.createdAt), asc(peakFits.id))
    .limit(500);
}

export async function findFit(q: Queryable, groupId: string, id: string) {
  const [row] = await q
    .select({ ...fitColumns, result: peakFits.result })
    .from(peakFits)
    .leftJoin(cavityModels, eq(cavityModels.id, peakFits.modelId))
    .leftJoin(measuredTraces, eq(measuredTraces.id, peakFits.traceId))
    .leftJoin(users, eq(users.id, peakFits.createdBy))
    .where(and(eq(peakFits.groupId, groupId), eq(peakFits.id, id)));
  return row;
}

/** Fitted resonances of a fit (catalogue ids), by energy. */
export async function catalogueRowsOfFit(q: Queryable, fitId: string) {
  return q.select({ id: resonances.id, energy: resonances.energy }).from(resonances).where(eq(resonances.fitId, fitId)).orderBy(asc(resonances.energy));
}

/**
 * Computed, non-bound poles of a model (any version, or one version), nearest in energy
 * first, at most 200 within `window` meV of `energy`.
 */
export async function polesNear(
  q: Queryable,
  groupId: string,
  modelId: string,
  energy: number,
  window: number,
  modelVersionId?: string,
): Promise<CandidatePole[]> {
  const conds = [
    eq(resonances.groupId, groupId),
    eq(resonances.modelId, modelId),
    eq(resonances.source, 'computed'),
    eq(resonances.bound, false),
    sql`${resonances.energy} between ${energy - window} and ${energy + window}`,
  ];
  if (modelVersionId) conds.push(eq(resonances.modelVersionId, modelVersionId));
  return q
    .select({
      id: resonances.id,
      energy: resonances.energy,
      width: resonances.width,
      petermann: resonances.petermann,
      overlapping: resonances.overlapping,
      runId: resonances.runId,
      modelVersion: resonances.modelVersion,
    })
    .from(resonances)
    .where(and(...conds))
    .orderBy(sql`abs(${resonances.energy} - ${energy})`)
    .limit(200);
}

export async function modelVersionColumns(q: Queryable, modelVersionId: string) {
  const [mv] = await q
    .select({
      id: modelVersions.id,
      modelId: modelVersions.modelId,
      name: cavityModels.name,
      version: modelVersions.version,
      document: modelVersions.document,
      family: modelVersions.family,
      physics: modelVersions.physics,
      hoppingMeV: modelVersions.hoppingMeV,
      material: modelVersions.material,
      fieldT: modelVersions.fieldT,
      spacingNm: modelVersions.spacingNm,
      widthNm: modelVersions.widthNm,
      heightNm: modelVersions.heightNm,
      radiusNm: modelVersions.radiusNm,
      lengthNm: modelVersions.lengthNm,
      rxNm: modelVersions.rxNm,
      ryNm: modelVersions.ryNm,
      innerNm: modelVersions.innerNm,
      outerNm: modelVersions.outerNm,
      areaNm2: modelVersions.areaNm2,
    })
    .from(modelVersions)
    .innerJoin(cavityModels, eq(cavityModels.id, modelVersions.modelId))
    .where(eq(modelVersions.id, modelVersionId));
  return mv;
}

export async function latestVersionId(q: Queryable, modelId: string): Promise<string | undefined> {
  const [row] = await q
    .select({ id: modelVersions.id })
    .from(modelVersions)
    .where(eq(modelVersions.modelId, modelId))
    .orderBy(desc(modelVersions.version))
    .limit(1);
  return row?.id;
}
