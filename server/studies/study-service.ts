/**
 * Parameter studies and tolerance ensembles (issue 14): launching one fans it out into
 * one queue job per step (study-queue.ts); workers compute the steps (study-worker.ts)
 * and assemble the outcome when the last one ends. Everything the API thread does here
 * is cheap: path checks, small JSON, decoding stored results; the cost estimate runs in
 * the compute pool.
 */
import { and, asc, desc, eq, inArray, sql } from 'drizzle-orm';
import type { Db } from '../db/client.js';
import { writeAudit } from '../audit/audit-log.js';
import { studies, studySteps, studyStepResults } from '../db/schema/studies.js';
import { cavityModels, modelVersions } from '../db/schema/models.js';
import { users } from '../db/schema/users.js';
import { ApiError } from '../http/error-handler.js';
import type { Compute } from '../compute/compute-pool.js';
import type { ModelService } from '../models/model-service.js';
import { FILED_IMAGE_SIDES, type CatalogueService } from '../catalogue/catalogue-service.js';
import { checkEnsembleDefinition, type EnsembleDefinition } from '../../shared/engine/study/ensemble-definition.js';
import { checkStudyDefinition, studyStepCount, studyStepModel, studyStepSpec, type StudyDefinition } from '../../shared/engine/study/study-definition.js';
import { rangeValues } from '../../shared/engine/study/parameter-values.js';
import { DEFAULT_MAP_POINTS } from '../../shared/engine/study/study-transmission.js';
import { poleReport } from '../../shared/engine/study/study-report.js';
import type { EnsembleOutcome, StudyRequest, SweepOutcome } from '../../shared/api/studies.js';
import { decodeSearch, type StoredSearch } from './step-codec.js';
import type { StudyQueue } from './study-queue.js';
import type { StudyDefinitionStored } from './study-step-task.js';

function studyNotFound(): ApiError {
  return new ApiError(404, 'not_found', 'No such study in this group.');
}

type StudyRow = typeof studies.$inferSelect;

export class StudyService {
  constructor(
    private readonly db: Db,
    private readonly queue: StudyQueue | null,
    private readonly compute: Compute,
    private readonly models: ModelService,
    private readonly catalogue: CatalogueService,
  ) {}

  private version(groupId: string, req: Pick<StudyRequest, 'modelId' | 'version'>) {
    return this.models.versionRecord(groupId, req.modelId, req.version);
  }

  /** The engine's definition of the request on this document; 400 naming the field when a path or value is wrong. */
  private definition(document: unknown, req: StudyRequest): StudyDefinitionStored {
    const search = req.search ?? {};
    try {
      if (req.kind === 'sweep') {
        const study: StudyDefinition = {
          model: document,
          parameters: req.parameters.map((p) => ({
            path: p.path,
            values: 'list' in p.values ? p.values.list : rangeValues(p.values.from, p.values.to, p.values.count),
          })),
          window: req.window,
          search,
          transmissionPoints: req.transmissionPoints ?? DEFAULT_MAP_POINTS,
        };
        checkStudyDefinition(study);
        return { kind: 'sweep', study };
      }
      const ensemble: EnsembleDefinition = {
        model: document,
        window: req.window,
        search,
        realisations: req.realisations,
        seed: req.seed,
        roughness: req.roughness ?? null,
        jitter: req.jitter ?? [],
        disorder: req.disorder ?? false,
        follow: req.follow,
        tolerances: req.tolerances,
        bins: req.bins,
      };
      checkEnsembleDefinition(ensemble);
      return { kind: 'ensemble', ensemble };
    } catch (err) {
      if (!(err instanceof RangeError)) throw err;
      const [field, ...rest] = err.message.split(': ');
      throw new ApiError(400, 'validation_failed', err.message, [
        { path: rest.length ? field.replace(/\[(\d+)\]/g, '.$1') : '(body)', message: rest.length ? rest.join(': ') : err.message },
      ]);
    }
  }

  private stepCount(def: StudyDefinitionStored): number {
    return def.kind === 'sweep' ? studyStepCount(def.study) : def.ensemble.realisations + 1;
  }

