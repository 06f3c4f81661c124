/**
 * Eigenvalues of the closed cavity (no leads) nearest a target energy σ, by
 * shift-invert Lanczos on the Hermitian H: the extreme eigenvalues θ of
 * (H − σ)⁻¹ are 1/(λ − σ) for the λ nearest σ (Ericsson & Ruhe, Math. Comp. 35,
 * 1251 (1980); Golub & Van Loan, "Matrix Computations", ch. 10). Full
 * reorthogonalisation keeps the basis orthonormal; converged pairs are locked and
 * the next round runs on the operator deflated by them, so that degenerate
 * eigenvalues (Landau levels, symmetric shapes) are found with their multiplicity.
 * Energies in meV. Cost: one sparse LU of H − σ, then per Lanczos step one solve
 * plus O(n·m) for reorthogonalisation with basis size m.
 */
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { checkCancelled, type WorkControl } from './operator';
import { SingularMatrixError, SparseLuPlan, type SparseLuFactors } from './sparse-lu';
import { applyHamiltonian, hamiltonianCsc, type CavityLattice } from './lattice';
import { siteUniform } from '../model/site-noise';

interface ClosedCavityOptions extends WorkControl {
  /** Target energy σ (meV). */
  target: number;
  /** Number of eigenvalues wanted (clipped to the number of sites). */
  count: number;
  /** Return the eigenvectors too (interleaved complex, unit norm). */
  vectors?: boolean;
  /** Convergence: Lanczos residual bound ≤ tolerance·|θ|; default 1e-10. */
  tolerance?: number;
  /** Largest Lanczos basis per round; default max(2·count + 30, 60). */
  maxBasis?: number;
  /** Seed of the start vectors; default 1. */
  seed?: number;
}

interface ClosedCavityResult {
  /** The `count` eigenvalues nearest the target, ascending (meV). */
  energies: number[];
  /** ‖Hx − λx‖ of each returned pair (meV). */
  residuals: number[];
  vectors?: Float64Array[];
  /** Lanczos steps (one solve each) over all rounds. */
  steps: number;
  rounds: number;
}

interface Pair {
  theta: number;
  vector: Float64Array;
}

function dot(a: Float64Array, b: Float64Array): [number, number] {
  // conj(a)·b
  let re = 0;
  let im = 0;
  for (let k = 0; k < a.length; k += 2) {
    re += a[k] * b[k] + a[k + 1] * b[k + 1];
    im += a[k] * b[k + 1] - a[k + 1] * b[k];
  }
  return [re, im];
}

/** w −= q·(q†w) for every q in the list, twice (classical Gram-Schmidt, repeated: "twice is enough"). */
function orthogonalise(w: Float64Array, basis: readonly Float64Array[]): void {
  for (let pass = 0; pass < 2; pass++) {
    for (const q of basis) {
      const [re, im] = dot(q, w);
      for (let k = 0; k < w.length; k += 2) {
        w[k] -= re * q[k] - im * q[k + 1];
        w[k + 1] -= re * q[k + 1] + im * q[k];
      }
    }
  }
}

function normalise(w: Float64Array): number {
  let s = 0;
  for (let k = 0; k < w.length; k++) s += w[k] * w[k];
  const norm = Math.sqrt(s);
  if (norm > 0) for (let k = 0; k < w.length; k++) w[k] /= norm;
  return norm;
}

/**
 * One Lanczos round on the deflated operator P(H − σ)⁻¹P (P removes the locked
 * vectors). Returns the converged pairs among the `want` Ritz values of largest |θ|.
 */
function lanczosRound(
  lu: SparseLuFactors,
  n: number,
  start: Float64Array,
  locked: readonly Float64Array[],
  want: number,
  maxBasis: number,
  tolerance: number,
  control: WorkControl | undefined,
  counter: { steps: number },
): { converged: Pair[]; restart: Float64Array | null } {
  const basis: Float64Array[] = [];
  const alpha: number[] = [];
  const beta: number[] = [];
  const q = Float64Array.from(start);
  orthogonalise(q, locked);
  if (normalise(q) === 0) return { converged: [], restart: null };
  basis.push(q);
  const limit = Math.min(maxBasis, n - locked.length);
  const w = new Float64Array(2 * n);
  let invariant = false;
  for (;;) {
    checkCancelled(control);
    const j = basis.length - 1;
    lu.solve(basis[j], 1, w);
    counter.steps++;
    orthogonalise(w, locked);
    alpha.push(dot(basis[j], w)[0]);
    // Full reorthogonalisation subsumes the three-term recurrence.
    orthogonalise(w, basis);
    const b = normalise(w);
    const m = basis.length;
    const scale = Math.max(...alpha.map(Math.abs), 1e-300);
    if (b <= 1e-13 * scale) invariant = true;
    const check = invariant || m >= limit || (m >= Math.min(limit, want + 8) && m % 5 === 0);
    if (check) {
      const tri = new Matrix(m, m);
      for (let k = 0; k < m; k++) {
        tri.set(k, k, alpha[k]);
        if (k + 1 < m) {
          tri.set(k, k + 1, beta[k]);
          tri.set(k + 1, k, beta[k]);
        }
      }
      const evd = new EigenvalueDecomposition(tri, { assumeSymmetric: true });
      const theta = evd.realEigenvalues;
      const y = evd.eigenvectorMatrix;
      const order = theta.map((_, k) => k).sort((x, z) => Math.abs(theta[z]) - Math.abs(theta[x]));
      const top = order.slice(0, Math.min(want, m));
      const ok = top.map((k) => (invariant ? 0 : b * Math.abs(y.get(m - 1, k))) <= tolerance * Math.abs(theta[k]));
      const done = ok.every(Boolean);
      if (done || invariant || m >= limit) {
        const ritz = (k: number) => {
          const x = new Float64Array(2 * n);
          for (let c = 0; c < m; c++) {
            const f = y.get(c, k);
            const qc = basis[c];
            for (let e = 0; e < x.length; e++) x[e] += f * qc[e];
          }
          normalise(x);
          return x;
        };
        const converged: Pair[] = [];
        let restart: Float64Array | null = null;
        top.forEach((k, idx) => {
          if (ok[idx]) converged.push({ theta: theta[k], vector: ritz(k) });
          else {
            // Restart from the sum of the wanted Ritz vectors not yet converged.
            const x = ritz(k);
            if (!restart) restart = x;
            else for (let e = 0; e < x.length; e++) restart[e] += x[e];
          }
        });
        return { converged, restart: done ? null : restart };
      }
    }
    beta.push(b);
    basis.push(Float64Array.from(w));
  }
}

