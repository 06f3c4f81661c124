/**
 * Peak fits and measured traces: upload (parse, check, store only what parsed cleanly),
 * fit requests (small ones computed during the request in a worker thread, larger ones
 * queued), comparison with the nearest computed pole, and the fitted resonances filed in
 * the catalogue in the same transaction as the fit's result.
 */
import { and, eq, sql } from 'drizzle-orm';
import { resonancePhysicsOfDocument, resonanceValidity, validityLimitOf, type ResonancePhysics } from '../../shared/model/resonance-validity.js';
import { geometryOf } from '../models/model-figures.js';
import { writeAudit } from '../audit/audit-log.js';
import type { Db, Queryable } from '../db/client.js';
import { resonances } from '../db/schema/catalogue.js';
import { measuredTraces, peakFits } from '../db/schema/fits.js';
import { ApiError } from '../http/error-handler.js';
import type { FitResult } from '../../shared/engine/fit.js';
import { hasAsymmetry, isThermal, type Lineshape } from '../../shared/engine/fit-lineshapes.js';
import type { Background } from '../../shared/engine/fit-model.js';
import { parseTable, selectTrace, TraceError, type TraceSelection } from '../../shared/engine/fit-trace.js';
import { comparePeaks, type PoleComparison } from './fit-comparison.js';
import {
  catalogueRowsOfFit,
  findFit,
  findTrace,
  latestVersionId,
  listFits,
  listTraces,
  modelOfGroup,
  modelVersionColumns,
  polesNear,
  runWithSpectrum,
} from './fit-repository.js';
import { fitStore } from './fit-store.js';
import { FitThreadError, runFitInThread } from './fit-thread-runner.js';
import type { FitTask } from './fit-thread.js';

export interface FitRequest {
  source: { kind: 'run'; runId: string; pair: number; from: number; to: number } | { kind: 'trace'; traceId: string; from?: number; to?: number };
  lineshape: Lineshape;
  background: Background;
  peaks: number;
  temperatureMK?: number;
  /** The model whose poles the fit is compared with (traces; a run's own model otherwise). */
  modelId?: string;
  hints?: { energy: number; width?: number }[];
}

interface TraceFields {
  deviceName: string;
  temperatureMK: number;
  notes: string;
  modelId?: string;
  selection: TraceSelection;
}

/** Where large fits go (pg-boss's `peak-fit` queue in production). */
export interface FitQueue {
  enqueue(fitId: string): Promise<string>;
}

/**
 * Fits whose cost n·p²·(8 if thermal)·(2 if Fano) stays under this run during the request
 * (a few hundred ms at most, in a worker thread); larger ones go to the queue.
 */
const SMALL_FIT_COST = 400_000;

function fitCost(points: number, req: Pick<FitRequest, 'lineshape' | 'background' | 'peaks'>): number {
  const p = (req.background === 'linear' ? 2 : 1) + req.peaks * (hasAsymmetry(req.lineshape) ? 4 : 3);
  return points * p * p * (isThermal(req.lineshape) ? 8 : 1) * (hasAsymmetry(req.lineshape) ? 2 : 1);
}

function fitNotFound(): ApiError {
  return new ApiError(404, 'not_found', 'No such fit in this group.');
}

function traceRefused(err: TraceError): ApiError {
  return new ApiError(400, 'invalid_trace', `The file was refused: ${err.message}. Nothing was stored.`, [{ path: 'file', message: err.message }]);
}

/** Decodes an upload as UTF-8 text; 415 when it is not text. */
export function uploadText(buffer: Buffer, fileName: string): string {
  if (!/\.(csv|tsv|txt|dat)$/i.test(fileName))
    throw new ApiError(415, 'unsupported_media_type', `"${fileName}" is not a CSV or TSV file (expected .csv, .tsv, .txt or .dat). Nothing was stored.`);
  if (buffer.includes(0)) throw new ApiError(415, 'unsupported_media_type', `"${fileName}" is not a text file (it contains NUL bytes). Nothing was stored.`);
  try {
    return new TextDecoder('utf-8', { fatal: true }).decode(buffer);
  } catch {
    throw new ApiError(415, 'unsupported_media_type', `"${fileName}" is not UTF-8 text. Nothing was stored.`);
  }
}

