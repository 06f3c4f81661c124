/**
 * The closed-cavity tight-binding Hamiltonian H on the cavity sites S, as a list of
 * sites (grid labels, positions, onsite energies) and bonds (hopping, Peierls phase):
 * H[s,s] = onsite(s), H[to,from] = −t_b·exp(iθ_b), H[from,to] its conjugate. Every lattice
 * (square, honeycomb: tight-binding.ts) is described this way, and every driver (sparse
 * LU, pole search, transmission, closed cavity, currents) works from it.
 * The square lattice's own builder here is the fast path (docs/physics-model.md,
 * "Lattice and cavity"):
 *   H[s,s] = 4t + V(s),  H[s',s] = −t·exp(iθ(s→s')) for nearest neighbours in S,
 *   θ((i,j)→(i+1,j)) = +2πφ·j, vertical bonds 0, φ = B a²/(h/e)
 * (Landau gauge A = (−B·y, 0), y from row 0, charge −e). Energies in meV.
 * Unknowns are numbered in lexicographic (i, j) order.
 */
import { buildPattern, patternSlot, type SparsityPattern } from './sparsity-pattern';
import type { LatticeKind } from '../model/lattice-geometry';

/** Cavity sites and their bonds; H[to, from] = −t_b·exp(i·phase) for each listed bond. */
export interface CavityLattice {
  /** Which lattice the sites sit on (lattice-geometry.ts); paths that only know the square lattice check it. */
  kind: LatticeKind;
  nx: number;
  ny: number;
  /** The nearest-neighbour hopping t (meV), the energy scale of tolerances. */
  hopping: number;
  /** Flux B·ℓ²/(h/e) through a square of the lattice length ℓ (a, or a_CC) (dimensionless). */
  flux: number;
  /** Grid point i·ny + j → unknown index, −1 outside the cavity. */
  siteIndex: Int32Array;
  /** Grid labels (i, j) of each unknown. */
  sites: { i: Int32Array; j: Int32Array };
  /** Position of each unknown (nm; lattice units when the square builder is given no spacing). */
  positions: { x: Float64Array; y: Float64Array };
  /** H[s,s] (meV): 4t + V(s) on the square lattice. */
  onsite: Float64Array;
  /**
   * Each bond once. On the square lattice `from` → `to` points in +x or +y; `hopping` is t_b
   * (meV) in H[to,from] = −t_b·e^{iθ}.
   */
  bonds: { from: Int32Array; to: Int32Array; phase: Float64Array; hopping: Float64Array };
}

/** Unknown numbering of a mask (index i·ny + j) in lexicographic (i, j) order. Cost O(nx·ny). */
export function indexSites(mask: Uint8Array, nx: number, ny: number): { siteIndex: Int32Array; sites: { i: Int32Array; j: Int32Array } } {
  const siteIndex = new Int32Array(nx * ny).fill(-1);
  let n = 0;
  for (let s = 0; s < mask.length; s++) if (mask[s]) siteIndex[s] = n++;
  const i = new Int32Array(n);
  const j = new Int32Array(n);
  for (let s = 0; s < mask.length; s++) {
    const k = siteIndex[s];
    if (k >= 0) {
      i[k] = Math.floor(s / ny);
      j[k] = s % ny;
    }
  }
  return { siteIndex, sites: { i, j } };
}

/**
 * Builds the square lattice of a mask (the fast path; tight-binding.ts builds the same
 * lattice from its preset, and tests/engine/tight-binding.test.ts checks they agree). Cost O(nx·ny).
 * @param potential V(s) in meV per unknown (lexicographic order), or undefined for V = 0
 * @param spacing a (nm) for the positions; 1 gives them in lattice units
 */
