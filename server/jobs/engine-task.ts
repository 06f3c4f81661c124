/**
 * The numerical part of a run, as one pure function of its inputs: it runs in a
 * worker thread (engine-thread.ts) so that the worker process keeps beating its
 * heartbeat and polling the queue while the engine computes.
 */
import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian.js';
import type { WorkControl } from '../../shared/engine/operator.js';
import { findPoles, findPolesWith, poleWorkSetup } from '../../shared/engine/poles.js';
import type { CertificatePiece, PoleSearchOptions, PoleSearchResult } from '../../shared/engine/pole-types.js';
import { PoleThreadPool } from './pole-pool.js';
import { leadEdgesOf } from '../../shared/engine/numerical-lead-system.js';
import { poleAnchors, transmissionSweep } from '../../shared/engine/transmission.js';
import { withCurrents, type RunPole } from '../modemaps/pole-currents.js';
import type { Spectrum } from '../../shared/api/runs.js';

/** Bumped whenever a change of the engine can change computed numbers. */
export const ENGINE_VERSION = 'poleward-engine 0.1.0';

export type EngineTask =
  | {
      kind: 'pole-search';
      document: unknown;
      window: { emin: number; emax: number; gammaMax: number };
      spectrumPoints: number;
      /** Worker threads that factorise the contour nodes and Newton steps (default 1: this thread). */
      threads?: number;
    }
  | {
      kind: 'transmission';
      document: unknown;
      window: { emin: number; emax: number; points: number };
      /** Most energies the refinement may use; default spectrumBudget('transmission', points). */
      maxPoints?: number;
    };

/** The spectrum as the engine computes it: the answer's Spectrum, with R_ℓ(E) per lead always present (transmission.ts). */
export type EngineSpectrum = Spectrum & { reflection: number[][] };

export interface EngineTaskResult {
  engineVersion: string;
  thresholds: number[];
  leadNames: string[];
  grid: { nx: number; ny: number };
  /** The lattice the site labels are on (mode images draw the honeycomb's atoms where they sit); absent: square. */
  lattice?: 'square' | 'honeycomb';
  sites: { i: Int32Array; j: Int32Array };
  /** The poles, each with its current map (server/modemaps/pole-currents.ts). */
  poles: RunPole[];
  certificate: { pieces: CertificatePiece[]; certified: boolean; summary: string } | null;
  spectrum: EngineSpectrum;
  stats: Record<string, number | boolean>;
}

/**
 * Most energies an adaptive sweep may use: a transmission run is the spectrum
 * the user asked for and may refine to 4× its grid; the spectrum beside a pole
 * search is a preview (the poles are the result) and may refine to 2×.
 */
export function spectrumBudget(kind: EngineTask['kind'], points: number): number {
  return Math.max(points, Math.min((kind === 'transmission' ? 4 : 2) * points, 4000));
}

/** Builds the operator from the model document and computes the run on this thread. Throws InvalidModelError for a bad model. */
export function runEngineTask(task: EngineTask, control: WorkControl = {}): EngineTaskResult {
  const ctx = startTask(task);
  const search = task.kind === 'pole-search' ? findPoles(ctx.op, task.window, poleOptions(task, control)) : null;
  return finishTask(ctx, task, search, control);
}

/**
 * Smallest cavity (sites) whose pole search goes to a pool of threads: each pool thread
 * loads the engine and builds its own operator (about a second), which only pays off
 * when one LU takes a few milliseconds or more.
 */
export const POOL_MIN_SITES = 2000;

/**
 * The same run with a pole search whose LUs are shared by task.threads worker threads
 * (one copy of the operator each): the same poles and certificate as runEngineTask.
 * Cavities under POOL_MIN_SITES sites are searched on this thread.
 */
export async function runEngineTaskWithPool(task: EngineTask, control: WorkControl = {}): Promise<EngineTaskResult> {
  const threads = task.kind === 'pole-search' ? (task.threads ?? 1) : 1;
  if (task.kind !== 'pole-search' || threads <= 1) return runEngineTask(task, control);
  const ctx = startTask(task);
  if (ctx.op.n < POOL_MIN_SITES) return finishTask(ctx, { ...task, threads: 1 }, findPoles(ctx.op, task.window, poleOptions(task, control)), control);
  const options = poleOptions(task, control);
  const pool = await PoleThreadPool.start(task.document, poleWorkSetup(options), threads, leadEdgesOf(ctx.system));
  let search: PoleSearchResult;
  try {
    search = await findPolesWith(ctx.op, task.window, options, pool);
  } finally {
    await pool.close();
  }
  return finishTask(ctx, task, search, control);
}