  async estimate(groupId: string, req: StudyRequest, signal?: AbortSignal) {
    const v = await this.version(groupId, req);
    const def = this.definition(v.document, req);
    const one = await this.compute.run({ kind: 'estimate-run', document: v.document, request: { kind: 'pole-search', window: req.window } }, signal);
    const steps = this.stepCount(def);
    return { steps, secondsPerStep: one.expectedSeconds, secondsOneWorker: one.expectedSeconds * steps, sites: one.sites };
  }

  async create(groupId: string, userId: string, req: StudyRequest, signal?: AbortSignal) {
    if (!this.queue) throw new ApiError(503, 'unavailable', 'Studies cannot be computed: no queue is configured on this server.');
    const v = await this.version(groupId, req);
    const def = this.definition(v.document, req);
    const estimate = await this.estimate(groupId, req, signal);
    const count = this.stepCount(def);
    const studyId = await this.db.transaction(async (tx) => {
      const [row] = await tx
        .insert(studies)
        .values({
          groupId,
          modelVersionId: v.id,
          kind: req.kind,
          name: req.name ?? '',
          definition: def as unknown as Record<string, unknown>,
          stepCount: count,
          estimateSeconds: estimate.secondsOneWorker,
          createdBy: userId,
        })
        .returning({ id: studies.id });
      await tx.insert(studySteps).values(Array.from({ length: count }, (_, index) => ({ studyId: row.id, index })));
      await writeAudit(tx, {
        groupId,
        actorId: userId,
        action: 'study.queued',
        subject: `${v.modelName} v${v.version}`,
        details: { studyId: row.id, kind: req.kind, steps: count },
      });
      return row.id;
    });
    // Queued after the commit, so a worker never sees a step whose row is not there yet.
    const ids = await this.queue.send(
      studyId,
      Array.from({ length: count }, (_, k) => k),
    );
    for (let k = 0; k < ids.length; k++) {
      await this.db
        .update(studySteps)
        .set({ jobId: ids[k] })
        .where(and(eq(studySteps.studyId, studyId), eq(studySteps.index, k), eq(studySteps.status, 'queued')));
    }
    return this.detail(groupId, studyId);
  }

  private async summaries(groupId: string, where: ReturnType<typeof eq>, limit: number, offset: number) {
    const rows = await this.db
      .select({ study: studies, modelId: modelVersions.modelId, modelName: cavityModels.name, modelVersion: modelVersions.version, createdByName: users.name })
      .from(studies)
      .innerJoin(modelVersions, eq(modelVersions.id, studies.modelVersionId))
      .innerJoin(cavityModels, eq(cavityModels.id, modelVersions.modelId))
      .leftJoin(users, eq(users.id, studies.createdBy))
      .where(and(eq(studies.groupId, groupId), where))
      .orderBy(desc(studies.createdAt))
      .limit(limit)
      .offset(offset);
    if (rows.length === 0) return [];
    const counts = await this.db
      .select({ studyId: studySteps.studyId, status: studySteps.status, reused: studySteps.reused, n: sql<number>`count(*)::int` })
      .from(studySteps)
      .where(
        inArray(
          studySteps.studyId,
          rows.map((r) => r.study.id),
        ),
      )
      .groupBy(studySteps.studyId, studySteps.status, studySteps.reused);
    return rows.map((r) => {
      const mine = counts.filter((c) => c.studyId === r.study.id);
      const n = (s: string) => mine.filter((c) => c.status === s).reduce((a, c) => a + c.n, 0);
      return {
        id: r.study.id,
        kind: r.study.kind,
        name: r.study.name,
        status: r.study.status,
        modelId: r.modelId,
        modelName: r.modelName,
        modelVersion: r.modelVersion,
        stepCount: r.study.stepCount,
        steps: { queued: n('queued'), running: n('running'), completed: n('completed'), failed: n('failed'), cancelled: n('cancelled') },
        reusedSteps: mine.filter((c) => c.reused).reduce((a, c) => a + c.n, 0),
        estimateSeconds: r.study.estimateSeconds,
        error: r.study.error,
        createdBy: r.study.createdBy ? { id: r.study.createdBy, name: r.createdByName ?? '' } : null,
        createdAt: r.study.createdAt,
        finishedAt: r.study.finishedAt,
        row: r.study,
      };
    });
  }

