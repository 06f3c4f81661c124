/**
 * Solves with a finished multifrontal LU (sparse-lu.ts): P·A·Q = L·U stored front by
 * front, each front's L panel (m×k) and U12 block (k×(m−k)) with the original unknowns
 * of its rows and columns. A X = B runs a forward sweep over the fronts in postorder
 * (L y = P b) and a backward sweep (U w = y); Aᵀ X = B the transposed pair. Each front
 * gathers its rows of all right-hand sides into one dense block and runs the dense
 * triangular kernels of dense-complex.ts on it. Also log det A and the pivot ratio.
 */
import {
  lowerSolveFront,
  lowerSolveFrontPair,
  lowerTransposeSolveFront,
  upperSolveFront,
  upperSolveFrontPair,
  upperTransposeSolveFront,
} from './dense-complex';

/** Solve work arrays: a copy of the right-hand sides and one front's dense block. */
export class SolveScratch {
  work = new Float64Array(0);
  local = new Float64Array(0);
}

/**
 * Factors kept in a plan's WebAssembly memory (lu-numeric-factorisation.ts): views of
 * them, taken afresh on each call (growing that memory detaches older views).
 */
export interface FactorSlot {
  store(): Float64Array;
  index(): Int32Array;
}

/** Storage a released factorisation hands to the next factor() of its plan. */
export interface FactorStorage {
  store: Float64Array;
  index: Int32Array;
  valOff: Float64Array;
  idxOff: Int32Array;
  frontDim: Int32Array;
  pivots: Int32Array;
}

export class SparseLuFactors {
  readonly n: number;
  /** How many times a pivot column was passed up to a parent front (0 when no pivot was rejected). */
  readonly delayedPivots: number;
  /** True when the matrix was complex symmetric and only diagonal pivots were taken (SparseLuPlan.factor). */
  symmetric = false;
  private readonly maxFront: number;
  private released = false;
  /** While set, the factors are in the plan's kernel memory (store and index are empty until detachFromSlot). */
  private slot: FactorSlot | null;

  /** @internal Built by SparseLuPlan.factor. */
  constructor(
    n: number,
    private store: Float64Array,
    private index: Int32Array,
    private readonly valOff: Float64Array,
    private readonly idxOff: Int32Array,
    private readonly frontDim: Int32Array,
    private readonly pivots: Int32Array,
    delayedPivots: number,
    private readonly scratch: SolveScratch,
    slot: FactorSlot | null = null,
  ) {
    this.n = n;
    this.slot = slot;
    this.delayedPivots = delayedPivots;
    let mx = 0;
    for (let s = 0; s < frontDim.length; s++) if (frontDim[s] > mx) mx = frontDim[s];
    this.maxFront = mx;
  }

  /** @internal True while the factors are in the plan's kernel memory and this factorisation is held. */
  get inSlot(): boolean {
    return this.slot !== null && !this.released;
  }

  /**
   * @internal The plan needs its kernel memory for another factorisation: the factors
   * move into arrays of this factorisation's own (copies of the first valLen / idxLen entries).
   */
  detachFromSlot(valLen: number, idxLen: number): void {
    if (!this.slot) return;
    this.store = this.slot.store().slice(0, valLen);
    this.index = this.slot.index().slice(0, idxLen);
    this.slot = null;
  }

  /** The factor values and index lists, wherever they are now. */
  private arrays(): { store: Float64Array; index: Int32Array } {
    const slot = this.slot;
    return slot ? { store: slot.store(), index: slot.index() } : { store: this.store, index: this.index };
  }

  /** @internal Hands this factorisation's storage to SparseLuPlan.factor(values, reuse) and releases it. */
  takeStorage(planScratch: SolveScratch): FactorStorage {
    if (planScratch !== this.scratch) throw new Error('SparseLuPlan.factor: reuse must be a factorisation of the same plan');
    this.assertHeld('SparseLuPlan.factor (reuse)');
    this.released = true;
    const { store, index, valOff, idxOff, frontDim, pivots } = this;
    return { store, index, valOff, idxOff, frontDim, pivots };
  }

  private assertHeld(what: string): void {
    if (this.released) {
      throw new Error(`${what}: this factorisation was passed as reuse to a later factor() call and no longer holds its factors`);
    }
  }

  /**
   * Solves A X = B in place or into out; B is column-major n×nrhs, interleaved
   * complex (length 2·n·nrhs; a longer b is fine, only its first 2·n·nrhs doubles
   * are read and, in place, written). Without out the answer replaces b and b is
   * returned; with out, b is left unchanged and out is returned. Each front works on
   * its rows of all right-hand sides at once, two per pass over its factor panel.
   * Cost: 8·nrhs·(2·nnz(L+U)) real flops, about, less for right-hand sides that are
   * zero on most unknowns (fronts with zero pivot rows are skipped going forward);
   * measured at 10,000 sites, 6 right-hand sides cost about 4× one (scripts/bench-lu.ts).
   */
  solve(b: Float64Array, nrhs = 1, out?: Float64Array): Float64Array {
    return this.run(b, nrhs, out, false);
  }

