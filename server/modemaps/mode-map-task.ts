/**
 * The numerical part of a mode-map job, one pure function of its inputs (it runs in a
 * worker thread, mode-map-thread.ts): the state (a stored pole mode, or a scattering
 * state at a real energy), its current map, for a scattering state the local density
 * of states at that energy, and on request the Husimi direction map. The result is
 * JSON with the per-site and per-point arrays as base64 little-endian float32
 * (docs/api.md, "Mode maps").
 */
import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian.js';
import { currentMap, siteOutflow } from '../../shared/engine/current-map.js';
import { resolveState, type StateRequest } from '../../shared/engine/mode-state.js';
import { cavityHusimiMap, summarise } from '../../shared/engine/mode-maps.js';
import { localDensityOfStates } from '../../shared/engine/scattering-state.js';
import type { SheetFlags } from '../../shared/engine/operator.js';
import { ENGINE_VERSION } from '../jobs/engine-task.js';
import { maskBits } from './pole-currents.js';
import type { ModeMapPayload } from '../../shared/api/mode-maps.js';

export interface HusimiParams {
  sigmaNm?: number;
  directions?: number;
  gridNm?: number;
  peakThreshold?: number;
}

export interface ModeMapTask {
  document: unknown;
  state:
    | { kind: 'mode'; energy: number; width: number; mode: Float64Array; sheet: SheetFlags }
    | { kind: 'scattering'; energy: number; lead: number; channel: number };
  husimi: HusimiParams | null;
}

type HusimiPayload = NonNullable<ModeMapPayload['husimi']>;

export type { ModeMapPayload } from '../../shared/api/mode-maps.js';

export function base64Float32(values: ArrayLike<number>): string {
  const f = Float32Array.from(values as ArrayLike<number>);
  return Buffer.from(f.buffer, f.byteOffset, f.byteLength).toString('base64');
}

export function runModeMapTask(task: ModeMapTask, onProgress: (stage: string, fraction: number) => void = () => {}): ModeMapPayload {
  onProgress('building the lattice', 0);
  const system = buildCavitySystem(task.document);
  const op = new EffectiveHamiltonian(system);
  const request: StateRequest = task.state;
  onProgress(task.state.kind === 'scattering' ? 'scattering state' : 'mode', 0.05);
  const state = resolveState(system, op, request);
  const map = currentMap(system.lattice, state.psi, state.leads, { source: state.source, scale: state.scale });
  let residual: number | null = null;
  if (state.kind !== 'pole') {
    let maxBond = 0;
    for (const b of map.bonds) maxBond = Math.max(maxBond, Math.abs(b));
    let worst = 0;
    for (const o of siteOutflow(system.lattice, map, state.leads)) worst = Math.max(worst, Math.abs(o));
    residual = maxBond > 0 ? worst / maxBond : 0;
  }
  let ldos: string | null = null;
  if (task.state.kind === 'scattering') {
    onProgress('local density of states', 0.2);
    ldos = base64Float32(localDensityOfStates(op, task.state.energy));
  }
  let husimi: HusimiPayload | null = null;
  if (task.husimi) {
    const share = 0.65;
    const h = cavityHusimiMap(system, state.psi, {
      ...task.husimi,
      energy: state.energy,
      onProgress: (f) => onProgress('Husimi map', 0.3 + share * f),
    });
    husimi = {
      sigmaNm: h.sigmaNm,
      gridNm: h.gridNm,
      directions: Array.from(h.angles),
      angularResolution: h.angularResolution,
      meanWavenumber: h.meanWavenumber,
      peakThreshold: h.peakThreshold,
      points: base64Float32(h.points),
      distribution: base64Float32(h.distribution),
      vectorSum: base64Float32(h.vectorSum),
      kineticEnergy: base64Float32(h.kineticEnergy),
      peaks: h.peaks.map((p) => ({ point: p.point, angle: p.angle, share: p.share })),
      // The honeycomb's map per valley; a square-lattice payload stays as it was.
      ...('valleys' in h
        ? {
            diracEnergy: h.diracEnergy,
            diracCutoff: h.diracCutoff,
            carrier: base64Float32(h.carrier),
            valleyShare: base64Float32(h.valleyShare),
            valleys: h.valleys.map((v) => ({
              name: v.name,
              centre: v.centre,
              distribution: base64Float32(v.distribution),
              vectorSum: base64Float32(v.vectorSum),
              peaks: v.peaks.map((p) => ({ point: p.point, angle: p.angle, share: p.share })),
            })),
          }
        : {}),
    };
  }
  onProgress('done', 1);
  return {
    engineVersion: ENGINE_VERSION,
    state: summarise(system, state),
    unit: state.unit,
    spacingNm: system.spacing,
    lattice: system.lattice.kind,
    grid: { nx: system.lattice.nx, ny: system.lattice.ny },
    mask: maskBits(system.lattice.nx, system.lattice.ny, system.sites).toString('base64'),
    psi: base64Float32(state.psi),
    vectors: base64Float32(map.siteVectors),
    leads: state.leads.map((l, k) => ({ name: l.name, side: l.side, current: map.leadCurrents[k] })),
    kirchhoffResidual: residual,
    ldos,
    husimi,
  };
}
