/**
 * Gauges of the vector potential for a uniform field B along +z acting on an
 * electron (charge −e), in lattice units (x = i·a, y = j·a). A gauge is given by
 * its straight-line Peierls integral
 *   Λ(r0 → r1) = (q/ħ)∫_{r0}^{r1} A·dl,  q = −e,
 * which is both the phase of a bond, H[s',s] = −t·exp(iΛ(s → s')), and the phase a
 * coherent state with kinetic momentum ħk must carry, φ(r) ∝ exp(i k·(r − r0) +
 * iΛ(r0 → r)), so that (p − qA)φ ≈ ħkφ near r0 (docs/physics-model.md,
 * "Current and Husimi maps"). With eBa²/ħ = 2πφ (φ = B a²/(h/e) per plaquette):
 *   Landau (the engine's), A = (−B·y, 0):  Λ = πφ·(i1 − i0)(j1 + j0)
 *     (so θ((i,j)→(i+1,j)) = 2πφ·j and vertical bonds 0, as in the contract);
 *   symmetric, A = (B/2)(−y, x):           Λ = −πφ·(i0·j1 − i1·j0).
 * The two differ by a gradient, Λ_L − Λ_S = χ(r1) − χ(r0) with χ = πφ·i·j.
 */
import type { CavityLattice } from './lattice';

export interface Gauge {
  readonly name: string;
  /** Λ(r0 → r1) in radians, points in lattice units (i, j), not necessarily on the lattice. */
  lineIntegral(i0: number, j0: number, i1: number, j1: number): number;
}

/** The engine's Landau gauge A = (−B·y, 0), y from row 0. */
export function landauGauge(flux: number): Gauge {
  return { name: 'landau', lineIntegral: (i0, j0, i1, j1) => Math.PI * flux * (i1 - i0) * (j1 + j0) };
}

/** The symmetric gauge A = (B/2)(−y, x) about the grid origin (used to check gauge invariance). */
export function symmetricGauge(flux: number): Gauge {
  return { name: 'symmetric', lineIntegral: (i0, j0, i1, j1) => -Math.PI * flux * (i0 * j1 - i1 * j0) };
}

/**
 * A copy of a lattice whose bond phases are those of another gauge. Together with
 * ψ'_s = exp(i(χ(s)))ψ_s this is the same physical system; currents and Husimi maps
 * must not change. On the square lattice the gauge takes the grid labels (i, j); on
 * another lattice it takes the positions in units of the lattice length ℓ (nm), which
 * is how the engine's Landau gauge writes the honeycomb's bond phases (tight-binding.ts).
 * Cost O(bonds).
 */
export function latticeInGauge(lattice: CavityLattice, gauge: Gauge, length?: number): CavityLattice {
  const { from, to, hopping } = lattice.bonds;
  const phase = new Float64Array(from.length);
  if (lattice.kind === 'square') {
    const { i, j } = lattice.sites;
    for (let b = 0; b < from.length; b++) phase[b] = gauge.lineIntegral(i[from[b]], j[from[b]], i[to[b]], j[to[b]]);
  } else {
    if (!(length! > 0)) throw new RangeError(`latticeInGauge: a ${lattice.kind} lattice needs its length ℓ (nm) to write the gauge with positions`);
    const { x, y } = lattice.positions;
    for (let b = 0; b < from.length; b++) phase[b] = gauge.lineIntegral(x[from[b]] / length!, y[from[b]] / length!, x[to[b]] / length!, y[to[b]] / length!);
  }
  return { ...lattice, bonds: { from, to, phase, hopping } };
}