  /** Solves Aᵀ X = B (plain transpose, not conjugate), same layout and cost as solve(). */
  solveTranspose(b: Float64Array, nrhs = 1, out?: Float64Array): Float64Array {
    return this.run(b, nrhs, out, true);
  }

  /**
   * log det A = logAbs + i·arg with arg in (−π, π]: the sum of log u_tt over the
   * pivots plus iπ for an odd number of row and column exchanges. Cost: O(n).
   */
  logDet(): { logAbs: number; arg: number } {
    let logAbs = 0;
    let arg = 0;
    const rowOrder = new Int32Array(this.n);
    const colOrder = new Int32Array(this.n);
    let t = 0;
    this.forEachPivot((re, im, row, col) => {
      const a = Math.abs(re),
        b = Math.abs(im);
      const big = Math.max(a, b),
        small = Math.min(a, b);
      const ratio = small / big;
      logAbs += Math.log(big) + 0.5 * Math.log1p(ratio * ratio);
      arg += Math.atan2(im, re);
      rowOrder[t] = row;
      colOrder[t] = col;
      t++;
    });
    if ((permutationParity(rowOrder) ^ permutationParity(colOrder)) === 1) arg += Math.PI;
    return { logAbs, arg: wrapAngle(arg) };
  }

  /** Smallest |pivot| / largest |pivot|, a cheap conditioning hint (1 for n = 0). */
  pivotRatio(): number {
    let lo = Infinity;
    let hi = 0;
    this.forEachPivot((re, im) => {
      const a = Math.hypot(re, im);
      if (a < lo) lo = a;
      if (a > hi) hi = a;
    });
    return hi > 0 ? lo / hi : 1;
  }

  private forEachPivot(fn: (re: number, im: number, row: number, col: number) => void): void {
    this.assertHeld('SparseLuFactors.logDet/pivotRatio');
    const { valOff, idxOff, frontDim, pivots } = this;
    const { store, index } = this.arrays();
    for (let s = 0; s < frontDim.length; s++) {
      const m = frontDim[s];
      const k = pivots[s];
      const v = valOff[s];
      const ix = idxOff[s];
      for (let t = 0; t < k; t++) {
        const o = v + 2 * (t * m + t);
        fn(store[o], store[o + 1], index[ix + t], index[ix + m + t]);
      }
    }
  }

  private run(b: Float64Array, nrhs: number, out: Float64Array | undefined, transpose: boolean): Float64Array {
    const n = this.n;
    const what = transpose ? 'SparseLuFactors.solveTranspose' : 'SparseLuFactors.solve';
    this.assertHeld(what);
    if (!Number.isInteger(nrhs) || nrhs < 1) throw new RangeError(`${what}: nrhs must be a positive integer, got ${nrhs}`);
    const len = 2 * n * nrhs;
    if (b.length < len) throw new RangeError(`${what}: b has length ${b.length}, expected 2·n·nrhs = ${len}`);
    const x = out ?? b;
    if (x.length < len) throw new RangeError(`${what}: out has length ${x.length}, expected 2·n·nrhs = ${len}`);
    const sc = this.scratch;
    if (sc.work.length < len) sc.work = new Float64Array(len);
    const ll = 2 * this.maxFront * nrhs;
    if (sc.local.length < ll) sc.local = new Float64Array(ll);
    // The factors' index lists hold original unknowns, so no permuted copy is made: the
    // forward sweep works on a copy of b, the backward sweep writes x directly (each
    // unknown once, before any front reads it), which also makes x = b safe.
    const y = sc.work;
    y.set(b.subarray(0, len));
    if (transpose) this.transposeSweeps(y, x, nrhs);
    else this.sweeps(y, x, nrhs);
    return x;
  }

  /**
   * L y = P b (y kept in y at the rows' unknowns), then U w = y (w into x at the columns' unknowns).
   * Each front gathers its rows of all right-hand sides into one dense block (the
   * r-th at offset 2·m·r), runs the dense kernels on pairs of right-hand sides (one
   * load of the factor panel serves two), and scatters back.
   */
  private sweeps(y: Float64Array, x: Float64Array, nrhs: number): void {
    const { valOff, idxOff, frontDim, pivots } = this;
    const { store, index } = this.arrays();
    const X = this.scratch.local;
    const ns = frontDim.length;
    const n2 = 2 * this.n;
    for (let s = 0; s < ns; s++) {
      const m = frontDim[s];
      const k = pivots[s];
      if (k === 0) continue;
      const v = valOff[s];
      const ix = idxOff[s];
      // Zero pivot rows change nothing below them: right-hand sides on a lead's mouth
      // leave most of the tree untouched in this sweep.
      if (allZero(y, n2, index, ix, k, nrhs)) continue;
      gather(y, n2, index, ix, m, X, 0, 2 * m, nrhs);
      let r = 0;
      for (; r + 1 < nrhs; r += 2) lowerSolveFrontPair(store, v, m, k, X, 2 * m * r, 2 * m * (r + 1));
      if (r < nrhs) lowerSolveFront(store, v, m, k, X, 2 * m * r);
      scatter(y, n2, index, ix, m, X, 0, 2 * m, nrhs);
    }
    for (let s = ns - 1; s >= 0; s--) {
      const m = frontDim[s];
      const k = pivots[s];
      if (k === 0) continue;
      const v = valOff[s];
      const ix = idxOff[s];
      gather(y, n2, index, ix, k, X, 0, 2 * m, nrhs);
      gather(x, n2, index, ix + m + k, m - k, X, 2 * k, 2 * m, nrhs);
      let r = 0;
      for (; r + 1 < nrhs; r += 2) upperSolveFrontPair(store, v, m, k, X, 2 * m * r, 2 * m * (r + 1));
      if (r < nrhs) upperSolveFront(store, v, m, k, X, 2 * m * r);
      scatter(x, n2, index, ix + m, k, X, 0, 2 * m, nrhs);
    }
  }

