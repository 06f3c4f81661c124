/**
 * The numerical part of a run, as one pure function of its inputs: it runs in a
 * worker thread (engine-thread.ts) so that the worker process keeps beating its
 * heartbeat and polling the queue while the engine computes.
 */
import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian.js';
import type { WorkControl } from '../../shared/engine/operator.js';
import { findPoles } from '../../shared/engine/poles.js';
import type { CertificatePiece, Pole } from '../../shared/engine/pole-types.js';
import { transmissionSweep } from '../../shared/engine/transmission.js';
import { withCurrents, type RunPole } from '../modemaps/pole-currents.js';

/** Bumped whenever a change of the engine can change computed numbers. */
export const ENGINE_VERSION = 'poleward-engine 0.1.0';

export type EngineTask =
  | { kind: 'pole-search'; document: unknown; window: { emin: number; emax: number; gammaMax: number }; spectrumPoints: number }
  | {
      kind: 'transmission';
      document: unknown;
      window: { emin: number; emax: number; points: number };
      /** Most energies the refinement may use; default spectrumBudget('transmission', points). */
      maxPoints?: number;
    };

export interface EngineSpectrum {
  energies: number[];
  pairs: { from: number; to: number }[];
  transmission: number[][];
  residual: number[];
}

export interface EngineTaskResult {
  engineVersion: string;
  thresholds: number[];
  leadNames: string[];
  grid: { nx: number; ny: number };
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

/** Builds the operator from the model document and computes the run. Throws InvalidModelError for a bad model. */
export function runEngineTask(task: EngineTask, control: WorkControl = {}): EngineTaskResult {
  const started = performance.now();
  const system = buildCavitySystem(task.document);
  const op = new EffectiveHamiltonian(system);
  const { emin, emax } = task.window;
  const thresholds = op.thresholds.filter((e) => e >= emin && e <= emax);
  let poles: RunPole[] = [];
  let certificate: EngineTaskResult['certificate'] = null;
  const stats: Record<string, number | boolean> = { sites: op.n };

  let spectrumShare = 1;
  if (task.kind === 'pole-search') {
    spectrumShare = task.spectrumPoints > 0 ? 0.2 : 0;
    const result = findPoles(op, task.window, {
      ...control,
      onProgress: (stage, f) => control.onProgress?.(stage, (1 - spectrumShare) * f),
    });
    // Mode maps: the current of every pole is part of its run.
    poles = withCurrents(op, result.poles);
    certificate = result.certificate;
    stats['poleSearchSeconds'] = result.stats.seconds;
    stats['factorisations'] = result.stats.factorisations;
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
      sites: system.sites,
      poles,
      certificate,
      spectrum,
      stats,
    };
  };
  // A part of a window split over several threads leaves the spectrum to another part.
  if (points === 0) return result({ energies: [], pairs, transmission: pairs.map(() => []), residual: [] });
  const sweep = transmissionSweep(
    op,
    { emin, emax, points, refine: { maxPoints: (task.kind === 'transmission' ? task.maxPoints : undefined) ?? spectrumBudget(task.kind, points) } },
    { ...control, onProgress: (stage, f) => control.onProgress?.(stage, base + spectrumShare * f) },
  );
  const spectrum: EngineSpectrum = {
    energies: sweep.points.map((p) => p.energy),
    pairs,
    transmission: pairs.map(({ from, to }) => sweep.points.map((p) => p.transmission[from][to])),
    residual: sweep.points.map((p) => p.currentResidual),
  };
  stats['spectrumPoints'] = sweep.points.length;
  stats['spectrumBudgetExhausted'] = sweep.budgetExhausted;
  stats['worstCurrentResidual'] = sweep.worstCurrentResidual;
  return result(spectrum);
}
