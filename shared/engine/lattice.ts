/**
 * The closed-cavity tight-binding Hamiltonian H on the cavity sites S
 * (docs/physics-model.md, "Lattice and cavity"):
 *   H[s,s] = 4t + V(s),  H[s',s] = −t·exp(iθ(s→s')) for nearest neighbours in S,
 *   θ((i,j)→(i+1,j)) = +2πφ·j, vertical bonds 0, φ = B a²/(h/e)
 * (Landau gauge A = (−B·y, 0), y from row 0, charge −e). Energies in meV.
 * Unknowns are numbered in lexicographic (i, j) order.
 */
import { buildPattern, patternSlot, type SparsityPattern } from './sparsity-pattern';

/** Cavity sites and their bonds; H[to, from] = −t·exp(i·phase) for each listed bond. */
export interface CavityLattice {
  nx: number;
  ny: number;
  /** Hopping t (meV). */
  hopping: number;
  /** Flux per plaquette φ (dimensionless). */
  flux: number;
  /** Grid point i·ny + j → unknown index, −1 outside the cavity. */
  siteIndex: Int32Array;
  sites: { i: Int32Array; j: Int32Array };
  /** H[s,s] = 4t + V(s) (meV). */
  onsite: Float64Array;
  /** Each bond once, `from` → `to` pointing in +x or +y. */
  bonds: { from: Int32Array; to: Int32Array; phase: Float64Array };
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
 * Builds the lattice of a mask. Cost O(nx·ny).
 * @param potential V(s) in meV per unknown (lexicographic order), or undefined for V = 0
 */
export function buildLattice(mask: Uint8Array, nx: number, ny: number, hopping: number, flux: number, potential?: Float64Array): CavityLattice {
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
  return {
    nx,
    ny,
    hopping,
    flux,
    siteIndex,
    sites,
    onsite,
    bonds: { from: Int32Array.from(from), to: Int32Array.from(to), phase: Float64Array.from(phase) },
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
  const t = lattice.hopping;
  for (let s = 0; s < n; s++) values[2 * patternSlot(pattern, s, s)] += scale * lattice.onsite[s];
  const { from, to, phase } = lattice.bonds;
  for (let b = 0; b < from.length; b++) {
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
  const t = lattice.hopping;
  for (let s = 0; s < n; s++) {
    out[2 * s] = lattice.onsite[s] * x[2 * s];
    out[2 * s + 1] = lattice.onsite[s] * x[2 * s + 1];
  }
  const { from, to, phase } = lattice.bonds;
  for (let b = 0; b < from.length; b++) {
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