  /** Uᵀ z = Qᵀ b (z kept in z at the columns' unknowns), then Lᵀ w = z (w into x at the rows' unknowns); blocks as in sweeps(). */
  private transposeSweeps(z: Float64Array, x: Float64Array, nrhs: number): void {
    const { valOff, idxOff, frontDim, pivots } = this;
    const { store, index } = this.arrays();
    const X = this.scratch.local;
    const ns = frontDim.length;
    const n2 = 2 * this.n;
    for (let s = 0; s < ns; s++) {
      const m = frontDim[s];
      const k = pivots[s];
      if (k === 0) continue;
      const v = valOff[s];
      const ix = idxOff[s];
      if (allZero(z, n2, index, ix + m, k, nrhs)) continue;
      gather(z, n2, index, ix + m, m, X, 0, 2 * m, nrhs);
      for (let r = 0; r < nrhs; r++) upperTransposeSolveFront(store, v, m, k, X, 2 * m * r);
      scatter(z, n2, index, ix + m, m, X, 0, 2 * m, nrhs);
    }
    for (let s = ns - 1; s >= 0; s--) {
      const m = frontDim[s];
      const k = pivots[s];
      if (k === 0) continue;
      const v = valOff[s];
      const ix = idxOff[s];
      gather(z, n2, index, ix + m, k, X, 0, 2 * m, nrhs);
      gather(x, n2, index, ix + k, m - k, X, 2 * k, 2 * m, nrhs);
      for (let r = 0; r < nrhs; r++) lowerTransposeSolveFront(store, v, m, k, X, 2 * m * r);
      scatter(x, n2, index, ix, k, X, 0, 2 * m, nrhs);
    }
  }
}

/**
 * Copies unknowns index[ix..ix+count) of every right-hand side of v (the r-th
 * at offset r·n2) into the dense block X, the r-th to X[xo + r·ld ...].
 */
function gather(v: Float64Array, n2: number, index: Int32Array, ix: number, count: number, X: Float64Array, xo: number, ld: number, nrhs: number): void {
  for (let r = 0; r < nrhs; r++) {
    const vo = r * n2;
    const dst = xo + r * ld;
    for (let i = 0; i < count; i++) {
      const src = vo + 2 * index[ix + i];
      X[dst + 2 * i] = v[src];
      X[dst + 2 * i + 1] = v[src + 1];
    }
  }
}

/** True when unknowns index[ix..ix+count) are exactly zero in every right-hand side of v. */
function allZero(v: Float64Array, n2: number, index: Int32Array, ix: number, count: number, nrhs: number): boolean {
  for (let r = 0; r < nrhs; r++) {
    const vo = r * n2;
    for (let i = 0; i < count; i++) {
      const o = vo + 2 * index[ix + i];
      if (v[o] !== 0 || v[o + 1] !== 0) return false;
    }
  }
  return true;
}

/** The inverse of gather(): X's rows back to unknowns index[ix..ix+count) of v. */
function scatter(v: Float64Array, n2: number, index: Int32Array, ix: number, count: number, X: Float64Array, xo: number, ld: number, nrhs: number): void {
  for (let r = 0; r < nrhs; r++) {
    const vo = r * n2;
    const src = xo + r * ld;
    for (let i = 0; i < count; i++) {
      const dst = vo + 2 * index[ix + i];
      v[dst] = X[src + 2 * i];
      v[dst + 1] = X[src + 2 * i + 1];
    }
  }
}

/** 0 for an even permutation, 1 for an odd one (by cycle count). Cost: O(n). */
export function permutationParity(p: Int32Array): number {
  const n = p.length;
  const seen = new Uint8Array(n);
  let parity = 0;
  for (let s = 0; s < n; s++) {
    if (seen[s]) continue;
    let len = 0;
    for (let v = s; !seen[v]; v = p[v]) {
      seen[v] = 1;
      len++;
    }
    parity ^= (len - 1) & 1;
  }
  return parity;
}

/** Reduces an angle to (−π, π]. */
export function wrapAngle(a: number): number {
  const twoPi = 2 * Math.PI;
  let r = a - twoPi * Math.round(a / twoPi);
  if (r <= -Math.PI) r += twoPi;
  if (r > Math.PI) r -= twoPi;
  return r;
}