interface FitInputs {
  x: number[];
  y: number[];
  modelId: string | null;
  modelVersionId: string | null;
  positionComparable: boolean;
  /** Provenance in words, for the catalogue notes. */
  origin: string;
}

export class FitService {
  constructor(
    private readonly db: Db,
    private readonly queue: FitQueue | null,
  ) {}

  // ---- traces

  preview(text: string) {
    try {
      const table = parseTable(text);
      return { columns: table.columns, hasHeader: table.hasHeader, delimiter: table.delimiter, rowCount: table.rows.length, rows: table.rows.slice(0, 12) };
    } catch (err) {
      if (err instanceof TraceError) throw traceRefused(err);
      throw err;
    }
  }

  async createTrace(groupId: string, actorId: string, fileName: string, text: string, fields: TraceFields) {
    let points: ReturnType<typeof selectTrace>;
    let columns: string[];
    try {
      const table = parseTable(text);
      columns = table.columns;
      points = selectTrace(table, fields.selection);
    } catch (err) {
      if (err instanceof TraceError) throw traceRefused(err);
      throw err;
    }
    if (fields.modelId && !(await modelOfGroup(this.db, groupId, fields.modelId)))
      throw new ApiError(400, 'validation_failed', 'No such model in this group.', [{ path: 'modelId', message: 'no such model in this group' }]);
    return this.db.transaction(async (tx) => {
      const [row] = await tx
        .insert(measuredTraces)
        .values({
          groupId,
          deviceName: fields.deviceName,
          fileName,
          temperatureMK: fields.temperatureMK,
          notes: fields.notes,
          modelId: fields.modelId ?? null,
          content: text,
          columns,
          selection: { ...fields.selection, xColumn: points.xColumn, yColumn: points.yColumn } as Record<string, unknown>,
          energies: points.x,
          transmission: points.y,
          createdBy: actorId,
        })
        .returning({ id: measuredTraces.id });
      await writeAudit(tx, {
        groupId,
        actorId,
        action: 'trace.uploaded',
        subject: `${fields.deviceName} (${fileName})`,
        details: { traceId: row.id, points: points.x.length, temperatureMK: fields.temperatureMK },
      });
      return this.trace(groupId, row.id, tx);
    });
  }

  listTraces(groupId: string) {
    return listTraces(this.db, groupId);
  }

  async trace(groupId: string, id: string, q: Queryable = this.db) {
    const row = await findTrace(q, groupId, id);
    if (!row) throw new ApiError(404, 'not_found', 'No such trace in this group.');
    return { ...row, createdAt: row.createdAt.toISOString() };
  }

  // ---- fits

  private async inputs(q: Queryable, groupId: string, req: FitRequest): Promise<FitInputs> {
    if (req.source.kind === 'run') {
      const { runId, pair, from, to } = req.source;
      const run = await runWithSpectrum(q, groupId, runId);
      if (!run) throw new ApiError(404, 'not_found', 'No such run in this group.');
      if (!run.energies || !run.transmission || !run.pairs)
        throw new ApiError(409, 'no_spectrum', 'This run has no computed spectrum yet (it is not finished, or computed none).');
      if (pair < 0 || pair >= run.pairs.length)
        throw new ApiError(400, 'validation_failed', `The run's spectrum has ${run.pairs.length} lead pairs; pair ${pair} does not exist.`, [
          { path: 'source.pair', message: 'no such lead pair' },
        ]);
      const lo = Math.min(from, to);
      const hi = Math.max(from, to);
      const x: number[] = [];
      const y: number[] = [];
      run.energies.forEach((e, i) => {
        if (e >= lo && e <= hi) {
          x.push(e);
          y.push(run.transmission![pair][i]);
        }
      });
      return {
        x,
        y,
        modelId: run.modelId,
        modelVersionId: run.modelVersionId,
        positionComparable: true,
        origin: `run ${runId.slice(0, 8)}, ${lo.toPrecision(6)}–${hi.toPrecision(6)} meV`,
      };
    }
    const trace = await findTrace(q, groupId, req.source.traceId);
    if (!trace) throw new ApiError(404, 'not_found', 'No such trace in this group.');
    const lo = req.source.from ?? -Infinity;
    const hi = req.source.to ?? Infinity;
    const x: number[] = [];
    const y: number[] = [];
    trace.energies.forEach((e, i) => {
      if (e >= Math.min(lo, hi) && e <= Math.max(lo, hi)) {
        x.push(e);
        y.push(trace.transmission[i]);
      }
    });
    const modelId = req.modelId ?? trace.modelId ?? null;
    if (modelId && !(await modelOfGroup(q, groupId, modelId)))
      throw new ApiError(400, 'validation_failed', 'No such model in this group.', [{ path: 'modelId', message: 'no such model in this group' }]);
    return {
      x,
      y,
      modelId,
      modelVersionId: null,
      positionComparable: (trace.selection as { xUnit?: string }).xUnit !== 'mV',
      origin: `trace "${trace.deviceName}" (${trace.fileName}, ${trace.temperatureMK} mK)`,
    };
  }

