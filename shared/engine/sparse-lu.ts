/**
 * Sparse complex LU of T(z) = z − H − Σ(z): a multifrontal factorisation
 * (Duff & Reid 1983, "The multifrontal solution of indefinite sparse symmetric
 * linear equations", ACM TOMS 9; Liu 1992, "The multifrontal method for sparse
 * matrix solution: theory and practice", SIAM Review 34) on the structurally
 * symmetric pattern, with threshold partial pivoting and delayed pivots.
 *
 * The phases live in their own files: lu-symbolic-analysis.ts (steps 2–4 below),
 * lu-numeric-factorisation.ts (the numeric factorisation), lu-solves.ts (solves,
 * log det, pivot ratio with a finished factorisation).
 *
 * Analysis (once per pattern, SparseLuPlan.analyse):
 *  1. a fill-reducing ordering: nested dissection (ordering.ts, geometric when sites
 *     are given) and approximate minimum degree (minimum-degree.ts), steps 2–4 run for
 *     both and the one predicting fewer flops kept;
 *  2. elimination tree of the symmetric pattern (Liu 1986, ACM TOMS 12), postorder;
 *  3. column counts of L by row subtrees, fundamental supernodes, then relaxed
 *     amalgamation of small supernodes into their parents (fewer, larger dense
 *     fronts: JavaScript pays per front, dense kernels are cheap);
 *  4. the index list of every front, the map of each child's contribution block
 *     into its parent, and where every matrix entry is assembled.
 *
 * Numeric factorisation (SparseLuPlan.factor, thousands of times per pattern):
 * fronts in postorder; each is assembled from the matrix entries and its
 * children's contribution blocks (extend-add), its fully-summed block is factorised
 * by factorFront (dense-complex.ts), the Schur complement goes on a stack for the
 * parent, except for a parent's last child (postorder puts the parent right after
 * it): two front buffers alternate, so that block is extend-added in place. A
 * finished factorisation may be passed back (factor(values, reuse)) so the next one
 * writes into its storage instead of allocating and faulting in fresh memory.
 *
 * Pivoting: within a front, rows may be exchanged among the fully-summed rows. A
 * pivot is accepted when |a_rp| ≥ u·max_r |a_rp| over its whole front column, u =
 * pivotThreshold (default 0.1, growth ≤ (1 + 1/u) per elimination step). A column
 * without an acceptable pivot is delayed to the parent front together with one
 * unused row, so a zero or tiny diagonal does not stop the factorisation; it only
 * makes the fronts above it larger. At a root nothing can be delayed: a remaining
 * column that is exactly zero means the matrix is exactly singular
 * (SingularMatrixError). Limits: many delays make fronts grow (more time and
 * memory than predicted by factorNonzeros/factorFlops); no scaling or static
 * pivoting is done, and a nearly singular matrix factorises without error (see
 * pivotRatio()).
 *
 * Result: P·A·Q = L·U with P, Q the row and column orders of the pivots (equal
 * unless pivoting exchanged rows or delayed columns).
 *
 * Complex symmetric matrices (Aᵀ = A entry for entry, no conjugation: z − H − Σ without
 * a magnetic field, docs/physics-model.md) are factorised with diagonal pivots only and
 * the updates on one triangle of each front (symmetric mode of factorFront in
 * dense-complex.ts): half the flops of the trailing updates, the same pivot test on the
 * diagonal, a rejected column delayed with its own row. The factors keep the layout above
 * (U = D·Lᵀ, P = Q). When a root front is left with a column no diagonal pivot passes
 * for (exact symmetric zero blocks such as [[0, a], [a, 0]]), or more than max(64, n/64)
 * pivots were delayed (graphene near its Dirac point), the matrix is factorised again with
 * row pivoting. factor() checks the symmetry on every call, exactly (O(nnz));
 * options.symmetric = 'never' always uses row pivoting.
 *
 * Kernels: by default each front's assembly, extend-add and dense factorisation run in
 * one call to a WebAssembly module with SIMD (front-kernel-wasm.ts, built from
 * wasm/front-kernel.ts), which also holds the fronts and the contribution-block stack;
 * options.denseKernel = 'typescript' runs the TypeScript loop and dense-complex.ts
 * instead, the reference. Both perform the same floating-point operations in the same
 * order on every entry, so they give the same factors bit for bit.
 */
import { assertCscPattern } from './complex-csc';
import { wasmKernelAvailable } from './front-kernel-wasm';
import { NumericFactorisation } from './lu-numeric-factorisation';
import type { SparseLuFactors } from './lu-solves';
import { analyseFronts } from './lu-symbolic-analysis';
import { minimumDegreeOrder } from './minimum-degree';
import { invertPermutation, nestedDissectionOrder, symmetricAdjacency } from './ordering';

export { SingularMatrixError } from './lu-numeric-factorisation';
export type { SparseLuFactors } from './lu-solves';

