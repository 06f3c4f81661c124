/**
 * The general tight-binding builder: the sites of a mask placed by a lattice preset
 * (shared/model/lattice-geometry.ts), onsite energies, nearest and next-nearest hoppings,
 * and the Peierls phase of every bond from the field (docs/physics-model.md, "Lattices"):
 *   H[s,s]   = E0 + σ_s·Δ + V(s),           σ = +1 on sublattice A, −1 on B,
 *   H[s',s]  = −t·e^{iΛ(s→s')} (nearest),   −t'·e^{iΛ(s→s')} (next-nearest),
 *   Λ(r0→r1) = (q/ħ)∫A·dl = π·(B/(h/e))·(x1 − x0)(y1 + y0)   (positions in nm),
 * the straight-line integral of the engine's Landau gauge A = (−B·y, 0) for charge q = −e
 * (gauge.ts); on the square lattice Λ = 2πφ·j on a +x bond, the contract's phase.
 * E0 = 4t on the square lattice (band bottom at 0), 0 on the honeycomb (Dirac point at
 * 3t' when t' ≠ 0: E(k) = ±t|f(k)| − t'(|f(k)|² − 3), Castro Neto et al., Rev. Mod. Phys.
 * 81, 109 (2009), eq. 6). Energies in meV, lengths in nm, field in T.
 */
import { FLUX_QUANTUM_T_NM2 } from '../units/constants';
import { placementOf, type SitePlacement } from '../model/lattice-geometry';
import { modelHopping, modelLattice, type CavityModel } from '../model/cavity-model';
import { indexSites, type CavityLattice } from './lattice';

export interface TightBindingParameters {
  placement: SitePlacement;
  /** Nearest-neighbour hopping t (meV). */
  hopping: number;
  /** Onsite energy E0 of every site before Δ and V (meV). */
  onsiteOffset: number;
  /** Sublattice potential Δ (meV): +Δ on A, −Δ on B. */
  sublattice?: number;
  /** Next-nearest hopping t' (meV). */
  nextHopping?: number;
  /** Field B (T) along +z. */
  field: number;
}

/** The Peierls phase Λ(r0 → r1) of the Landau gauge A = (−B·y, 0), positions in nm. Cost O(1). */
export function landauPhase(field: number, x0: number, y0: number, x1: number, y1: number): number {
  return ((Math.PI * field) / FLUX_QUANTUM_T_NM2) * (x1 - x0) * (y1 + y0);
}

/** The onsite energy of grid site (i, j) before the potential V (meV). */
export function presetOnsite(p: TightBindingParameters, i: number, j: number): number {
  const delta = p.sublattice ?? 0;
  return p.onsiteOffset + (delta === 0 ? 0 : p.placement.sublattice(i, j) === 0 ? delta : -delta);
}

/**
 * Visits every bond of the preset leaving grid site (i, j) once per bond: the
 * nearest-neighbour ones (hopping t) then the next-nearest ones (t', when not 0).
 */
export function forEachPresetBond(p: TightBindingParameters, i: number, j: number, visit: (di: number, dj: number, hopping: number) => void): void {
  for (const [di, dj] of p.placement.nearestForward(i, j)) visit(di, dj, p.hopping);
  const t2 = p.nextHopping ?? 0;
  if (t2 !== 0) for (const [di, dj] of p.placement.nextForward(i, j)) visit(di, dj, t2);
}

/**
 * The lattice of a mask on the preset's lattice: unknowns in lexicographic (i, j) order,
 * every bond between two cavity sites once. Cost O(nx·ny + bonds).
 * @param potential V(s) (meV) per unknown, or undefined for V = 0
 */
