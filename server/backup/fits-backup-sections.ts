/**
 * Peak fits in the group backup: measured traces, fits (of a trace or of a run's
 * spectrum) and the fitted resonances they filed in the catalogue. Computed
 * resonances stay in the core `resonance` records; fitted ones are `fittedResonance`
 * records here, since they hang on a fit. Ids inside the JSON a fit keeps (its request,
 * its comparison with the nearest poles, a fitted resonance's details) are remapped.
 */
import type { FitResult } from '../../shared/engine/fit.js';
import type { PoleComparison } from '../fits/fit-comparison.js';
import { asc, eq, and } from 'drizzle-orm';
import { z } from 'zod';
import { resonances } from '../db/schema/catalogue.js';
import { measuredTraces, peakFits } from '../db/schema/fits.js';
import { authorEmails } from './author-emails.js';
import type { BackupSection, RestoredIds } from './backup-section.js';
import { remapJsonIds } from './remap-json-ids.js';
import { geometryFields, validityFields } from './backup-format.js';

const id = z.uuid();
const when = z.iso.datetime({ offset: true });
const email = z.string().max(320).nullable();
const num = z.number().finite();
const iso = (d: Date | null) => (d ? d.toISOString() : null);
const date = (s: string | null) => (s ? new Date(s) : null);

const measuredTraceRecord = z.object({
  type: z.literal('measuredTrace'),
  id,
  deviceName: z.string().max(200),
  fileName: z.string().max(500),
  temperatureMK: num,
  notes: z.string().max(20_000),
  modelId: id.nullable(),
  content: z.string(),
  columns: z.array(z.string()),
  selection: z.record(z.string(), z.unknown()),
  energies: z.array(num),
  transmission: z.array(num),
  createdBy: email,
  createdAt: when,
});

const peakFitRecord = z
  .object({
    type: z.literal('peakFit'),
    id,
    runId: id.nullable(),
    traceId: id.nullable(),
    modelId: id.nullable(),
    modelVersionId: id.nullable(),
    request: z.record(z.string(), z.unknown()),
    status: z.enum(['queued', 'running', 'completed', 'failed']),
    progressFraction: num.nullable(),
    attempt: z.number().int().nonnegative(),
    error: z.string().nullable(),
    result: z.unknown(),
    comparison: z.unknown(),
    createdBy: email,
    createdAt: when,
    finishedAt: when.nullable(),
  })
  .refine((f) => (f.runId === null) !== (f.traceId === null), { path: ['traceId'], message: 'a fit has exactly one source: a runId or a traceId' });

const fittedResonanceRecord = z.object({
  type: z.literal('fittedResonance'),
  id,
  fitId: id,
  runId: id.nullable(),
  modelId: id,
  modelVersionId: id,
  energy: num,
  width: num.nonnegative(),
  lifetimePs: num.nullable(),
  quality: num.nullable(),
  partialWidths: z.array(z.object({ lead: z.string(), width: num })),
  bound: z.boolean(),
  nearThreshold: z.boolean(),
  overlapping: z.boolean(),
  details: z.record(z.string(), z.unknown()),
  tags: z.array(z.string().max(100)).max(100),
  notes: z.string().max(20_000),
  modelName: z.string(),
  modelVersion: z.number().int().min(1),
  family: z.string(),
  material: z.string(),
  fieldT: num,
  spacingNm: num,
  widthNm: num.nullable(),
  heightNm: num.nullable(),
  radiusNm: num.nullable(),
  lengthNm: num.nullable(),
  ...geometryFields,
  ...validityFields,
  createdAt: when,
});

type TraceRecord = z.infer<typeof measuredTraceRecord>;
type FitRecord = z.infer<typeof peakFitRecord>;
type FittedRecord = z.infer<typeof fittedResonanceRecord>;

async function insertAll<T>(rows: T[], size: number, insert: (slice: T[]) => Promise<unknown>) {
  for (let k = 0; k < rows.length; k += size) await insert(rows.slice(k, k + size));
}
const person = (ids: RestoredIds, e: string | null) => (e ? (ids.people.get(e.toLowerCase()) ?? null) : null);
const mapped = (m: Map<string, string>, old: string | null) => (old ? (m.get(old) ?? null) : null);

const traceSection: BackupSection<TraceRecord> = {
  type: 'measuredTrace',
  schema: measuredTraceRecord,
  async *records(q, groupId) {
    const emailOf = authorEmails(q);
    const rows = await q
      .select({ id: measuredTraces.id })
      .from(measuredTraces)
      .where(eq(measuredTraces.groupId, groupId))
      .orderBy(asc(measuredTraces.createdAt), asc(measuredTraces.fileName));
    // One trace at a time: a trace keeps its whole file.
    for (const { id: traceId } of rows) {
      const [t] = await q.select().from(measuredTraces).where(eq(measuredTraces.id, traceId));
      if (!t) continue;
      yield {
        type: 'measuredTrace',
        id: t.id,
        deviceName: t.deviceName,
        fileName: t.fileName,
        temperatureMK: t.temperatureMK,
        notes: t.notes,
        modelId: t.modelId,
        content: t.content,
        columns: t.columns,
        selection: t.selection,
        energies: t.energies,
        transmission: t.transmission,
        createdBy: await emailOf(t.createdBy),
        createdAt: iso(t.createdAt)!,
      };
    }
  },
  label: (t) => `measuredTrace ${t.id}`,
  provides: (t) => ({ kind: 'traces', id: t.id }),
  references: (t) => [{ field: 'modelId', kind: 'models', id: t.modelId }],
  async restore(tx, groupId, records, ids) {
    await insertAll(records, 20, (slice) =>
      tx.insert(measuredTraces).values(
        slice.map(({ type: _t, id: old, modelId, createdBy, createdAt, selection, ...t }) => ({
          ...t,
          id: ids.traces.get(old)!,
          groupId,
          modelId: mapped(ids.models, modelId),
          selection,
          createdBy: person(ids, createdBy),
          createdAt: date(createdAt)!,
        })),
      ),
    );
  },
};