export function buildLattice(mask: Uint8Array, nx: number, ny: number, hopping: number, flux: number, potential?: Float64Array, spacing = 1): CavityLattice {
  const { siteIndex, sites } = indexSites(mask, nx, ny);
  const n = sites.i.length;
  const onsite = new Float64Array(n);
  for (let s = 0; s < n; s++) onsite[s] = 4 * hopping + (potential ? potential[s] : 0);
  const from: number[] = [];
  const to: number[] = [];
  const phase: number[] = [];
  for (let s = 0; s < n; s++) {
    const i = sites.i[s];
    const j = sites.j[s];
    if (i + 1 < nx) {
      const r = siteIndex[(i + 1) * ny + j];
      if (r >= 0) {
        from.push(s);
        to.push(r);
        phase.push(2 * Math.PI * flux * j);
      }
    }
    if (j + 1 < ny) {
      const u = siteIndex[i * ny + j + 1];
      if (u >= 0) {
        from.push(s);
        to.push(u);
        phase.push(0);
      }
    }
  }
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  for (let s = 0; s < n; s++) {
    x[s] = sites.i[s] * spacing;
    y[s] = sites.j[s] * spacing;
  }
  return {
    kind: 'square',
    nx,
    ny,
    hopping,
    flux,
    siteIndex,
    sites,
    positions: { x, y },
    onsite,
    bonds: { from: Int32Array.from(from), to: Int32Array.from(to), phase: Float64Array.from(phase), hopping: new Float64Array(from.length).fill(hopping) },
  };
}

/** The (row, col) pairs of H: the diagonal and both directions of every bond. */
export function hamiltonianEntries(lattice: CavityLattice): { rows: number[]; cols: number[] } {
  const rows: number[] = [];
  const cols: number[] = [];
  const n = lattice.onsite.length;
  for (let s = 0; s < n; s++) {
    rows.push(s);
    cols.push(s);
  }
  const { from, to } = lattice.bonds;
  for (let b = 0; b < from.length; b++) {
    rows.push(to[b], from[b]);
    cols.push(from[b], to[b]);
  }
  return { rows, cols };
}

/**
 * Adds scale·H into `values` (interleaved complex) laid out on `pattern`, which
 * must contain H's entries. Cost O(nnz(H) log b).
 */
export function addHamiltonian(lattice: CavityLattice, pattern: SparsityPattern, scale: number, values: Float64Array): void {
  const n = lattice.onsite.length;
  for (let s = 0; s < n; s++) values[2 * patternSlot(pattern, s, s)] += scale * lattice.onsite[s];
  const { from, to, phase, hopping } = lattice.bonds;
  for (let b = 0; b < from.length; b++) {
    const t = hopping[b];
    const c = Math.cos(phase[b]);
    const sn = Math.sin(phase[b]);
    // H[to,from] = −t e^{iθ}; H[from,to] is its conjugate (H Hermitian).
    const down = 2 * patternSlot(pattern, to[b], from[b]);
    values[down] += -scale * t * c;
    values[down + 1] += -scale * t * sn;
    const up = 2 * patternSlot(pattern, from[b], to[b]);
    values[up] += -scale * t * c;
    values[up + 1] += scale * t * sn;
  }
}

/** H as a complex CSC matrix (values interleaved re, im). Cost O(nnz log b). */
export function hamiltonianCsc(lattice: CavityLattice): SparsityPattern & { values: Float64Array } {
  const { rows, cols } = hamiltonianEntries(lattice);
  const pattern = buildPattern(lattice.onsite.length, rows, cols);
  const values = new Float64Array(2 * pattern.rowIdx.length);
  addHamiltonian(lattice, pattern, 1, values);
  return { ...pattern, values };
}

/** out = H·x for interleaved complex vectors, straight from the bond list. Cost O(n + bonds). */
export function applyHamiltonian(lattice: CavityLattice, x: Float64Array, out: Float64Array = new Float64Array(x.length)): Float64Array {
  const n = lattice.onsite.length;
  for (let s = 0; s < n; s++) {
    out[2 * s] = lattice.onsite[s] * x[2 * s];
    out[2 * s + 1] = lattice.onsite[s] * x[2 * s + 1];
  }
  const { from, to, phase, hopping } = lattice.bonds;
  for (let b = 0; b < from.length; b++) {
    const t = hopping[b];
    const c = -t * Math.cos(phase[b]);
    const sn = -t * Math.sin(phase[b]);
    const f = 2 * from[b];
    const g = 2 * to[b];
    // out[to] += (c + i sn)·x[from]; out[from] += (c − i sn)·x[to]
    out[g] += c * x[f] - sn * x[f + 1];
    out[g + 1] += c * x[f + 1] + sn * x[f];
    out[f] += c * x[g] + sn * x[g + 1];
    out[f + 1] += c * x[g + 1] - sn * x[g];
  }
  return out;
}
