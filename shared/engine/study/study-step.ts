/**
 * One step of a parameter study or one realisation of an ensemble: the certified
 * pole search of one model over the study's window, plus (for a study) the Newton
 * continuation of every pole found into the next step's model, which is what links
 * the poles of neighbouring steps (trajectory-linking.ts). A step needs nothing
 * from any other step, so the steps of a study run in any order and on any worker.
 * Cost: one pole search (docs/physics-model.md, "How the pole search works") plus
 * 2–4 LUs per pole for the continuation.
 */
import { buildCavitySystem, EffectiveHamiltonian, type CavitySystem } from '../effective-hamiltonian';
import { findPoles, type PoleSearchResult, type PoleWindow } from '../poles';
import { refinePole } from '../pole-refine';
import { SparseLuPlan } from '../sparse-lu';
import type { NonlinearOperator, WorkControl } from '../operator';
import { moveMode, type SiteList } from './mode-overlap';
import type { StepTransmission } from './study-transmission';

/** The options of every step's pole search (a study uses the same for all steps). */
export interface StepSearchOptions {
  probes?: number;
  seed?: number;
  maxNodes?: number;
}

/** One pole of a step, with its mode on the step's sites (Σ|ψ|² = 1). */
export interface StepPole {
  energy: number;
  width: number;
  petermann: number;
  partialWidths: number[];
  bound: boolean;
  residual: number;
  nearThreshold: { threshold: number; distanceInWidths: number } | null;
  /** ψ_R interleaved (re, im) over the step's sites. */
  mode: Float64Array;
}

/** A pole of this step carried by Newton into the next step's model. */
export interface ContinuedPole {
  /** Index of the pole in this step's list. */
  from: number;
  energy: number;
  width: number;
  /** The continued mode over the next step's sites. */
  mode: Float64Array;
}

export interface StepSearch {
  poles: StepPole[];
  sites: SiteList;
  certified: boolean;
  summary: string;
  factorisations: number;
  seconds: number;
}

export interface StepResult extends StepSearch {
  /** Newton continuations into the next model; null for the last step or a realisation. */
  continued: ContinuedPole[] | null;
  /** Continuations that failed (the pole left the strip, or Newton did not converge). */
  continuationFailures: number;
  continuationFactorisations: number;
  /** The step's row of the transmission map; null without leads to transmit between, absent when no map was asked for. */
  transmission?: StepTransmission | null;
}

/** The certified search of one model (throws InvalidModelError for an invalid document). */
export function searchStep(model: unknown, window: PoleWindow, options: StepSearchOptions = {}, control?: WorkControl): StepSearch {
  const system = buildCavitySystem(model);
  const op = new EffectiveHamiltonian(system);
  const result: PoleSearchResult = findPoles(op, window, { ...options, ...control });
  return {
    poles: result.poles.map((p) => ({
      energy: p.energy,
      width: p.width,
      petermann: p.petermann,
      partialWidths: p.partialWidths,
      bound: p.bound,
      residual: p.residual,
      nearThreshold: p.nearThreshold,
      mode: p.mode,
    })),
    sites: stepSites(system),
    certified: result.certificate.certified,
    summary: result.certificate.summary,
    factorisations: result.stats.factorisations,
    seconds: result.stats.seconds,
  };
}

/**
 * The models between this step and the next: modelAt(f) for f in (0, 1], with
 * modelAt(1) the next step's model (the parameter moved by the fraction f).
 */
type ModelPath = (fraction: number) => unknown;

/** How many times a failed continuation step is halved before the pole counts as lost. */
const MAX_HALVINGS = 3;

/**
 * Carries each pole of `search` into the next model by nonlinear inverse iteration
 * (pole-refine.ts), starting from the pole's z and its mode moved onto the next
 * model's sites and gauge (mode-overlap.ts). When Newton fails (two poles close
 * together slow it down, or the start is too far), the parameter step is halved,
 * up to MAX_HALVINGS times, and the pole is carried through the intermediate models.
 * A pole that still cannot be carried, or leaves its strip, is left out and counted:
 * the next step's certified search is what then decides whether it left the window.
 */