  async list(groupId: string, page: number, pageSize: number) {
    const items = await this.summaries(groupId, sql`true` as never, pageSize, (page - 1) * pageSize);
    const [{ total }] = await this.db
      .select({ total: sql<number>`count(*)::int` })
      .from(studies)
      .where(eq(studies.groupId, groupId));
    return { items: items.map(({ row: _row, ...s }) => s), total };
  }

  private async row(groupId: string, studyId: string) {
    const [s] = await this.summaries(groupId, eq(studies.id, studyId), 1, 0);
    if (!s) throw studyNotFound();
    return s;
  }

  async detail(groupId: string, studyId: string) {
    const { row, ...summary } = await this.row(groupId, studyId);
    const steps = await this.db.select().from(studySteps).where(eq(studySteps.studyId, studyId)).orderBy(asc(studySteps.index));
    const def = row.definition as unknown as StudyDefinitionStored;
    return {
      ...summary,
      definition: publicDefinition(def),
      stepList: steps.map((s) => ({
        index: s.index,
        values: def.kind === 'sweep' ? studyStepSpec(def.study, s.index).values : [],
        status: s.status,
        attempts: s.attempt,
        reused: s.reused,
        seconds: s.seconds,
        worker: s.worker,
        error: s.error,
      })),
      outcome: (row.outcome as never) ?? null,
    };
  }

  async cancel(groupId: string, userId: string, studyId: string) {
    const { row } = await this.row(groupId, studyId);
    if (row.finishedAt === null) {
      const dropped = await this.db.transaction(async (tx) => {
        await tx.update(studies).set({ cancelRequested: true }).where(eq(studies.id, studyId));
        const rows = await tx
          .update(studySteps)
          .set({ status: 'cancelled', finishedAt: new Date() })
          .where(and(eq(studySteps.studyId, studyId), eq(studySteps.status, 'queued')))
          .returning({ jobId: studySteps.jobId });
        await writeAudit(tx, { groupId, actorId: userId, action: 'study.cancelled', subject: row.name || row.kind, details: { studyId } });
        return rows.map((r) => r.jobId).filter((j): j is string => !!j);
      });
      await this.queue?.cancel(dropped);
      // A worker assembles what was kept (the steps already ended) once nothing runs.
      await this.queue?.send(studyId, [-1]);
    }
    return this.detail(groupId, studyId);
  }

  private async stepRow(groupId: string, studyId: string, index: number) {
    const { row, modelId, modelName, modelVersion } = await this.row(groupId, studyId);
    if (index >= row.stepCount) throw new ApiError(404, 'not_found', `This study has no step ${index} (it has ${row.stepCount}).`);
    const [step] = await this.db
      .select({ step: studySteps, search: studyStepResults.search })
      .from(studySteps)
      .leftJoin(studyStepResults, eq(studyStepResults.key, studySteps.resultKey))
      .where(and(eq(studySteps.studyId, studyId), eq(studySteps.index, index)));
    return {
      study: row,
      model: { id: modelId, name: modelName, version: modelVersion },
      step: step.step,
      search: (step.search as unknown as StoredSearch | null) ?? null,
    };
  }

  /** The model document of a step: the sweep's parameters set, or the realisation the worker drew. */
  private stepDocument(study: StudyRow, step: typeof studySteps.$inferSelect): Record<string, unknown> {
    const def = study.definition as unknown as StudyDefinitionStored;
    if (def.kind === 'sweep') return studyStepModel(def.study, step.index) as Record<string, unknown>;
    const drawn = (step.record as { document?: Record<string, unknown> } | null)?.document;
    if (step.index === 0 || !drawn) {
      if (step.index !== 0) throw new ApiError(409, 'not_ready', 'This realisation has not been computed yet.');
      return def.ensemble.model as Record<string, unknown>;
    }
    return drawn;
  }