interface LuPlanOptions {
  /** Lattice coordinates (column i, row j) of every unknown → geometric nested dissection. */
  sites?: { i: Int32Array; j: Int32Array };
  /** An elimination order to use instead of computing one: perm[k] = original index of the k-th pivot. */
  permutation?: ArrayLike<number>;
  /**
   * Which fill-reducing ordering to compute (without a permutation): 'auto' (default)
   * computes nested dissection and approximate minimum degree and keeps the one whose
   * symbolic analysis predicts fewer flops; or one of them alone.
   */
  ordering?: 'auto' | 'nested-dissection' | 'minimum-degree';
  /** Threshold u in (0, 1] of the pivot test |a_rp| ≥ u·max|a_·p| (default 0.1; 1 = partial pivoting within fronts). */
  pivotThreshold?: number;
  /**
   * Which dense front kernel factorises the fronts: 'wasm' (WebAssembly with SIMD,
   * front-kernel-wasm.ts; the default where the runtime has it) or 'typescript'
   * (dense-complex.ts, the reference). Both give the same factors to rounding.
   */
  denseKernel?: 'wasm' | 'typescript';
  /**
   * 'auto' (default): matrices whose values are exactly symmetric are factorised with
   * diagonal pivots and half the update flops (see above); 'never': row pivoting always.
   */
  symmetric?: 'auto' | 'never';
}

export class SparseLuPlan {
  readonly n: number;
  readonly factorNonzeros: number;
  readonly factorFlops: number;
  /** Predicted real flops of one factorisation of symmetric values (diagonal pivots, one triangle, no delays). */
  readonly symmetricFlops: number;
  /** Number of fronts (supernodes after amalgamation). */
  readonly frontCount: number;
  /** Largest front dimension predicted by the analysis. */
  readonly largestFront: number;

  /** @internal perm[k] = original index of the unknown with label k. */
  readonly perm: Int32Array;
  /** @internal Nonzeros of the analysed pattern (values must have length 2·nnz). */
  readonly nnz: number;
  private readonly numeric: NumericFactorisation;

  private constructor(
    n: number,
    nnz: number,
    perm: Int32Array,
    numeric: NumericFactorisation,
    s: { factorNonzeros: number; factorFlops: number; symmetricFlops: number; frontCount: number; largestFront: number },
  ) {
    this.n = n;
    this.nnz = nnz;
    this.perm = perm;
    this.numeric = numeric;
    this.factorNonzeros = s.factorNonzeros;
    this.factorFlops = s.factorFlops;
    this.symmetricFlops = s.symmetricFlops;
    this.frontCount = s.frontCount;
    this.largestFront = s.largestFront;
  }

  /** Which dense kernel this plan's factorisations use. */
  get denseKernel(): 'wasm' | 'typescript' {
    return this.numeric.denseKernel;
  }

  /**
   * True when factor() would take the symmetric path for these values (finite and exactly
   * complex symmetric; always false with options.symmetric = 'never'). Cost O(nnz).
   */
  takesDiagonalPivots(values: Float64Array): boolean {
    if (values.length !== 2 * this.nnz) {
      throw new RangeError(`SparseLuPlan.takesDiagonalPivots: values has length ${values.length}, expected 2·nnz = ${2 * this.nnz}`);
    }
    return this.numeric.load(values).symmetric;
  }

  /** Factorisations of symmetric values redone with row pivoting (a root without a diagonal pivot, or too many delays). */
  get symmetricFallbacks(): number {
    return this.numeric.symmetricFallbacks;
  }

