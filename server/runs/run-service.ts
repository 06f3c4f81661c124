import type { Db } from '../db/client.js';
import { writeAudit } from '../audit/audit-log.js';
import { IllegalTransition } from '../jobs/job-lifecycle.js';
import { ApiError } from '../http/error-handler.js';
import type { RunQueue } from '../jobs/boss.js';
import type { RunKind } from '../jobs/queues.js';
import { findVersion } from '../models/model-repository.js';
import { modelNotFound, storedFigures } from '../models/model-service.js';
import type { DerivedFigures } from '../../shared/model/derived-figures.js';
import { toResonanceRow } from '../catalogue/resonance-row.js';
import type { Compute } from '../compute/compute-pool.js';
import { checkRunSize, checkRunSlots, type RunLimits } from './run-limits.js';
import { runNotice } from './run-notice.js';
import { frequencyOfWavenumberSquared } from '../../shared/units/microwave.js';
import * as repo from './run-repository.js';
import { isFinished, runStore } from './run-store.js';
import type { RunRequest } from './run-window.js';

function runNotFound(): ApiError {
  return new ApiError(404, 'not_found', 'No such run in this group.');
}

type RunRow = NonNullable<Awaited<ReturnType<typeof repo.findRun>>>;

/** The API's view of a run. */
function toRunView(r: RunRow) {
  const run = r.run;
  return {
    id: run.id,
    kind: run.kind,
    status: run.status,
    progress: run.progressStage !== null ? { stage: run.progressStage, fraction: run.progressFraction ?? 0 } : null,
    window: run.window,
    note: run.note,
    modelId: r.modelId,
    modelName: r.modelName,
    modelVersion: r.modelVersion,
    createdBy: run.createdBy ? { id: run.createdBy, name: r.createdByName ?? '' } : null,
    createdAt: run.createdAt,
    startedAt: run.startedAt,
    finishedAt: run.finishedAt,
    attempts: run.attempt,
    error: run.error,
    notice: runNotice(run),
    engineVersion: run.engineVersion,
    resonanceCount: run.resonanceCount,
    certificate: run.certificate,
    estimate: run.estimate,
    stats: run.stats,
  };
}

export class RunService {
  /**
   * `compute` runs the estimate off the API thread (the pool in the app, inline in
   * scripts); `limits` caps run size and runs in flight (none for scripts such as the seed).
   */
  constructor(
    private readonly db: Db,
    private readonly queue: RunQueue,
    private readonly compute: Compute,
    private readonly limits: RunLimits | null = null,
  ) {}

  private async estimateOf(document: unknown, req: RunRequest, signal?: AbortSignal) {
    return this.compute.run({ kind: 'estimate-run', document, request: { kind: req.kind, window: req.window } as Pick<RunRequest, 'kind' | 'window'> }, signal);
  }

  private async version(groupId: string, req: Pick<RunRequest, 'modelId' | 'version'>) {
    const v = await findVersion(this.db, groupId, req.modelId, req.version);
    if (!v) throw req.version ? new ApiError(404, 'not_found', `This model has no version ${req.version}.`) : modelNotFound();
    return v;
  }

  async estimate(groupId: string, req: RunRequest, signal?: AbortSignal) {
    const v = await this.version(groupId, req);
    const estimate = await this.estimateOf(v.document, req, signal);
    const warnings = [...estimate.warnings, ...(await this.searchedBefore(groupId, v, req))];
    if (!this.limits) return { ...estimate, warnings };
    const withinLimit = estimate.expectedSeconds <= this.limits.maxSeconds;
    if (!withinLimit) {
      // Say it before the launch is refused: the launcher shows the estimate's warnings.
      try {
        checkRunSize(estimate, req, this.limits);
      } catch (err) {
        if (err instanceof ApiError) warnings.unshift(`Launching this run will be refused. ${err.message}`);
      }
    }
    return { ...estimate, limitSeconds: this.limits.maxSeconds, withinLimit, warnings };
  }

  /**
   * A pole search files every pole it finds in the catalogue, so searching a model version
   * again over a window an earlier search (queued, running or completed) covered lists the
   * poles of the overlap twice. Said before the launch, not refused: a search may be repeated
   * on purpose (after an engine update, to compare).
   */
  private async searchedBefore(groupId: string, v: { id: string; modelName: string; version: number; document: unknown }, req: RunRequest): Promise<string[]> {
    if (req.kind !== 'pole-search') return [];
    const { emin, emax } = req.window;
    const earlier = await repo.overlappingPoleSearches(this.db, groupId, v.id, emin, emax);
    if (earlier.length === 0) return [];
    // A microwave model's window is k² (mm⁻²); its launcher speaks frequency, so the warning does too.
    const physics = (v.document as { physics?: { kind?: unknown; permittivity?: unknown } } | null)?.physics;
    const permittivity = physics?.kind === 'microwave' ? (typeof physics.permittivity === 'number' ? physics.permittivity : 1) : null;
    const unit = permittivity === null ? 'meV' : 'GHz';
    const num = (x: number) => String(Number((permittivity === null ? x : frequencyOfWavenumberSquared(x, permittivity)).toPrecision(6)));
    // The windows searched, merged; the parts of the new window they cover.
    const covered: [number, number][] = [];
    for (const w of earlier.map((r) => [r.window.emin, r.window.emax] as [number, number]).sort((a, b) => a[0] - b[0])) {
      const top = covered.at(-1);
      if (top && w[0] <= top[1]) top[1] = Math.max(top[1], w[1]);
      else covered.push([w[0], w[1]]);
    }
    const range = ([a, b]: [number, number]) => `${num(a)}–${num(b)}`;
    const list = (xs: [number, number][]) =>
      xs
        .map(range)
        .join(', ')
        .replace(/, ([^,]*)$/, ' and $1');
    const overlap = covered.map(([a, b]) => [Math.max(a, emin), Math.min(b, emax)] as [number, number]).filter(([a, b]) => b > a);
    const latest = earlier[0]!;
    const when = latest.createdAt.toISOString().slice(0, 16).replace('T', ' ') + ' UTC';
    const what = latest.status === 'completed' ? `filed ${latest.resonanceCount ?? 0} pole(s)` : `is ${latest.status} and files its poles when it ends`;
    const searches = earlier.length === 1 ? `the search launched ${when}, which ${what}` : `${earlier.length} searches; the latest, launched ${when}, ${what}`;
    return [
      `${v.modelName} v${v.version} was already searched over ${list(covered)} ${unit} (${searches}). ` +
        `A new search files the poles it finds again, so those in ${list(overlap)} ${unit} would be listed twice in the catalogue.`,
    ];
  }