  async step(groupId: string, studyId: string, index: number) {
    const { study, step, search } = await this.stepRow(groupId, studyId, index);
    const def = study.definition as unknown as StudyDefinitionStored;
    const document = this.stepDocument(study, step);
    const decoded = search ? decodeSearch(search) : null;
    const grid = (document as { grid: { nx: number; ny: number } }).grid;
    return {
      index,
      values: def.kind === 'sweep' ? studyStepSpec(def.study, index).values : [],
      status: step.status,
      certified: decoded?.certified ?? null,
      summary: decoded?.summary ?? null,
      document,
      grid: { nx: grid.nx, ny: grid.ny },
      sites: { i: decoded ? Array.from(decoded.sites.i) : [], j: decoded ? Array.from(decoded.sites.j) : [] },
      poles: (decoded?.poles ?? []).map((p) => {
        const density = new Array<number>(p.mode.length / 2);
        for (let s = 0; s < density.length; s++) density[s] = Math.fround(p.mode[2 * s] ** 2 + p.mode[2 * s + 1] ** 2);
        return { ...poleReport(p), density };
      }),
    };
  }

  /**
   * Keeps a step's model as a new version of the study's model (checked like any edit) and
   * files the step's poles in the catalogue under that version, with their modes and mode
   * images and where they came from (study, step, parameter values), in one transaction.
   * Only a completed step can be kept: its poles are what goes into the catalogue.
   */
  async save(groupId: string, userId: string, studyId: string, index: number, signal?: AbortSignal) {
    const { study, model, step, search } = await this.stepRow(groupId, studyId, index);
    if (step.status !== 'completed' || !search)
      throw new ApiError(409, 'not_ready', `Step ${index} has not been computed (it is ${step.status}): only a computed step can be kept with its resonances.`);
    const document = this.stepDocument(study, step);
    const def = study.definition as unknown as StudyDefinitionStored;
    const decoded = decodeSearch(search);
    const grid = (document as { grid: { nx: number; ny: number } }).grid;
    const images = await this.compute.run(
      {
        kind: 'mode-images',
        lattice: {
          nx: grid.nx,
          ny: grid.ny,
          i: decoded.sites.i,
          j: decoded.sites.j,
          kind: (document as { lattice?: { kind?: string } }).lattice?.kind === 'honeycomb' ? 'honeycomb' : 'square',
        },
        modes: decoded.poles.map((p) => p.mode),
        sides: FILED_IMAGE_SIDES,
      },
      signal,
    );
    const values = def.kind === 'sweep' ? def.study.parameters.map((p, k) => ({ path: p.path, value: studyStepSpec(def.study, index).values[k] })) : [];
    const where =
      def.kind === 'sweep'
        ? values.map((v) => `${v.path} = ${Number(v.value.toPrecision(12))}`).join(', ')
        : `realisation ${index}${index === 0 ? ' (nominal)' : ''}`;
    const provenance = {
      study: { studyId, name: study.name, kind: study.kind, step: index, values, fromModelVersion: model.version, certified: decoded.certified },
    };
    let filed = 0;
    let version = 0;
    await this.models.update(groupId, userId, model.id, document, signal, async (tx, saved) => {
      version = saved.version;
      const ids = await this.catalogue.fileComputedPoles(tx, {
        groupId,
        model: { id: saved.modelId, versionId: saved.versionId, name: saved.name, version: saved.version, document: saved.document, columns: saved.columns },
        leadNames: leadNames(saved.document),
        poles: decoded.poles,
        images,
        provenance,
        tags: ['study'],
        notes: `From ${study.kind === 'ensemble' ? 'ensemble' : 'study'} ${study.name || studyId.slice(0, 8)}, step ${index} (${where}) of ${model.name} v${model.version}.${decoded.certified ? '' : ' The step was not certified: it may have missed poles.'}`,
      });
      filed = ids.length;
      await writeAudit(tx, {
        groupId,
        actorId: userId,
        action: 'study.step_saved',
        subject: `${saved.name} v${saved.version}`,
        details: { studyId, step: index, version: saved.version, resonances: ids.length },
      });
    });
    return { modelId: model.id, version, resonances: filed, certified: decoded.certified };
  }

