/**
 * Current and Husimi maps of one state as plain, JSON-ready reports: what the engine
 * command line prints and the workers store (docs/physics-model.md, "Current and
 * Husimi maps"; docs/api.md for the fields). Lengths in nm, angles in rad from +x
 * counterclockwise, energies in meV.
 */
import { currentMap, siteOutflow } from './current-map';
import type { CavitySystem } from './effective-hamiltonian';
import { husimiMap, type HusimiMap, type HusimiOptions } from './husimi-map';
import { honeycombHusimiMap, type HoneycombHusimiMap } from './husimi-honeycomb';
import type { ModeState } from './mode-state';
import { modelTightBinding } from './tight-binding';

interface StateSummary {
  kind: ModeState['kind'];
  energy: number;
  width: number;
  lead?: number;
  leadName?: string;
  channel?: number;
  label: string;
}

interface CurrentReport {
  state: StateSummary;
  unit: ModeState['unit'];
  spacingNm: number;
  grid: { nx: number; ny: number };
  sites: { i: number[]; j: number[] };
  /** Off the square lattice: the lattice and the sites' positions (nm), since (i, j) are grid labels there. */
  lattice?: string;
  positions?: { x: number[]; y: number[] };
  /** |ψ|² and arg ψ per site. */
  density: number[];
  phase: number[];
  bonds: { from: number[]; to: number[]; current: number[] };
  /** (j_x, j_y) per site. */
  siteVectors: { x: number[]; y: number[] };
  /** Current from the cavity into each lead (a scattering state: T into the others, R − 1 into its own). */
  leads: { name: string; side: string; current: number }[];
  /** Σ|ψ|² in the cavity, and the largest |net outflow| of a site relative to the largest bond current. */
  norm: number;
  kirchhoffResidual: number;
}

export function summarise(system: CavitySystem, state: ModeState): StateSummary {
  return {
    kind: state.kind,
    energy: state.energy,
    width: state.width,
    ...(state.lead !== undefined ? { lead: state.lead, leadName: system.leads[state.lead].name, channel: state.channel } : {}),
    label: state.label,
  };
}

/** The probability current of a state. Cost O(sites + bonds). */
export function currentReport(system: CavitySystem, state: ModeState): CurrentReport {
  const lattice = system.lattice;
  const map = currentMap(lattice, state.psi, state.leads, { source: state.source, scale: state.scale });
  const n = lattice.onsite.length;
  const out = siteOutflow(lattice, map, state.leads);
  let maxBond = 0;
  for (const b of map.bonds) maxBond = Math.max(maxBond, Math.abs(b));
  let residual = 0;
  // A pole loses Γ|ψ_s|²/ħ per site by construction; only real-energy states must balance.
  if (state.kind !== 'pole') for (const o of out) residual = Math.max(residual, Math.abs(o));
  const density: number[] = [];
  const phase: number[] = [];
  for (let s = 0; s < n; s++) {
    density.push(state.psi[2 * s] ** 2 + state.psi[2 * s + 1] ** 2);
    phase.push(Math.atan2(state.psi[2 * s + 1], state.psi[2 * s]));
  }
  const x: number[] = [];
  const y: number[] = [];
  for (let s = 0; s < n; s++) {
    x.push(map.siteVectors[2 * s]);
    y.push(map.siteVectors[2 * s + 1]);
  }
  return {
    state: summarise(system, state),
    unit: state.unit,
    spacingNm: system.spacing,
    grid: { nx: lattice.nx, ny: lattice.ny },
    sites: { i: Array.from(lattice.sites.i), j: Array.from(lattice.sites.j) },
    ...(lattice.kind !== 'square' ? { lattice: lattice.kind, positions: { x: Array.from(lattice.positions.x), y: Array.from(lattice.positions.y) } } : {}),
    density,
    phase,
    bonds: { from: Array.from(lattice.bonds.from), to: Array.from(lattice.bonds.to), current: Array.from(map.bonds) },
    siteVectors: { x, y },
    leads: state.leads.map((l, k) => ({ name: l.name, side: l.side, current: map.leadCurrents[k] })),
    norm: map.norm,
    kirchhoffResidual: maxBond > 0 ? residual / maxBond : 0,
  };
}