  async create(groupId: string, userId: string, req: RunRequest, signal?: AbortSignal) {
    const v = await this.version(groupId, req);
    const estimate = await this.estimateOf(v.document, req, signal);
    if (this.limits) checkRunSize(estimate, req, this.limits);
    const runId = await this.db.transaction(async (tx) => {
      if (this.limits) await checkRunSlots(tx, groupId, userId, this.limits);
      const id = await runStore.create(tx, {
        groupId,
        modelVersionId: v.id,
        kind: req.kind,
        window: req.window,
        note: req.note ?? '',
        estimate,
        createdBy: userId,
      });
      await writeAudit(tx, {
        groupId,
        actorId: userId,
        action: 'run.queued',
        subject: `${v.modelName} v${v.version}`,
        details: { runId: id, kind: req.kind, window: req.window },
      });
      return id;
    });
    // Queued after the commit, so a worker never sees a job whose run row is not there yet.
    try {
      const jobId = await this.queue.enqueue(req.kind as RunKind, runId);
      // A worker may have claimed the run with this job already; never overwrite another job.
      await runStore.attachJob(this.db, runId, jobId);
    } catch (err) {
      await runStore.fail(this.db, runId, 'the run could not be queued');
      throw err;
    }
    return this.view(groupId, runId);
  }

  async list(groupId: string, f: repo.RunListFilter) {
    const { rows, total } = await repo.listRuns(this.db, groupId, f);
    return { items: rows.map(toRunView), total };
  }

  async view(groupId: string, runId: string) {
    const r = await repo.findRun(this.db, groupId, runId);
    if (!r) throw runNotFound();
    return toRunView(r);
  }

  async detail(groupId: string, runId: string) {
    const r = await repo.findRun(this.db, groupId, runId);
    if (!r) throw runNotFound();
    const [poles, spectrum] = await Promise.all([repo.runResonances(this.db, groupId, runId), repo.runSpectrum(this.db, groupId, runId)]);
    const v = await findVersion(this.db, groupId, r.modelId, r.modelVersion);
    const derived = v ? storedFigures(v) : null;
    return {
      ...toRunView(r),
      thresholds: r.run.thresholds ?? thresholdsInWindow(derived, r.run.window),
      poles: poles.map(toResonanceRow),
      spectrum,
      // Lead names in engine order: the spectrum's pairs index into this list.
      leads: derived?.leads.map((l) => ({ name: l.name, side: l.side, width: l.width })) ?? [],
      microwave:
        derived?.physics === 'microwave' && derived.permittivity !== undefined && derived.heightMm !== undefined
          ? { permittivity: derived.permittivity, heightMm: derived.heightMm, twoDimensionalLimitGhz: derived.twoDimensionalLimitGhz! }
          : null,
    };
  }

  async spectrum(groupId: string, runId: string) {
    const r = await repo.findRun(this.db, groupId, runId);
    if (!r) throw runNotFound();
    const s = await repo.runSpectrum(this.db, groupId, runId);
    if (!s) throw new ApiError(404, 'not_found', 'This run has no spectrum yet.');
    return s;
  }

  /** The owner or an admin may cancel; a queued run ends at once, a running one at the worker's next heartbeat. */
  async cancel(groupId: string, userId: string, role: string, runId: string) {
    const r = await repo.findRun(this.db, groupId, runId);
    if (!r) throw runNotFound();
    if (r.run.createdBy !== userId && role !== 'admin') {
      throw new ApiError(403, 'forbidden', 'Only the person who launched this run, or a group admin, can cancel it.');
    }
    const finished = (status: string) =>
      new ApiError(409, 'run_finished', `This run has already ${status === 'completed' ? 'completed' : status === 'failed' ? 'failed' : 'been cancelled'}.`);
    if (isFinished(r.run.status)) throw finished(r.run.status);
    const outcome = await this.db.transaction(async (tx) => {
      let how;
      try {
        how = await runStore.requestCancel(tx, runId);
      } catch (err) {
        if (err instanceof IllegalTransition) throw finished(err.from);
        throw err;
      }
      await writeAudit(tx, { groupId, actorId: userId, action: 'run.cancelled', subject: `${r.modelName} v${r.modelVersion}`, details: { runId } });
      return how;
    });
    if (outcome === 'cancelled' && r.run.jobId) await this.queue.cancel(r.run.kind as RunKind, r.run.jobId).catch(() => {});
  }
}

/** Channel thresholds (meV) of a stored model inside a window, from its stored derived figures (no LU needed). */
function thresholdsInWindow(derived: DerivedFigures | null, window: Record<string, number>): number[] {
  if (!derived) return [];
  const all = derived.leads.flatMap((l) => l.thresholds.flatMap((t) => [t.opens, t.closes]));
  return [...new Set(all)].filter((e) => e >= window.emin && e <= window.emax).sort((a, b) => a - b);
}