/**
 * The `count` eigenvalues of the closed-cavity H nearest `target` (and optionally
 * eigenvectors). Throws RangeError on bad options.
 */
export function closedCavityEigenvalues(lattice: CavityLattice, options: ClosedCavityOptions): ClosedCavityResult {
  let target = options.target;
  const n = lattice.onsite.length;
  if (!Number.isFinite(target)) throw new RangeError(`closed cavity: target must be a finite energy in meV, got ${target}`);
  if (!Number.isInteger(options.count) || options.count < 1) throw new RangeError(`closed cavity: count must be a positive integer, got ${options.count}`);
  const count = Math.min(options.count, n);
  const tolerance = options.tolerance ?? 1e-10;
  const maxBasis = Math.max(options.maxBasis ?? Math.max(2 * count + 30, 60), count + 2);
  const seed = options.seed ?? 1;
  const h = hamiltonianCsc(lattice);
  const plan = SparseLuPlan.analyse(n, h.colPtr, h.rowIdx, { sites: lattice.sites });
  const shifted = (sigma: number) => {
    const values = Float64Array.from(h.values);
    for (let c = 0; c < n; c++) {
      for (let e = h.colPtr[c]; e < h.colPtr[c + 1]; e++) if (h.rowIdx[e] === c) values[2 * e] -= sigma;
    }
    return plan.factor(values);
  };
  let lu: SparseLuFactors;
  try {
    lu = shifted(target);
  } catch (err) {
    if (!(err instanceof SingularMatrixError)) throw err;
    // The target is an eigenvalue to rounding: move off it by a hair; the answer is unchanged.
    target += 1e-9 * Math.max(lattice.hopping, Math.abs(target));
    lu = shifted(target);
  }

  const locked: Pair[] = [];
  const counter = { steps: 0 };
  let rounds = 0;
  let start: Float64Array | null = null;
  const maxRounds = 4 * count + 20;
  while (rounds < maxRounds) {
    checkCancelled(options);
    if (!start) {
      start = new Float64Array(2 * n);
      for (let k = 0; k < 2 * n; k++) start[k] = siteUniform(seed + 7919 * rounds, k, 17) - 0.5;
    }
    const round = lanczosRound(
      lu,
      n,
      start,
      locked.map((p) => p.vector),
      count,
      maxBasis,
      tolerance,
      options,
      counter,
    );
    rounds++;
    const kth = locked.length >= count ? Math.abs([...locked].sort((a, b) => Math.abs(b.theta) - Math.abs(a.theta))[count - 1].theta) : 0;
    const best = round.converged.reduce((m, p) => Math.max(m, Math.abs(p.theta)), 0);
    locked.push(...round.converged);
    options.onProgress?.('closed cavity', Math.min(0.99, locked.length / (count + 1)));
    if (locked.length >= n) break;
    if (round.restart) {
      // Not converged within the basis: continue from the unconverged Ritz vectors.
      start = round.restart;
      continue;
    }
    start = null;
    // Stop when the deflated operator has nothing nearer σ than the count-th locked value.
    if (locked.length >= count && (round.converged.length === 0 || best <= kth)) break;
  }
  locked.sort((a, b) => Math.abs(b.theta) - Math.abs(a.theta));
  const chosen = locked.slice(0, count).map((p) => ({ energy: target + 1 / p.theta, vector: p.vector }));
  chosen.sort((a, b) => a.energy - b.energy);
  const hx = new Float64Array(2 * n);
  const residuals = chosen.map(({ energy, vector }) => {
    applyHamiltonian(lattice, vector, hx);
    let s = 0;
    for (let k = 0; k < hx.length; k++) s += (hx[k] - energy * vector[k]) ** 2;
    return Math.sqrt(s);
  });
  options.onProgress?.('closed cavity', 1);
  return {
    energies: chosen.map((c) => c.energy),
    residuals,
    vectors: options.vectors ? chosen.map((c) => c.vector) : undefined,
    steps: counter.steps,
    rounds,
  };
}