interface TaskContext {
  started: number;
  system: ReturnType<typeof buildCavitySystem>;
  op: EffectiveHamiltonian;
}

function startTask(task: EngineTask): TaskContext {
  const started = performance.now();
  const system = buildCavitySystem(task.document);
  return { started, system, op: new EffectiveHamiltonian(system) };
}

/** Share of the progress bar the spectrum takes after a pole search. */
function spectrumShareOf(task: EngineTask): number {
  return task.kind === 'pole-search' ? (task.spectrumPoints > 0 ? 0.2 : 0) : 1;
}

function poleOptions(task: EngineTask, control: WorkControl): PoleSearchOptions {
  const share = spectrumShareOf(task);
  return { ...control, onProgress: (stage, f) => control.onProgress?.(stage, (1 - share) * f) };
}

function finishTask(ctx: TaskContext, task: EngineTask, search: PoleSearchResult | null, control: WorkControl): EngineTaskResult {
  const { started, system, op } = ctx;
  const { emin, emax } = task.window;
  const thresholds = op.thresholds.filter((e) => e >= emin && e <= emax);
  let poles: RunPole[] = [];
  let certificate: EngineTaskResult['certificate'] = null;
  const stats: Record<string, number | boolean> = { sites: op.n };

  const spectrumShare = spectrumShareOf(task);
  if (search) {
    // Mode maps: the current of every pole is part of its run.
    poles = withCurrents(op, search.poles);
    certificate = search.certificate;
    stats['poleSearchSeconds'] = search.stats.seconds;
    stats['factorisations'] = search.stats.factorisations;
    if (task.kind === 'pole-search' && (task.threads ?? 1) > 1) stats['threads'] = task.threads!;
  }
  const points = task.kind === 'pole-search' ? task.spectrumPoints : task.window.points;
  const pairs: { from: number; to: number }[] = [];
  for (let a = 0; a < op.leadCount; a++) for (let b = 0; b < op.leadCount; b++) if (a !== b) pairs.push({ from: a, to: b });
  const base = 1 - spectrumShare;
  const result = (spectrum: EngineSpectrum): EngineTaskResult => {
    stats['seconds'] = (performance.now() - started) / 1000;
    return {
      engineVersion: ENGINE_VERSION,
      thresholds,
      leadNames: system.leads.map((l) => l.name),
      grid: { nx: system.model.grid.nx, ny: system.model.grid.ny },
      lattice: system.lattice.kind,
      sites: system.sites,
      poles,
      certificate,
      spectrum,
      stats,
    };
  };
  // A part of a window split over several threads leaves the spectrum to another part.
  if (points === 0) return result({ energies: [], pairs, transmission: pairs.map(() => []), residual: [], reflection: system.leads.map(() => []) });
  const sweep = transmissionSweep(
    op,
    {
      emin,
      emax,
      points,
      refine: { maxPoints: (task.kind === 'transmission' ? task.maxPoints : undefined) ?? spectrumBudget(task.kind, points) },
      // Every listed pole's peak on the curve: samples at E and E ± Γ/2 of each.
      anchors: poleAnchors(poles),
    },
    { ...control, onProgress: (stage, f) => control.onProgress?.(stage, base + spectrumShare * f) },
  );
  const spectrum: EngineSpectrum = {
    energies: sweep.points.map((p) => p.energy),
    pairs,
    transmission: pairs.map(({ from, to }) => sweep.points.map((p) => p.transmission[from][to])),
    residual: sweep.points.map((p) => p.currentResidual),
    reflection: system.leads.map((_, l) => sweep.points.map((p) => p.reflection[l])),
  };
  stats['spectrumPoints'] = sweep.points.length;
  stats['spectrumBudgetExhausted'] = sweep.budgetExhausted;
  stats['spectrumPoleSamples'] = sweep.anchors;
  stats['worstCurrentResidual'] = sweep.worstCurrentResidual;
  return result(spectrum);
}