  private task(inputs: FitInputs, req: FitRequest): FitTask {
    return {
      x: inputs.x,
      y: inputs.y,
      options: { lineshape: req.lineshape, background: req.background, peaks: req.peaks, temperatureMK: req.temperatureMK, hints: req.hints, yUnit: 'T' },
    };
  }

  /**
   * Fits at once (201, completed) when small, otherwise queues it (202, queued). A fit the
   * data cannot carry (too few points in the range) is refused before anything is stored.
   */
  async create(groupId: string, actorId: string, req: FitRequest): Promise<{ status: number; fit: Awaited<ReturnType<FitService['detail']>> }> {
    if (isThermal(req.lineshape) && !(req.temperatureMK && req.temperatureMK > 0))
      throw new ApiError(400, 'validation_failed', 'A thermally broadened lineshape needs a temperature.', [
        { path: 'temperatureMK', message: 'required above 0 mK for a thermal lineshape' },
      ]);
    const inputs = await this.inputs(this.db, groupId, req);
    const p = (req.background === 'linear' ? 2 : 1) + req.peaks * (hasAsymmetry(req.lineshape) ? 4 : 3);
    if (inputs.x.length < p + 2)
      throw new ApiError(
        400,
        'too_few_points',
        `The chosen range holds ${inputs.x.length} points; ${p + 2} are needed for ${p} parameters. Widen the range or fit fewer peaks.`,
        [{ path: 'source', message: `${inputs.x.length} points in the range` }],
      );
    const small = fitCost(inputs.x.length, req) <= SMALL_FIT_COST || !this.queue;
    if (small) {
      let result: FitResult;
      try {
        result = await runFitInThread(this.task(inputs, req), () => {}, 60_000);
      } catch (err) {
        if (err instanceof FitThreadError && err.badInput)
          throw new ApiError(400, 'validation_failed', err.message, [{ path: 'source', message: err.message }]);
        throw err;
      }
      const id = await this.db.transaction(async (tx) => {
        const row = { id: await fitStore.create(tx, this.fitValues(groupId, actorId, req, inputs), true) };
        await writeAudit(tx, {
          groupId,
          actorId,
          action: 'fit.created',
          subject: `${req.lineshape} fit of ${inputs.origin}`,
          details: { fitId: row.id, queued: false },
        });
        await writeFitResult(tx, row.id, 1, result);
        return row.id;
      });
      return { status: 201, fit: await this.detail(groupId, id) };
    }
    const id = await this.db.transaction(async (tx) => {
      const row = { id: await fitStore.create(tx, this.fitValues(groupId, actorId, req, inputs), false) };
      await writeAudit(tx, {
        groupId,
        actorId,
        action: 'fit.created',
        subject: `${req.lineshape} fit of ${inputs.origin}`,
        details: { fitId: row.id, queued: true },
      });
      return row.id;
    });
    const jobId = await this.queue!.enqueue(id);
    await fitStore.attachJob(this.db, id, jobId);
    return { status: 202, fit: await this.detail(groupId, id) };
  }