export function continuePoles(
  search: StepSearch,
  path: ModelPath,
  control?: WorkControl,
): { continued: ContinuedPole[]; failures: number; factorisations: number } {
  const counter = { factorisations: 0 };
  const cache = new Map<number, Continuation>();
  const at = (f: number): Continuation => {
    let c = cache.get(f);
    if (!c) {
      c = continuationTarget(path(f));
      cache.set(f, c);
    }
    return c;
  };
  let failures = 0;
  const continued: ContinuedPole[] = [];
  search.poles.forEach((pole, from) => {
    if (control?.signal?.aborted) return;
    const end = carry({ energy: pole.energy, width: pole.width, mode: pole.mode, sites: search.sites }, 0, 1, 0, at, counter);
    if (!end) {
      failures++;
      return;
    }
    continued.push({ from, energy: end.energy, width: end.width, mode: end.mode });
  });
  return { continued, failures, factorisations: counter.factorisations };
}

interface Continuation {
  op: EffectiveHamiltonian;
  plan: SparseLuPlan;
  sites: SiteList;
}

interface Carried {
  energy: number;
  width: number;
  mode: Float64Array;
  sites: SiteList;
}

function continuationTarget(model: unknown): Continuation {
  const system = buildCavitySystem(model);
  const op = new EffectiveHamiltonian(system);
  return { op, plan: SparseLuPlan.analyse(op.n, op.colPtr, op.rowIdx, { sites: op.sites }), sites: stepSites(system) };
}

/** Newton from fraction f0 to f1, halving the interval on failure. */
function carry(p: Carried, f0: number, f1: number, depth: number, at: (f: number) => Continuation, counter: { factorisations: number }): Carried | null {
  const one = newtonInto(p, at(f1), counter);
  if (one) return one;
  if (depth >= MAX_HALVINGS) return null;
  const mid = (f0 + f1) / 2;
  const half = carry(p, f0, mid, depth + 1, at, counter);
  return half ? carry(half, mid, f1, depth + 1, at, counter) : null;
}

function newtonInto(p: Carried, target: Continuation, counter: { factorisations: number }): Carried | null {
  const { op, plan, sites } = target;
  const [lo, hi] = strip(op, p.energy);
  const refined = refinePole(
    { op, plan, sheet: op.sheetAt(p.energy), stripLo: lo, stripHi: hi, tolerance: 1e-12, maxSteps: 8, onFactor: () => counter.factorisations++ },
    p.energy,
    -p.width / 2,
    moveMode(p.mode, p.sites, sites),
  );
  if (!refined || !(refined.residual <= 1e-8)) return null;
  const width = Math.abs(refined.zIm) <= 1e-10 * op.hopping ? 0 : -2 * refined.zIm;
  return { energy: refined.zRe, width, mode: refined.right, sites };
}

/** A step: the search, then the continuation into the next model when there is one. */
export function computeStep(
  model: unknown,
  window: PoleWindow,
  options: StepSearchOptions,
  path: ModelPath | null,
  control?: WorkControl,
  reuse?: StepSearch,
): StepResult {
  const search = reuse ?? searchStep(model, window, options, control);
  if (path === null) return { ...search, continued: null, continuationFailures: 0, continuationFactorisations: 0 };
  const c = continuePoles(search, path, control);
  return { ...search, continued: c.continued, continuationFailures: c.failures, continuationFactorisations: c.factorisations };
}

/** The open threshold interval that contains E (the strip Newton must end in). */
function strip(op: NonlinearOperator, energy: number): [number, number] {
  let lo = -Infinity;
  let hi = Infinity;
  for (const t of op.thresholds) {
    if (t <= energy) lo = t;
    else if (t < hi) hi = t;
  }
  return [lo, hi];
}

/** The site list of a built model (positions, grid and flux, for overlaps and moved modes). */
export function stepSites(system: CavitySystem): SiteList {
  const { nx, ny } = system.model.grid;
  const base = { i: system.sites.i, j: system.sites.j, nx, ny, flux: system.flux };
  if (system.placement.kind === 'square') return base;
  // Off the square lattice the labels are not positions: the symmetric gauge (mode-overlap.ts)
  // is written with the atoms' positions about the grid's centre.
  const pl = system.placement;
  const x = Float64Array.from(system.sites.i, (i, s) => pl.x(i, system.sites.j[s]));
  const y = Float64Array.from(system.sites.j, (j, s) => pl.y(system.sites.i[s], j));
  const length = pl.length;
  return { ...base, positions: { x, y, xc: ((nx - 1) / 2) * pl.dx, yc: ((ny - 1) / 2) * pl.dy, perNm2: system.flux / (length * length) } };
}
