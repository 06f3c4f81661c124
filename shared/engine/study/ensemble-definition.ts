/**
 * A tolerance ensemble: a nominal model and the imperfections a process makes,
 * sampled N times with recorded seeds (docs/physics-model.md, "Tolerance ensembles").
 * Realisation 0 is the nominal model; realisation r ≥ 1 applies, in this order,
 * 1. jitter: each listed number (a dimension, a lead's width, a gate's value) plus
 *    σ·g with g a standard normal deviate (lead widths rounded to whole sites, at least 1);
 * 2. disorder: every disorder term of the potential gets a fresh seed;
 * 3. edge roughness (edge-roughness.ts) on the jittered, rasterised cavity, which
 *    then becomes a bitmap shape.
 * All random numbers of realisation r come from its seed realisationSeed(seed, r), so
 * a realisation is reproduced from (model, definition, r) alone.
 */
import { type CavityModel } from '../../model/cavity-model';
import { validateCavityModel } from '../../model/model-validation';
import type { PoleWindow } from '../pole-types';
import { numberAtPath, withNumberAtPath } from './model-path';
import { maskToBitmap, roughenMask, type RoughnessSpec } from './edge-roughness';
import { realisationSeed, SeededRandom } from './seeded-random';
import type { StepSearchOptions } from './study-step';

/** Most realisations one ensemble may have. */
const MAX_REALISATIONS = 1000;

export type JitterKind = 'dimension' | 'lead-width' | 'gate-offset';

export interface JitterSpec {
  kind: JitterKind;
  /** Dotted path to the number that varies, e.g. `shape.radius`, `leads.0.width`, `potential.1.value`. */
  path: string;
  /** Standard deviation, in the unit of the number (nm, sites, meV). */
  sigma: number;
}

export interface Range {
  min?: number;
  max?: number;
}

export interface EnsembleDefinition {
  model: unknown;
  window: PoleWindow;
  search?: StepSearchOptions;
  realisations: number;
  seed: number;
  roughness?: RoughnessSpec | null;
  jitter?: JitterSpec[];
  /** A fresh seed for every disorder term in each realisation. */
  disorder?: boolean;
  /** The resonance to follow: the nominal pole nearest this energy (meV). */
  follow: { energy: number };
  /** What a fabrication candidate must meet: E and Γ in meV, Q dimensionless. */
  tolerances?: { energy?: Range; width?: Range; quality?: Range };
  /** Histogram bins (default ⌈√N⌉ within 5..30). */
  bins?: number;
}

/** What was drawn for one realisation. */
export interface RealisationRecord {
  realisation: number;
  seed: number;
  jitter: { path: string; kind: JitterKind; value: number; delta: number }[];
  roughness: { added: number; removed: number; droppedIslands: number } | null;
  disorderSeeds: number[];
}

export function checkEnsembleDefinition(def: EnsembleDefinition): void {
  if (!Number.isInteger(def.realisations) || def.realisations < 1 || def.realisations > MAX_REALISATIONS) {
    throw new RangeError(`realisations: an integer from 1 to ${MAX_REALISATIONS}`);
  }
  if (!Number.isInteger(def.seed) || def.seed < 0 || def.seed > 0xffffffff) throw new RangeError('seed: an integer from 0 to 4294967295');
  (def.jitter ?? []).forEach((j, k) => {
    try {
      numberAtPath(def.model, j.path);
    } catch (err) {
      throw new RangeError(`jitter[${k}].path: ${(err as Error).message}`, { cause: err });
    }
    if (!(j.sigma >= 0) || !Number.isFinite(j.sigma)) throw new RangeError(`jitter[${k}].sigma: a number ≥ 0`);
  });
  if (def.roughness && (!(def.roughness.rmsNm >= 0) || !(def.roughness.correlationNm >= 0)))
    throw new RangeError('roughness: rmsNm and correlationNm must be ≥ 0');
  const w = def.window;
  if (!(w.emax > w.emin)) throw new RangeError('window.emax must be above window.emin');
  if (!(w.gammaMax > 0)) throw new RangeError('window.gammaMax must be positive');
  if (!Number.isFinite(def.follow.energy)) throw new RangeError('follow.energy: a number (meV)');
}

/**
 * The model of realisation r and what was drawn for it. Throws InvalidModelError-free
 * RangeErrors only for a bad definition; a jittered model that breaks the model's
 * rules (a lead past the edge) is returned as is and fails in its step.
 */
export function realisationModel(def: EnsembleDefinition, r: number): { model: unknown; record: RealisationRecord } {
  const seed = r === 0 ? 0 : realisationSeed(def.seed, r);
  const record: RealisationRecord = { realisation: r, seed, jitter: [], roughness: null, disorderSeeds: [] };
  if (r === 0) return { model: def.model, record };
  const rng = new SeededRandom(seed);
  let doc = def.model;
  for (const j of def.jitter ?? []) {
    const nominal = numberAtPath(def.model, j.path);
    const g = rng.normal();
    let value = nominal + j.sigma * g;
    if (j.kind === 'lead-width') value = Math.max(1, Math.round(value));
    if (j.kind === 'dimension' && value <= 0) value = nominal * 1e-3;
    doc = withNumberAtPath(doc, j.path, value);
    record.jitter.push({ path: j.path, kind: j.kind, value, delta: value - nominal });
  }
  if (def.disorder) {
    const copy = structuredClone(doc) as { potential?: { kind: string; seed?: number }[] };
    for (const term of copy.potential ?? []) {
      if (term.kind !== 'disorder') continue;
      term.seed = Math.floor(rng.uniform() * 0xffffffff) >>> 0;
      record.disorderSeeds.push(term.seed);
    }
    doc = copy;
  }
  if (def.roughness && def.roughness.rmsNm > 0) {
    const checked = validateCavityModel(doc);
    if (!checked.ok) return { model: doc, record };
    const m: CavityModel = checked.model;
    const rough = roughenMask(checked.mask, m.grid.nx, m.grid.ny, m.spacing, m.leads, def.roughness, Math.floor(rng.uniform() * 0xffffffff) >>> 0);
    record.roughness = { added: rough.added, removed: rough.removed, droppedIslands: rough.droppedIslands };
    doc = { ...(doc as object), shape: maskToBitmap(rough.mask, m.grid.nx, m.grid.ny) };
  }
  return { model: doc, record };
}