export function buildTightBinding(mask: Uint8Array, nx: number, ny: number, p: TightBindingParameters, potential?: Float64Array): CavityLattice {
  const { siteIndex, sites } = indexSites(mask, nx, ny);
  const n = sites.i.length;
  const pl = p.placement;
  const onsite = new Float64Array(n);
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  for (let s = 0; s < n; s++) {
    const i = sites.i[s];
    const j = sites.j[s];
    onsite[s] = presetOnsite(p, i, j) + (potential ? potential[s] : 0);
    x[s] = pl.x(i, j);
    y[s] = pl.y(i, j);
  }
  const from: number[] = [];
  const to: number[] = [];
  const phase: number[] = [];
  const hop: number[] = [];
  for (let s = 0; s < n; s++) {
    const i = sites.i[s];
    const j = sites.j[s];
    forEachPresetBond(p, i, j, (di, dj, t) => {
      const a = i + di;
      const b = j + dj;
      if (a < 0 || a >= nx || b < 0 || b >= ny) return;
      const r = siteIndex[a * ny + b];
      if (r < 0) return;
      from.push(s);
      to.push(r);
      hop.push(t);
      phase.push(p.field === 0 ? 0 : landauPhase(p.field, x[s], y[s], x[r], y[r]));
    });
  }
  return {
    kind: pl.kind,
    nx,
    ny,
    hopping: p.hopping,
    flux: (p.field * pl.length * pl.length) / FLUX_QUANTUM_T_NM2,
    siteIndex,
    sites,
    positions: { x, y },
    onsite,
    bonds: { from: Int32Array.from(from), to: Int32Array.from(to), phase: Float64Array.from(phase), hopping: Float64Array.from(hop) },
  };
}

/**
 * The Bloch Hamiltonian H(k) of the preset on a periodic cell of `cols` × `rows` grid sites
 * (both must be periods of the lattice: any on the square lattice, even on the honeycomb):
 * H(k)[s',s] = Σ_bonds −t_b·e^{iΛ_b}·e^{−ik·d} with d = (r_s' + R) − r_s the bond vector to
 * the image of s' in cell R, in the convention ψ_s(R) = e^{ik·(R + r_s)}u_s. k in 1/nm.
 * With `ribbon`, the cell repeats along x only: bonds leaving it along y are dropped (a
 * ribbon of `rows` rows with open edges) and the field enters by the Landau-gauge phase Λ_b,
 * which does not change along x. Without it the field must be 0. Dense, row-major,
 * interleaved complex, size (cols·rows)². Cost O(cols·rows·z).
 */
export function blochHamiltonian(p: TightBindingParameters, cols: number, rows: number, kx: number, ky: number, ribbon = false): Float64Array {
  const pl = p.placement;
  if (pl.kind === 'honeycomb' && (cols % 2 || (!ribbon && rows % 2)))
    throw new RangeError('blochHamiltonian: a honeycomb cell needs an even number of columns and rows');
  if (!ribbon && p.field !== 0) throw new RangeError('blochHamiltonian: a field needs the ribbon geometry (periodic along x only, Landau gauge)');
  const m = cols * rows;
  const h = new Float64Array(2 * m * m);
  for (let i = 0; i < cols; i++) {
    for (let j = 0; j < rows; j++) {
      const s = i * rows + j;
      h[2 * (s * m + s)] += presetOnsite(p, i, j);
      forEachPresetBond(p, i, j, (di, dj, t) => {
        const a = i + di;
        const b = j + dj;
        if (ribbon && (b < 0 || b >= rows)) return;
        const r = (((a % cols) + cols) % cols) * rows + (((b % rows) + rows) % rows);
        const x0 = pl.x(i, j),
          y0 = pl.y(i, j),
          x1 = pl.x(a, b),
          y1 = pl.y(a, b);
        // Λ − k·d for the true bond vector d = r(a, b) − r(i, j).
        const th = (p.field === 0 ? 0 : landauPhase(p.field, x0, y0, x1, y1)) - (kx * (x1 - x0) + ky * (y1 - y0));
        const c = Math.cos(th);
        const sn = Math.sin(th);
        h[2 * (r * m + s)] += -t * c;
        h[2 * (r * m + s) + 1] += -t * sn;
        h[2 * (s * m + r)] += -t * c;
        h[2 * (s * m + r) + 1] -= -t * sn;
      });
    }
  }
  return h;
}

/**
 * The tight-binding parameters of a parsed model (energies in meV): the square lattice with
 * t from the material and E0 = 4t, or the honeycomb with its t, Δ, t' (given in eV) and E0 = 0.
 */
export function modelTightBinding(model: CavityModel): TightBindingParameters {
  const lattice = modelLattice(model);
  const t = modelHopping(model);
  if (lattice.kind === 'honeycomb') {
    return {
      placement: placementOf('honeycomb', model.spacing),
      hopping: t,
      onsiteOffset: 0,
      sublattice: 1000 * lattice.sublatticePotential,
      nextHopping: 1000 * lattice.nextHopping,
      field: model.field,
    };
  }
  return { placement: placementOf('square', model.spacing), hopping: t, onsiteOffset: 4 * t, field: model.field };
}