  /** Trajectory points (a sweep) or samples (an ensemble) as rows. */
  async exportRows(
    groupId: string,
    studyId: string,
    table: 'trajectories' | 'transmission' = 'trajectories',
  ): Promise<{ header: string[]; rows: (string | number | boolean | null)[][]; json: unknown; notes: string[] }> {
    const { row } = await this.row(groupId, studyId);
    const outcome = row.outcome as Record<string, unknown> | null;
    if (!outcome) throw new ApiError(409, 'not_ready', 'The study has not ended yet: its trajectories or statistics are assembled when the last step ends.');
    if (table === 'transmission') return transmissionRows(outcome);
    if (outcome.kind === 'sweep') {
      const o = outcome as unknown as SweepOutcome;
      const header = [
        'line',
        'line_value',
        'trajectory',
        'step',
        ...o.parameters.slice(0, 1).map((p) => p.path),
        'energy_meV',
        'width_meV',
        'link',
        'overlap',
        'certified',
      ];
      const rows: (string | number | boolean | null)[][] = [];
      o.lines.forEach((l, li) => {
        for (const t of l.trajectories) {
          for (const p of t.points) rows.push([li, l.value, t.id, p.step, p.value, p.energy, p.width, p.link, p.overlap, o.steps[p.step]?.certified ?? null]);
        }
      });
      return { header, rows, json: outcome, notes: [] };
    }
    const o = outcome as unknown as EnsembleOutcome;
    const header = [
      'realisation',
      'seed',
      'followed',
      'reason',
      'energy_meV',
      'width_meV',
      'quality',
      'within_tolerances',
      'certified',
      'sites_added',
      'sites_removed',
    ];
    const rows = (o.statistics?.samples ?? []).map((s) => [
      s.realisation,
      s.seed,
      s.followed,
      s.reason,
      s.energy,
      s.width,
      s.quality,
      s.withinTolerances,
      s.certified,
      s.record.roughness?.added ?? null,
      s.record.roughness?.removed ?? null,
    ]);
    return { header, rows, json: outcome, notes: [] };
  }
}

/** A sweep's transmission map as rows (line, step, parameter value, energy, T); 409 when the study has none. */
function transmissionRows(outcome: Record<string, unknown>) {
  const o = outcome as unknown as SweepOutcome;
  if (o.kind !== 'sweep' || !o.transmission)
    throw new ApiError(409, 'no_map', 'This study has no transmission map: an ensemble has none, and a sweep has one only when it asked for map energies.');
  const map = o.transmission;
  if (map.from === null) throw new ApiError(409, 'no_map', 'This model has fewer than two leads: there is no transmission to export.');
  const header = ['line', 'line_value', 'step', o.parameters[0].path, 'energy_meV', 'transmission', 'certified'];
  const rows: (string | number | boolean | null)[][] = [];
  const n0 = o.parameters[0].values.length;
  for (const s of o.steps) {
    const line = Math.floor(s.index / n0);
    map.energies.forEach((e, k) => rows.push([line, s.values[1] ?? null, s.index, s.values[0], e, s.transmission?.[k] ?? null, s.certified]));
  }
  const notes = [
    `# Transmission from lead ${map.from} into ${map.into.join(', ')} (summed), in units of one channel (2e²/h per spin-degenerate channel).`,
    '# Each value is the largest T sampled within half a column of its energy (the sweep refines near narrow resonances).',
    ...(map.budgetExhaustedSteps.length
      ? [`# Steps ${map.budgetExhaustedSteps.join(', ')} ran out of sweep energies: a narrow peak there may be drawn too low.`]
      : []),
    '# An empty transmission cell: that step did not complete.',
  ];
  return {
    header,
    rows,
    json: { transmission: map, steps: o.steps.map((s) => ({ index: s.index, values: s.values, transmission: s.transmission ?? null })) },
    notes,
  };
}

/** Lead names as the engine gives them (a lead without a name: its side and index), for partial widths. */
function leadNames(document: { leads?: { name?: string; side: string }[] }): string[] {
  return (document.leads ?? []).map((l, k) => l.name ?? `${l.side}${k}`);
}

/** The stored definition without the model document (the client has the model). */
function publicDefinition(def: StudyDefinitionStored): Record<string, unknown> {
  if (def.kind === 'sweep') {
    const { model: _model, ...rest } = def.study;
    return { kind: 'sweep', ...rest };
  }
  const { model: _model, ...rest } = def.ensemble;
  return { kind: 'ensemble', ...rest };
}