  private fitValues(groupId: string, actorId: string, req: FitRequest, inputs: { modelId: string | null; modelVersionId: string | null }) {
    return {
      groupId,
      runId: req.source.kind === 'run' ? req.source.runId : null,
      traceId: req.source.kind === 'trace' ? req.source.traceId : null,
      modelId: inputs.modelId,
      modelVersionId: inputs.modelVersionId,
      request: req as unknown as Record<string, unknown>,
      createdBy: actorId,
    };
  }

  async list(groupId: string) {
    const rows = await listFits(this.db, groupId);
    return rows.map((r) => ({ ...r, createdAt: r.createdAt.toISOString(), finishedAt: r.finishedAt?.toISOString() ?? null }));
  }

  async detail(groupId: string, id: string) {
    const row = await findFit(this.db, groupId, id);
    if (!row) throw fitNotFound();
    const catalogue = await catalogueRowsOfFit(this.db, id);
    return { ...row, createdAt: row.createdAt.toISOString(), finishedAt: row.finishedAt?.toISOString() ?? null, catalogueIds: catalogue.map((c) => c.id) };
  }

  /** The fit's state for its event stream: small, read on every change. */
  async progress(groupId: string, id: string) {
    const [row] = await this.db
      .select({ id: peakFits.id, status: peakFits.status, progressFraction: peakFits.progressFraction, attempt: peakFits.attempt, error: peakFits.error })
      .from(peakFits)
      .where(and(eq(peakFits.id, id), eq(peakFits.groupId, groupId)));
    if (!row) throw fitNotFound();
    return row;
  }

  /** The inputs of a queued fit, for the worker. */
  async taskOf(fitId: string, groupId: string, request: FitRequest): Promise<FitTask> {
    return this.task(await this.inputs(this.db, groupId, request), request);
  }
}

/**
 * Writes a fit's result, its comparison with the nearest computed poles and its fitted
 * resonances in the catalogue, in the caller's transaction, only while the fit's attempt
 * is still `attempt` (a retried job writes once). Earlier catalogue rows of the fit are
 * replaced. Returns false when the attempt was stale.
 */