  /**
   * Ordering and symbolic analysis of an n×n pattern (CSC, rows sorted per column).
   * The pattern is symmetrised (A + Aᵀ) for the analysis; entries present only in
   * Aᵀ are treated as explicit zeros. Cost: O(nnz(L)) time, O(n + nnz) memory
   * beyond the front structure.
   */
  static analyse(n: number, colPtr: Int32Array, rowIdx: Int32Array, options: LuPlanOptions = {}): SparseLuPlan {
    assertCscPattern('SparseLuPlan.analyse', n, colPtr, rowIdx);
    const threshold = options.pivotThreshold ?? 0.1;
    if (!(threshold > 0 && threshold <= 1)) {
      throw new RangeError(`SparseLuPlan.analyse: pivotThreshold must be in (0, 1], got ${threshold}`);
    }
    if (options.sites && (options.sites.i.length !== n || options.sites.j.length !== n)) {
      throw new RangeError(`SparseLuPlan.analyse: sites.i and sites.j must have length n = ${n} (got ${options.sites.i.length}, ${options.sites.j.length})`);
    }
    const graph = symmetricAdjacency(n, colPtr, rowIdx);
    let perm0: Int32Array;
    if (options.permutation) {
      if (options.permutation.length !== n) {
        throw new RangeError(`SparseLuPlan.analyse: permutation has length ${options.permutation.length}, expected n = ${n}`);
      }
      perm0 = Int32Array.from(options.permutation);
      invertPermutation(perm0, 'SparseLuPlan.analyse: permutation');
    } else {
      perm0 = new Int32Array(0);
    }
    const symmetric = options.symmetric ?? 'auto';
    if (symmetric !== 'auto' && symmetric !== 'never') {
      throw new RangeError(`SparseLuPlan.analyse: symmetric must be 'auto' or 'never', got ${String(symmetric)}`);
    }
    const ordering = options.ordering ?? 'auto';
    if (!['auto', 'nested-dissection', 'minimum-degree'].includes(ordering)) {
      throw new RangeError(`SparseLuPlan.analyse: ordering must be 'auto', 'nested-dissection' or 'minimum-degree', got ${String(ordering)}`);
    }
    let analysed: ReturnType<typeof analyseFronts>;
    if (options.permutation) analysed = analyseFronts(graph, perm0, colPtr, rowIdx);
    else {
      // The analysis costs far less than the thousands of factorisations a plan serves,
      // so with 'auto' both orderings are analysed and the one predicting fewer flops kept.
      const candidates: ReturnType<typeof analyseFronts>[] = [];
      if (ordering !== 'minimum-degree') candidates.push(analyseFronts(graph, nestedDissectionOrder(graph, options.sites), colPtr, rowIdx));
      if (ordering !== 'nested-dissection') candidates.push(analyseFronts(graph, minimumDegreeOrder(graph), colPtr, rowIdx));
      analysed = candidates.reduce((best, c) => (c.symbolic.factorFlops < best.symbolic.factorFlops ? c : best));
    }
    const { perm, symbolic } = analysed;
    const kernel = options.denseKernel ?? (wasmKernelAvailable() ? 'wasm' : 'typescript');
    const numeric = new NumericFactorisation(n, perm, symbolic, threshold, kernel);
    // (pairs of entries at transposed places, against which factor() tests the values' symmetry)
    if (symmetric === 'auto') numeric.setSymmetricPairs(transposedPairs(n, colPtr, rowIdx));
    return new SparseLuPlan(n, colPtr[n], perm, numeric, {
      factorNonzeros: symbolic.factorNonzeros,
      factorFlops: symbolic.factorFlops,
      symmetricFlops: symbolic.symmetricFlops,
      frontCount: symbolic.first.length - 1,
      largestFront: symbolic.maxFront,
    });
  }

  /**
   * Numeric factorisation of the matrix with the analysed pattern and these CSC
   * values (interleaved re, im, length 2·nnz). The result owns its storage, so
   * several factorisations of one plan can be alive at once.
   *
   * reuse: a factorisation of this plan that the caller no longer needs; its
   * storage is taken over (no fresh 16·factorNonzeros bytes to allocate and fault
   * in) and it is released: its solve, solveTranspose, logDet and pivotRatio
   * throw from then on. Results are the same with and without reuse.
   * Cost: about factorFlops real flops (half of the update flops for symmetric values),
   * 16·factorNonzeros bytes.
   * @throws RangeError for values of the wrong length or with a non-finite entry,
   *   Error for a reuse from another plan or already released
   * @throws SingularMatrixError when a pivot column is exactly zero
   */
  factor(values: Float64Array, reuse?: SparseLuFactors): SparseLuFactors {
    const nnz = this.nnz;
    if (values.length !== 2 * nnz) {
      throw new RangeError(`SparseLuPlan.factor: values has length ${values.length}, expected 2·nnz = ${2 * nnz}`);
    }
    // Finite and symmetric in one pass (in the kernel's memory with WebAssembly); the entry at
    // fault is searched for only when something is wrong.
    const { finite, symmetric } = this.numeric.load(values);
    if (!finite) {
      for (let e = 0; e < 2 * nnz; e++) {
        if (!Number.isFinite(values[e])) {
          throw new RangeError(`SparseLuPlan.factor: entry ${e >> 1} of the values (${e & 1 ? 'imaginary' : 'real'} part) is ${values[e]}`);
        }
      }
    }
    return this.numeric.factor(values, reuse, symmetric);
  }
}

/**
 * The pairs (e, t) of entries e = (r, c), r < c, and t = (c, r) of a CSC pattern (rows
 * sorted), flat; empty when some entry has no transposed partner (the values can then never
 * be symmetric).
 */
function transposedPairs(n: number, colPtr: Int32Array, rowIdx: Int32Array): Int32Array {
  const pairs: number[] = [];
  for (let c = 0; c < n; c++) {
    for (let e = colPtr[c]; e < colPtr[c + 1]; e++) {
      const r = rowIdx[e];
      let lo = colPtr[r];
      let hi = colPtr[r + 1] - 1;
      while (lo < hi) {
        const mid = (lo + hi) >> 1;
        if (rowIdx[mid] < c) lo = mid + 1;
        else hi = mid;
      }
      if (lo > hi || rowIdx[lo] !== c) return new Int32Array(0);
      if (r < c) pairs.push(e, lo);
    }
  }
  return Int32Array.from(pairs);
}