/**
 * The Husimi map of a state on the system's own lattice: the square one's, or on the
 * honeycomb the valley-resolved map with the model's Δ and t′ (husimi-honeycomb.ts).
 */
export function cavityHusimiMap(system: CavitySystem, psi: Float64Array, options: HusimiOptions): HusimiMap | HoneycombHusimiMap {
  if (system.lattice.kind === 'square') return husimiMap(system.lattice, system.spacing, psi, options);
  const tb = modelTightBinding(system.model);
  return honeycombHusimiMap(system.lattice, system.spacing, psi, {
    ...options,
    band: { sublattice: tb.sublattice, nextHopping: tb.nextHopping, onsiteOffset: tb.onsiteOffset },
  });
}

interface ValleyReport {
  name: string;
  /** Valley centre (1/nm). */
  centre: [number, number];
  distribution: number[][];
  vectorSum: [number, number][];
  peaks: { point: number; angle: number; share: number; value: number }[];
}

interface HusimiReport {
  state: StateSummary;
  /** On the honeycomb: the lattice, E_D (meV), and per point the carrier (+1, −1, 0 empty) and valley K's share. */
  lattice?: string;
  diracEnergy?: number;
  diracCutoff?: number;
  valleys?: ValleyReport[];
  sigmaNm: number;
  gridNm: number;
  directions: number[];
  angularResolution: number;
  meanWavenumber: number;
  peakThreshold: number;
  /** kineticEnergy: E − V (square), E − V − E_D (honeycomb). */
  points: { x: number; y: number; kineticEnergy: number; total: number; vectorSum: [number, number]; carrier?: number; valleyShare?: number | null }[];
  /** P(point, direction), one row per point. */
  distribution: number[][];
  peaks: { point: number; angle: number; share: number; value: number }[];
}

/** The Husimi direction map of a state. Cost: see husimi-map.ts. */
export function husimiReport(system: CavitySystem, state: ModeState, options: Omit<HusimiOptions, 'energy'>): HusimiReport {
  const m = cavityHusimiMap(system, state.psi, { ...options, energy: state.energy });
  const nDir = m.angles.length;
  const count = m.points.length / 2;
  const distribution: number[][] = [];
  const points: HusimiReport['points'] = [];
  for (let p = 0; p < count; p++) {
    const row = Array.from(m.distribution.subarray(p * nDir, (p + 1) * nDir));
    distribution.push(row);
    points.push({
      x: m.points[2 * p],
      y: m.points[2 * p + 1],
      kineticEnergy: m.kineticEnergy[p],
      total: row.reduce((a, b) => a + b, 0) / nDir,
      vectorSum: [m.vectorSum[2 * p], m.vectorSum[2 * p + 1]],
      ...('valleys' in m ? { carrier: m.carrier[p], valleyShare: Number.isNaN(m.valleyShare[p]) ? null : m.valleyShare[p] } : {}),
    });
  }
  const rows = (values: Float64Array) => Array.from({ length: count }, (_, p) => Array.from(values.subarray(p * nDir, (p + 1) * nDir)));
  const pairs = (values: Float64Array) => Array.from({ length: count }, (_, p): [number, number] => [values[2 * p], values[2 * p + 1]]);
  return {
    state: summarise(system, state),
    ...('valleys' in m
      ? {
          lattice: system.lattice.kind,
          diracEnergy: m.diracEnergy,
          diracCutoff: m.diracCutoff,
          valleys: m.valleys.map((v) => ({
            name: v.name,
            centre: v.centre,
            distribution: rows(v.distribution),
            vectorSum: pairs(v.vectorSum),
            peaks: v.peaks,
          })),
        }
      : {}),
    sigmaNm: m.sigmaNm,
    gridNm: m.gridNm,
    directions: Array.from(m.angles),
    angularResolution: m.angularResolution,
    meanWavenumber: m.meanWavenumber,
    peakThreshold: m.peakThreshold,
    points,
    distribution,
    peaks: m.peaks,
  };
}