export async function writeFitResult(tx: Queryable, fitId: string, attempt: number, result: FitResult): Promise<boolean> {
  const fit = await fitStore.lockAttempt(tx, fitId, attempt);
  if (!fit) return false;
  const req = fit.request as unknown as FitRequest;
  let positionComparable = true;
  let origin = '';
  if (fit.traceId) {
    const [trace] = await tx
      .select({
        selection: measuredTraces.selection,
        deviceName: measuredTraces.deviceName,
        fileName: measuredTraces.fileName,
        temperatureMK: measuredTraces.temperatureMK,
      })
      .from(measuredTraces)
      .where(eq(measuredTraces.id, fit.traceId));
    positionComparable = (trace?.selection as { xUnit?: string } | undefined)?.xUnit !== 'mV';
    origin = trace ? `trace "${trace.deviceName}" (${trace.fileName}, ${trace.temperatureMK} mK)` : 'a trace';
  } else if (req.source.kind === 'run') {
    origin = `run ${fit.runId?.slice(0, 8)}, ${Math.min(req.source.from, req.source.to).toPrecision(6)}–${Math.max(req.source.from, req.source.to).toPrecision(6)} meV`;
  }
  let comparison: PoleComparison[] = [];
  let versionId = fit.modelVersionId;
  if (fit.modelId && result.peaks.length > 0) {
    const energies = result.peaks.map((p) => p.energy);
    const centre = (Math.min(...energies) + Math.max(...energies)) / 2;
    const span = Math.max(...result.curve.x) - Math.min(...result.curve.x);
    const window = positionComparable ? Math.max(2, 10 * span) : 1e9;
    const poles = await polesNear(tx, fit.groupId, fit.modelId, centre, window, fit.runId ? (fit.modelVersionId ?? undefined) : undefined);
    comparison = comparePeaks(result.peaks, poles, positionComparable);
    if (!versionId) {
      const nearest = comparison.find((c) => c.pole)?.pole;
      versionId = nearest?.runId ? ((await versionOfRun(tx, nearest.runId)) ?? null) : null;
      versionId ??= (await latestVersionId(tx, fit.modelId)) ?? null;
    }
  }
  await fitStore.complete(tx, fitId, attempt, { result, comparison, modelVersionId: versionId });
  await tx.delete(resonances).where(and(eq(resonances.fitId, fitId), eq(resonances.source, 'fitted')));
  if (!versionId) return true;
  const mv = await modelVersionColumns(tx, versionId);
  if (!mv) return true;
  const physics = resonancePhysicsOfDocument(mv.document, { physics: mv.physics, hopping: mv.hoppingMeV });
  const shapeWords: Record<Lineshape, string> = {
    bw: 'Breit–Wigner',
    fano: 'Fano',
    thermal: 'thermally broadened Breit–Wigner',
    'thermal-fano': 'thermally broadened Fano',
  };
  for (let k = 0; k < result.peaks.length; k++) {
    const pk = result.peaks[k];
    const cmp = comparison[k];
    const overlapping =
      result.warnings.some((w) => w.code === 'overlapping_peaks') || Boolean(cmp?.pole && (cmp.pole.overlapping || (cmp.pole.petermann ?? 1) > 1.2));
    await tx.insert(resonances).values({
      groupId: fit.groupId,
      runId: fit.runId,
      source: 'fitted',
      fitId,
      modelId: mv.modelId,
      modelVersionId: mv.id,
      idx: null,
      energy: pk.energy,
      width: pk.width,
      lifetimePs: pk.lifetimePs,
      quality: pk.quality,
      partialWidths: [],
      petermann: null,
      residual: null,
      bound: false,
      nearThreshold: false,
      overlapping,
      // A fit's energy is on the model's axis only when it came from an energy trace.
      ...fittedValidity(pk.energy, physics, positionComparable),
      details: {
        fit: {
          fitId,
          peak: k,
          lineshape: req.lineshape,
          temperatureMK: req.temperatureMK ?? null,
          traceId: fit.traceId,
          runId: fit.runId,
          range: req.source.kind === 'run' ? { from: req.source.from, to: req.source.to } : { from: req.source.from ?? null, to: req.source.to ?? null },
          energyError: pk.energyError,
          widthError: pk.widthError,
          q: pk.q,
          qError: pk.qError,
          reducedChiSquare: result.reducedChiSquare,
          converged: result.converged,
          positionComparable,
          nearestPoleId: cmp?.pole?.id ?? null,
        },
      },
      tags: ['fitted'],
      notes: `Fitted: ${shapeWords[req.lineshape]}${req.temperatureMK ? ` at ${req.temperatureMK} mK` : ''}, peak ${k + 1} of ${result.peaks.length}, to ${origin}.${positionComparable ? '' : ' Energy from a gate-voltage axis (arbitrary zero).'}${result.converged ? '' : ' The fit did not converge.'}`,
      modelName: mv.name,
      modelVersion: mv.version,
      family: mv.family,
      material: mv.material,
      fieldT: mv.fieldT,
      spacingNm: mv.spacingNm,
      physics: mv.physics,
      ...geometryOf(mv),
    });
  }
  return true;
}

/** Validity columns of a fitted peak; none when its energy has an arbitrary zero (a gate-voltage axis). */
function fittedValidity(energy: number, physics: ResonancePhysics, positionComparable: boolean) {
  if (!positionComparable) return { validityLimit: validityLimitOf(physics), wavelengthSpacings: null, aboveValidity: null };
  const v = resonanceValidity(energy, physics);
  return { validityLimit: v.limit, wavelengthSpacings: v.wavelengthSpacings, aboveValidity: v.aboveLimit };
}

async function versionOfRun(q: Queryable, runId: string): Promise<string | undefined> {
  const rows = await q.execute(sql`select model_version_id from runs where id = ${runId}`);
  return (rows.rows[0] as { model_version_id?: string } | undefined)?.model_version_id;
}

/** Ends a fit's attempt as failed (used by the worker); false when the attempt no longer owns the fit. */
export async function failFit(db: Queryable, fitId: string, attempt: number, message: string): Promise<boolean> {
  return fitStore.fail(db, fitId, message, attempt);
}