const fitSection: BackupSection<FitRecord> = {
  type: 'peakFit',
  schema: peakFitRecord as unknown as z.ZodType<FitRecord>,
  async *records(q, groupId) {
    const emailOf = authorEmails(q);
    const rows = await q.select().from(peakFits).where(eq(peakFits.groupId, groupId)).orderBy(asc(peakFits.createdAt), asc(peakFits.finishedAt));
    for (const f of rows) {
      yield {
        type: 'peakFit',
        id: f.id,
        runId: f.runId,
        traceId: f.traceId,
        modelId: f.modelId,
        modelVersionId: f.modelVersionId,
        request: f.request,
        status: f.status,
        progressFraction: f.progressFraction,
        attempt: f.attempt,
        error: f.error,
        result: f.result,
        comparison: f.comparison,
        createdBy: await emailOf(f.createdBy),
        createdAt: iso(f.createdAt)!,
        finishedAt: iso(f.finishedAt),
      };
    }
  },
  label: (f) => `peakFit ${f.id}`,
  provides: (f) => ({ kind: 'fits', id: f.id }),
  references: (f) => [
    { field: 'runId', kind: 'runs', id: f.runId },
    { field: 'traceId', kind: 'traces', id: f.traceId },
    { field: 'modelId', kind: 'models', id: f.modelId },
    { field: 'modelVersionId', kind: 'modelVersions', id: f.modelVersionId },
  ],
  async restore(tx, groupId, records, ids) {
    await insertAll(records, 50, (slice) =>
      tx.insert(peakFits).values(
        slice.map((f) => {
          // Its job belonged to the other server: an unfinished fit comes back failed, to be fitted again.
          const unfinished = f.status === 'queued' || f.status === 'running';
          return {
            id: ids.fits.get(f.id)!,
            groupId,
            runId: mapped(ids.runs, f.runId),
            traceId: mapped(ids.traces, f.traceId),
            modelId: mapped(ids.models, f.modelId),
            modelVersionId: mapped(ids.modelVersions, f.modelVersionId),
            request: remapJsonIds(f.request, ids),
            status: unfinished ? ('failed' as const) : f.status,
            progressFraction: f.progressFraction,
            attempt: f.attempt,
            error: unfinished ? 'This fit was unfinished when the group was backed up; fit again.' : f.error,
            result: (f.result ?? null) as FitResult | null,
            comparison: (f.comparison === undefined ? null : remapJsonIds(f.comparison, ids)) as PoleComparison[] | null,
            createdBy: person(ids, f.createdBy),
            createdAt: date(f.createdAt)!,
            finishedAt: unfinished ? new Date() : date(f.finishedAt),
          };
        }),
      ),
    );
  },
};

const fittedSection: BackupSection<FittedRecord> = {
  type: 'fittedResonance',
  schema: fittedResonanceRecord,
  async *records(q, groupId) {
    const rows = await q
      .select({ r: resonances })
      .from(resonances)
      .innerJoin(peakFits, eq(peakFits.id, resonances.fitId))
      .where(and(eq(resonances.groupId, groupId), eq(resonances.source, 'fitted')))
      .orderBy(asc(peakFits.createdAt), asc(peakFits.finishedAt), asc(resonances.energy));
    for (const { r } of rows) {
      const { groupId: _g, searchText: _s, source: _src, idx: _i, petermann: _p, residual: _res, fitId, createdAt, ...rest } = r;
      yield { type: 'fittedResonance', ...rest, fitId: fitId!, createdAt: iso(createdAt)! };
    }
  },
  label: (r) => `fittedResonance ${r.id}`,
  provides: (r) => ({ kind: 'resonances', id: r.id }),
  references: (r) => [
    { field: 'fitId', kind: 'fits', id: r.fitId },
    { field: 'runId', kind: 'runs', id: r.runId },
    { field: 'modelId', kind: 'models', id: r.modelId },
    { field: 'modelVersionId', kind: 'modelVersions', id: r.modelVersionId },
  ],
  async restore(tx, groupId, records, ids) {
    await insertAll(records, 500, (slice) =>
      tx.insert(resonances).values(
        slice.map(({ type: _t, id: old, fitId, runId, modelId, modelVersionId, details, createdAt, ...r }) => ({
          ...r,
          id: ids.resonances.get(old)!,
          groupId,
          source: 'fitted' as const,
          fitId: ids.fits.get(fitId)!,
          runId: mapped(ids.runs, runId),
          modelId: ids.models.get(modelId)!,
          modelVersionId: ids.modelVersions.get(modelVersionId)!,
          idx: null,
          petermann: null,
          residual: null,
          details: remapJsonIds(details, ids),
          createdAt: date(createdAt)!,
        })),
      ),
    );
  },
};

export const fitsBackupSections = [traceSection, fitSection, fittedSection];
