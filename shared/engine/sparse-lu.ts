/**
 * Sparse complex LU of T(z) = z − H − Σ(z): a multifrontal factorisation
 * (Duff & Reid 1983, "The multifrontal solution of indefinite sparse symmetric
 * linear equations", ACM TOMS 9; Liu 1992, "The multifrontal method for sparse
 * matrix solution: theory and practice", SIAM Review 34) on the structurally
 * symmetric pattern, with threshold partial pivoting and delayed pivots.
 *
 * Analysis (once per pattern, SparseLuPlan.analyse):
 *  1. nested-dissection ordering (ordering.ts), geometric when sites are given;
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
 * Kernels: by default the fronts, the extend-add and the contribution-block stack live
 * in a WebAssembly module with SIMD (front-kernel-wasm.ts, built from wasm/front-kernel.ts);
 * options.denseKernel = 'typescript' runs dense-complex.ts instead, the reference. Both
 * perform the same floating-point operations in the same order.
 */
import { assertCscPattern } from './complex-csc';
import {
  factorFront,
  lowerSolveFront,
  lowerSolveFrontPair,
  lowerTransposeSolveFront,
  upperSolveFront,
  upperSolveFrontPair,
  upperTransposeSolveFront,
} from './dense-complex';
import { WasmFrontKernel, wasmKernelAvailable } from './front-kernel-wasm';
import { invertPermutation, nestedDissectionOrder, symmetricAdjacency, type Adjacency } from './ordering';

export interface LuPlanOptions {
  /** Lattice coordinates (column i, row j) of every unknown → geometric nested dissection. */
  sites?: { i: Int32Array; j: Int32Array };
  /** An elimination order to use instead of nested dissection: perm[k] = original index of the k-th pivot. */
  permutation?: ArrayLike<number>;
  /** Threshold u in (0, 1] of the pivot test |a_rp| ≥ u·max|a_·p| (default 0.1; 1 = partial pivoting within fronts). */
  pivotThreshold?: number;
  /**
   * Which dense front kernel factorises the fronts: 'wasm' (WebAssembly with SIMD,
   * front-kernel-wasm.ts; the default where the runtime has it) or 'typescript'
   * (dense-complex.ts, the reference). Both give the same factors to rounding.
   */
  denseKernel?: 'wasm' | 'typescript';
}

/** Thrown when a pivot column is exactly zero after elimination: the matrix is exactly singular. */
export class SingularMatrixError extends Error {
  /** Original index of the unknown whose column had no nonzero pivot. */
  readonly column: number;
  constructor(column: number, detail: string) {
    super(`The matrix is exactly singular: ${detail}`);
    this.name = 'SingularMatrixError';
    this.column = column;
  }
}

/** Supernodes whose merged pivot count stays at or below this are always merged into their parent. */
const AMALGAMATE_ALWAYS = 4;
/** Up to this size, merging is accepted when at most this fraction of the merged front is explicit zeros. */
const AMALGAMATE_SMALL = 16;
const AMALGAMATE_SMALL_ZEROS = 0.3;
/** Any size: merging accepted when at most this fraction of stored entries are explicit zeros. */
const AMALGAMATE_ZEROS = 0.02;

export class SparseLuPlan {
  readonly n: number;
  readonly factorNonzeros: number;
  readonly factorFlops: number;
  /** Number of fronts (supernodes after amalgamation). */
  readonly frontCount: number;
  /** Largest front dimension predicted by the analysis. */
  readonly largestFront: number;

  /** @internal perm[k] = original index of the unknown with label k. */
  readonly perm: Int32Array;
  /** @internal Nonzeros of the analysed pattern (values must have length 2·nnz). */
  readonly nnz: number;
  private readonly threshold: number;
  // Supernodes, numbered in postorder; pivots of s are labels first[s]..first[s+1]-1.
  private readonly first: Int32Array;
  private readonly parent: Int32Array;
  private readonly childPtr: Int32Array;
  private readonly childList: Int32Array;
  private readonly nonfsPtr: Int32Array;
  private readonly nonfs: Int32Array;
  /** For child c: position of each of its non-fully-summed indices in its parent's symbolic front. */
  private readonly relMap: Int32Array;
  private readonly asmPtr: Int32Array;
  private readonly asmEntry: Int32Array;
  private readonly asmRow: Int32Array;
  private readonly asmCol: Int32Array;
  private readonly stackPeak: number;
  // Scratch shared by factorisations (factor() is synchronous, so one at a time).
  private frontA: Float64Array;
  private frontB: Float64Array;
  private readonly cbDim: Int32Array;
  private readonly cbStart: Float64Array;
  private readonly cbLd: Int32Array;
  private readonly delayOut: Int32Array;
  private readonly delayStart: Int32Array;
  /** Work arrays of the solves, shared by every factorisation of this plan (solves are synchronous too). */
  private readonly scratch = new SolveScratch();
  private cbStack: Float64Array;
  private delayStack: Int32Array;
  private map: Int32Array;
  private runs: Int32Array;
  private save: Float64Array;
  private rowList: Int32Array;
  private colList: Int32Array;
  private storeHint = 0;
  private indexHint = 0;
  /** The WebAssembly kernel, whose memory holds frontA, frontB, save, rowList and colList; null for the TypeScript kernel. */
  private readonly wasm: WasmFrontKernel | null;
  /** Byte offsets of those buffers in the kernel's memory, and the front dimension they hold. */
  private wsA = 0;
  private wsB = 0;
  private wsSave = 0;
  private wsRows = 0;
  private wsCols = 0;
  private wsCap = 0;
  private wsMap = 0;
  private wsRuns = 0;
  private wsCb = 0;
  private wsCbLength = 0;

  private constructor(n: number, nnz: number, perm: Int32Array, s: SymbolicFronts, threshold: number, kernel: 'wasm' | 'typescript') {
    this.n = n;
    this.nnz = nnz;
    this.perm = perm;
    this.threshold = threshold;
    this.first = s.first;
    this.parent = s.parent;
    this.childPtr = s.childPtr;
    this.childList = s.childList;
    this.nonfsPtr = s.nonfsPtr;
    this.nonfs = s.nonfs;
    this.relMap = s.relMap;
    this.asmPtr = s.asmPtr;
    this.asmEntry = s.asmEntry;
    this.asmRow = s.asmRow;
    this.asmCol = s.asmCol;
    this.stackPeak = s.stackPeak;
    this.factorNonzeros = s.factorNonzeros;
    this.factorFlops = s.factorFlops;
    this.frontCount = s.first.length - 1;
    this.largestFront = s.maxFront;
    const mx = Math.max(1, s.maxFront);
    // (with the WebAssembly kernel these live in its memory: growWorkspace below)
    const dense = kernel === 'wasm' ? 0 : 2 * mx * mx;
    this.frontA = new Float64Array(dense);
    this.frontB = new Float64Array(dense);
    const ns = this.frontCount;
    this.cbDim = new Int32Array(ns);
    this.cbStart = new Float64Array(ns);
    this.cbLd = new Int32Array(ns);
    this.delayOut = new Int32Array(ns);
    this.delayStart = new Int32Array(ns);
    this.cbStack = new Float64Array(2 * Math.max(1, s.stackPeak));
    this.delayStack = new Int32Array(64);
    this.map = new Int32Array(Math.max(1, n));
    this.runs = new Int32Array(3 * Math.max(1, n));
    this.save = new Float64Array(2 * mx);
    this.rowList = new Int32Array(mx);
    this.colList = new Int32Array(mx);
    this.wasm = kernel === 'wasm' ? new WasmFrontKernel() : null;
    if (this.wasm) {
      // The contribution-block stack, map and runs live in the kernel's memory too (extend-add runs there).
      this.wsMap = this.wasm.reserve(4 * this.map.length);
      this.wsRuns = this.wasm.reserve(4 * this.runs.length);
      this.wsCbLength = this.cbStack.length;
      this.wsCb = this.wasm.reserve(8 * this.wsCbLength);
      this.cbStack = new Float64Array(0);
      this.growWorkspace(mx);
    }
  }

  /** Which dense kernel this plan's factorisations use. */
  get denseKernel(): 'wasm' | 'typescript' {
    return this.wasm ? 'wasm' : 'typescript';
  }

  /**
   * Places the front buffers in the WebAssembly kernel's memory for fronts up to m,
   * keeping the contents of both front buffers (one may hold the Schur complement the
   * next front reads). Growing detaches the old views, so all are taken again.
   */
  private growWorkspace(m: number): void {
    const wasm = this.wasm!;
    const old = this.wsCap;
    const oldA = this.wsA;
    const oldB = this.wsB;
    this.wsA = wasm.reserve(16 * m * m);
    this.wsB = wasm.reserve(16 * m * m);
    this.wsSave = wasm.reserve(16 * m);
    this.wsRows = wasm.reserve(4 * m);
    this.wsCols = wasm.reserve(4 * m);
    this.wsCap = m;
    if (old > 0) {
      wasm.f64(this.wsA, 2 * old * old).set(wasm.f64(oldA, 2 * old * old));
      wasm.f64(this.wsB, 2 * old * old).set(wasm.f64(oldB, 2 * old * old));
    }
    this.takeViews();
  }

  /** A larger contribution-block stack in the kernel's memory, keeping its first `keep` doubles. */
  private growCbStack(need: number, keep: number): void {
    const wasm = this.wasm!;
    const length = Math.max(need, Math.ceil(this.wsCbLength * 1.5));
    const old = this.wsCb;
    this.wsCb = wasm.reserve(8 * length);
    this.wsCbLength = length;
    wasm.f64(this.wsCb, keep).set(wasm.f64(old, keep));
    this.takeViews();
  }

  /** Fresh views of every buffer in the kernel's memory (growing it detaches the old ones). */
  private takeViews(): void {
    const wasm = this.wasm!;
    const m = this.wsCap;
    this.frontA = wasm.f64(this.wsA, 2 * m * m);
    this.frontB = wasm.f64(this.wsB, 2 * m * m);
    this.save = wasm.f64(this.wsSave, 2 * m);
    this.rowList = wasm.i32(this.wsRows, m);
    this.colList = wasm.i32(this.wsCols, m);
    // (lengths as in the constructor: a detached view's length reads 0)
    this.map = wasm.i32(this.wsMap, Math.max(1, this.n));
    this.runs = wasm.i32(this.wsRuns, 3 * Math.max(1, this.n));
    this.cbStack = wasm.f64(this.wsCb, this.wsCbLength);
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
      throw new RangeError(
        `SparseLuPlan.analyse: sites.i and sites.j must have length n = ${n} (got ${options.sites.i.length}, ${options.sites.j.length})`,
      );
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
      perm0 = nestedDissectionOrder(graph, options.sites);
    }
    const { perm, symbolic } = analyseFronts(graph, perm0, colPtr, rowIdx);
    const kernel = options.denseKernel ?? (wasmKernelAvailable() ? 'wasm' : 'typescript');
    return new SparseLuPlan(n, colPtr[n], perm, symbolic, threshold, kernel);
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
   * Cost: about factorFlops real flops, 16·factorNonzeros bytes.
   * @throws RangeError for values of the wrong length or with a non-finite entry,
   *   Error for a reuse from another plan or already released
   * @throws SingularMatrixError when a pivot column is exactly zero
   */
  factor(values: Float64Array, reuse?: SparseLuFactors): SparseLuFactors {
    const nnz = this.nnz;
    if (values.length !== 2 * nnz) {
      throw new RangeError(`SparseLuPlan.factor: values has length ${values.length}, expected 2·nnz = ${2 * nnz}`);
    }
    for (let e = 0; e < 2 * nnz; e++) {
      if (!Number.isFinite(values[e])) {
        throw new RangeError(`SparseLuPlan.factor: entry ${e >> 1} of the values (${e & 1 ? 'imaginary' : 'real'} part) is ${values[e]}`);
      }
    }
    const ns = this.frontCount;
    const { first, parent, childPtr, childList, nonfsPtr, nonfs, relMap, asmPtr, asmEntry, asmRow, asmCol } = this;
    const wasm = this.wasm;
    let valOff: Float64Array;
    let idxOff: Int32Array;
    let frontDim: Int32Array;
    let pivots: Int32Array;
    let store: Float64Array;
    let index: Int32Array;
    if (reuse) {
      const taken = reuse.takeStorage(this.scratch);
      ({ valOff, idxOff, frontDim, pivots, store, index } = taken);
    } else {
      valOff = new Float64Array(ns + 1);
      idxOff = new Int32Array(ns + 1);
      frontDim = new Int32Array(ns);
      pivots = new Int32Array(ns);
      // Delayed pivots enlarge fronts beyond the prediction; the plan remembers the largest
      // storage any factorisation needed so later ones allocate once instead of growing.
      store = new Float64Array(Math.max(this.storeHint, 2 * this.factorNonzeros));
      index = new Int32Array(Math.max(this.indexHint, 2 * (this.nonfs.length + this.n)));
    }
    // Per supernode: its contribution block (where it starts, its column stride), how many of its rows/columns are delayed.
    const { cbDim, cbStart, cbLd, delayOut, delayStart } = this;
    let cbTop = 0;
    let delayTop = 0;
    let delayed = 0;
    let valTop = 0;
    let idxTop = 0;
    // The front just finished, when its parent is the next front: its Schur complement
    // is extend-added straight from there instead of going through the stack.
    let prevFront: Float64Array = this.frontB;
    let prevDirect = -1;

    for (let s = 0; s < ns; s++) {
      const f0 = first[s];
      const k = first[s + 1] - f0;
      const c0 = childPtr[s];
      const c1 = childPtr[s + 1];
      let d = 0;
      for (let t = c0; t < c1; t++) d += delayOut[childList[t]];
      const nf0 = nonfsPtr[s];
      const nfLen = nonfsPtr[s + 1] - nf0;
      const m = k + d + nfLen;
      const kFs = k + d;
      // Two front buffers in turn, so the previous front's Schur complement stays readable.
      // (the stack top only drops before this front's block is pushed: cbTop + m² doubles suffice)
      if (wasm && (m > this.wsCap || cbTop + 2 * m * m > this.wsCbLength)) {
        const prevIsA = prevFront === this.frontA;
        if (m > this.wsCap) this.growWorkspace(m);
        if (cbTop + 2 * m * m > this.wsCbLength) this.growCbStack(cbTop + 2 * m * m, cbTop);
        prevFront = prevIsA ? this.frontA : this.frontB;
      }
      const map = this.map;
      let F = prevFront === this.frontA ? this.frontB : this.frontA;
      if (F.length < 2 * m * m) {
        F = new Float64Array(2 * m * m);
        if (prevFront === this.frontA) this.frontB = F;
        else this.frontA = F;
      }
      if (this.rowList.length < m) this.growLists(m);
      const rowList = this.rowList;
      const colList = this.colList;
      F.fill(0, 0, 2 * m * m);
      for (let q = 0; q < k; q++) {
        rowList[q] = f0 + q;
        colList[q] = f0 + q;
      }
      for (let q = 0; q < nfLen; q++) {
        rowList[kFs + q] = nonfs[nf0 + q];
        colList[kFs + q] = nonfs[nf0 + q];
      }
      // Matrix entries whose first eliminated index lies in this front.
      for (let a = asmPtr[s]; a < asmPtr[s + 1]; a++) {
        let lr = asmRow[a];
        let lc = asmCol[a];
        if (lr >= k) lr += d;
        if (lc >= k) lc += d;
        const e = asmEntry[a];
        const o = 2 * (lc * m + lr);
        F[o] += values[2 * e];
        F[o + 1] += values[2 * e + 1];
      }
      // Extend-add of the children's contribution blocks (on top of the stack, in order,
      // except the last child's when it is still in the other front buffer).
      let off = 0;
      // (a block read in place was never pushed, so it does not move the stack top)
      const firstChildStart = c1 > c0 && childList[c0] !== prevDirect ? cbStart[childList[c0]] : cbTop;
      const firstDelayStart = c1 > c0 ? delayStart[childList[c0]] : delayTop;
      for (let t = c0; t < c1; t++) {
        const c = childList[t];
        const mc = cbDim[c];
        const dc = delayOut[c];
        const ds = delayStart[c];
        for (let q = 0; q < dc; q++) {
          map[q] = k + off + q;
          rowList[k + off + q] = this.delayStack[ds + q];
          colList[k + off + q] = this.delayStack[ds + dc + q];
        }
        const rp = nonfsPtr[c];
        for (let q = dc; q < mc; q++) {
          const rel = relMap[rp + q - dc];
          map[q] = rel < k ? rel : rel + d;
        }
        off += dc;
        const cb = c === prevDirect ? prevFront : this.cbStack;
        const ld = cbLd[c];
        // Runs of consecutive parent positions (separators are labelled contiguously), so
        // each column is added in a few contiguous stretches: [child offset, parent offset, length]·2.
        const runs = this.runs;
        let nRuns = 0;
        for (let ii = 0; ii < mc; ) {
          let len = 1;
          while (ii + len < mc && map[ii + len] === map[ii] + len) len++;
          runs[3 * nRuns] = 2 * ii;
          runs[3 * nRuns + 1] = 2 * map[ii];
          runs[3 * nRuns + 2] = 2 * len;
          nRuns++;
          ii += len;
        }
        if (wasm) {
          const at = c === prevDirect ? (prevFront === this.frontA ? this.wsA : this.wsB) : this.wsCb;
          wasm.extendAdd(F === this.frontA ? this.wsA : this.wsB, m, at + 8 * cbStart[c], ld, mc, this.wsMap, this.wsRuns, nRuns);
          continue;
        }
        let src = cbStart[c];
        for (let jj = 0; jj < mc; jj++) {
          const dst = 2 * map[jj] * m;
          for (let g = 0; g < 3 * nRuns; g += 3) {
            const a = src + runs[g];
            const o = dst + runs[g + 1];
            const len = runs[g + 2];
            for (let q = 0; q < len; q++) F[o + q] += cb[a + q];
          }
          src += ld;
        }
      }
      cbTop = firstChildStart;
      delayTop = firstDelayStart;

      let done: number;
      if (this.wasm) {
        done = this.wasm.factorFront(F === this.frontA ? this.wsA : this.wsB, m, kFs, this.threshold, this.wsRows, this.wsCols, this.wsSave);
      } else {
        if (this.save.length < 2 * m) this.save = new Float64Array(2 * m);
        done = factorFront(F, m, kFs, this.threshold, rowList, colList, this.save);
      }
      if (parent[s] < 0 && done < kFs) {
        const col = this.perm[colList[done]];
        throw new SingularMatrixError(col, `no nonzero pivot is left for column ${col} (front ${s} of ${ns}, ${done} of ${kFs} pivots eliminated)`);
      }

      // Keep L (m×done) and U12 (done×(m−done)) of this front.
      const need = valTop + 2 * done * (2 * m - done);
      if (need > store.length) store = growFloat(store, need);
      // The L panel is contiguous in F (one native copy); U12 is strided.
      const lLen = 2 * done * m;
      store.set(F.subarray(0, lLen), valTop);
      const uLen = 2 * done;
      if (wasm && done > 0 && m > done) {
        // U12 packed by the kernel into the free part of the block stack above its top
        // (there is room: the stack was sized for cbTop + m² above), then one native copy.
        const uCount = uLen * (m - done);
        wasm.copyColumns(this.wsCb + 8 * cbTop, (F === this.frontA ? this.wsA : this.wsB) + 8 * lLen, 8 * uLen, m - done, 16 * m);
        store.set(this.cbStack.subarray(cbTop, cbTop + uCount), valTop + lLen);
      } else {
        let u = valTop + lLen;
        for (let c = done; c < m; c++) {
          const src = 2 * c * m;
          for (let q = 0; q < uLen; q++) store[u + q] = F[src + q];
          u += uLen;
        }
      }
      if (idxTop + 2 * m > index.length) index = growInt(index, idxTop + 2 * m);
      // Original unknowns (not labels), so solves need no permuted copy of b.
      const perm = this.perm;
      for (let q = 0; q < m; q++) {
        index[idxTop + q] = perm[rowList[q]];
        index[idxTop + m + q] = perm[colList[q]];
      }
      valOff[s] = valTop;
      idxOff[s] = idxTop;
      frontDim[s] = m;
      pivots[s] = done;
      valTop = need;
      idxTop += 2 * m;

      // The Schur complement and the delayed rows/columns for the parent.
      const mc = m - done;
      cbDim[s] = mc;
      delayOut[s] = kFs - done;
      delayStart[s] = delayTop;
      prevFront = F;
      prevDirect = -1;
      if (mc > 0 && parent[s] === s + 1) {
        // Postorder puts a parent right after its last child: read this block in place.
        cbStart[s] = 2 * (done * m + done);
        cbLd[s] = 2 * m;
        prevDirect = s;
      } else if (mc > 0) {
        cbStart[s] = cbTop;
        cbLd[s] = 2 * mc;
        if (wasm) {
          wasm.copyColumns(this.wsCb + 8 * cbTop, (F === this.frontA ? this.wsA : this.wsB) + 16 * (done * m + done), 16 * mc, mc, 16 * m);
          cbTop += 2 * mc * mc;
        } else {
          if (cbTop + 2 * mc * mc > this.cbStack.length) this.cbStack = growFloat(this.cbStack, cbTop + 2 * mc * mc);
          const cb = this.cbStack;
          let dst = cbTop;
          for (let c = done; c < m; c++) {
            const src = 2 * (c * m + done);
            for (let q = 0; q < 2 * mc; q++) cb[dst + q] = F[src + q];
            dst += 2 * mc;
          }
          cbTop = dst;
        }
      } else {
        cbStart[s] = cbTop;
        cbLd[s] = 0;
      }
      const dOut = kFs - done;
      delayed += dOut;
      if (dOut > 0) {
        if (delayTop + 2 * dOut > this.delayStack.length) this.delayStack = growInt(this.delayStack, delayTop + 2 * dOut);
        for (let q = 0; q < dOut; q++) {
          this.delayStack[delayTop + q] = rowList[done + q];
          this.delayStack[delayTop + dOut + q] = colList[done + q];
        }
        delayTop += 2 * dOut;
      }
    }
    valOff[ns] = valTop;
    idxOff[ns] = idxTop;
    if (valTop > this.storeHint) this.storeHint = valTop;
    if (idxTop > this.indexHint) this.indexHint = idxTop;
    return new SparseLuFactors(this.n, store, index, valOff, idxOff, frontDim, pivots, delayed, this.scratch);
  }

  private growLists(m: number): void {
    this.rowList = new Int32Array(m);
    this.colList = new Int32Array(m);
  }
}

/** Solve work arrays: a copy of the right-hand sides and one front's dense block. */
class SolveScratch {
  work = new Float64Array(0);
  local = new Float64Array(0);
}

/** Storage a released factorisation hands to the next factor() of its plan. */
interface FactorStorage {
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
  private readonly maxFront: number;
  private released = false;

  /** @internal Built by SparseLuPlan.factor. */
  constructor(
    n: number,
    private readonly store: Float64Array,
    private readonly index: Int32Array,
    private readonly valOff: Float64Array,
    private readonly idxOff: Int32Array,
    private readonly frontDim: Int32Array,
    private readonly pivots: Int32Array,
    delayedPivots: number,
    private readonly scratch: SolveScratch,
  ) {
    this.n = n;
    this.delayedPivots = delayedPivots;
    let mx = 0;
    for (let s = 0; s < frontDim.length; s++) if (frontDim[s] > mx) mx = frontDim[s];
    this.maxFront = mx;
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
      const a = Math.abs(re), b = Math.abs(im);
      const big = Math.max(a, b), small = Math.min(a, b);
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
    const { store, index, valOff, idxOff, frontDim, pivots } = this;
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
    const { store, index, valOff, idxOff, frontDim, pivots } = this;
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
    const { store, index, valOff, idxOff, frontDim, pivots } = this;
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

function growFloat(a: Float64Array, need: number): Float64Array<ArrayBuffer> {
  const b = new Float64Array(Math.max(need, Math.ceil(a.length * 1.5)));
  b.set(a);
  return b;
}

function growInt(a: Int32Array, need: number): Int32Array<ArrayBuffer> {
  const b = new Int32Array(Math.max(need, Math.ceil(a.length * 1.5)));
  b.set(a);
  return b;
}

/** 0 for an even permutation, 1 for an odd one (by cycle count). Cost: O(n). */
function permutationParity(p: Int32Array): number {
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
function wrapAngle(a: number): number {
  const twoPi = 2 * Math.PI;
  let r = a - twoPi * Math.round(a / twoPi);
  if (r <= -Math.PI) r += twoPi;
  if (r > Math.PI) r -= twoPi;
  return r;
}

/** Everything the numeric phase needs about the fronts, from the symbolic analysis. */
interface SymbolicFronts {
  first: Int32Array;
  parent: Int32Array;
  childPtr: Int32Array;
  childList: Int32Array;
  nonfsPtr: Int32Array;
  nonfs: Int32Array;
  relMap: Int32Array;
  asmPtr: Int32Array;
  asmEntry: Int32Array;
  asmRow: Int32Array;
  asmCol: Int32Array;
  stackPeak: number;
  factorNonzeros: number;
  factorFlops: number;
  maxFront: number;
}

/**
 * Elimination tree, postorder, column counts, supernodes with amalgamation, front
 * index lists and assembly maps, for the elimination order perm0.
 * Returns the final order (a postorder of the amalgamated tree, equivalent to perm0
 * in fill) and the front structure in its labels.
 */
function analyseFronts(
  graph: Adjacency,
  perm0: Int32Array,
  colPtr: Int32Array,
  rowIdx: Int32Array,
): { perm: Int32Array; symbolic: SymbolicFronts } {
  const n = graph.n;
  const { ptr, adj } = graph;
  const inv0 = invertPermutation(perm0);

  // Elimination tree with path compression (Liu 1986), labels = positions in perm0.
  const parent0 = new Int32Array(n).fill(-1);
  const ancestor = new Int32Array(n).fill(-1);
  for (let k = 0; k < n; k++) {
    const v = perm0[k];
    for (let e = ptr[v]; e < ptr[v + 1]; e++) {
      let i = inv0[adj[e]];
      while (i !== -1 && i < k) {
        const next = ancestor[i];
        ancestor[i] = k;
        if (next === -1) parent0[i] = k;
        i = next;
      }
    }
  }
  // Column counts of L (diagonal included) by row subtrees: row i of L is the union
  // of the tree paths from each k < i adjacent to i up to i. Cost O(nnz(L)).
  const count0 = new Int32Array(n);
  const mark = new Int32Array(n).fill(-1);
  for (let i = 0; i < n; i++) {
    mark[i] = i;
    count0[i]++;
    const v = perm0[i];
    for (let e = ptr[v]; e < ptr[v + 1]; e++) {
      let k = inv0[adj[e]];
      if (k > i) continue;
      while (mark[k] !== i) {
        mark[k] = i;
        count0[k]++;
        k = parent0[k];
      }
    }
  }
  const post = postorder(parent0);
  const ipost = invertPermutation(post);
  // Labels 1: postorder of the elimination tree.
  const parent1 = new Int32Array(n);
  const count1 = new Int32Array(n);
  for (let t = 0; t < n; t++) {
    const k = post[t];
    parent1[t] = parent0[k] < 0 ? -1 : ipost[parent0[k]];
    count1[t] = count0[k];
  }
  const childCount = new Int32Array(n);
  for (let t = 0; t < n; t++) if (parent1[t] >= 0) childCount[parent1[t]]++;
  // Fundamental supernodes: t joins t−1 when t is its only child's parent and the structure nests.
  const snOf1 = new Int32Array(n);
  const snFirst: number[] = [];
  for (let t = 0; t < n; t++) {
    if (t > 0 && parent1[t - 1] === t && childCount[t] === 1 && count1[t - 1] === count1[t] + 1) {
      snOf1[t] = snFirst.length - 1;
    } else {
      snOf1[t] = snFirst.length;
      snFirst.push(t);
    }
  }
  const ns1 = snFirst.length;
  snFirst.push(n);
  const snParent1 = new Int32Array(ns1);
  const kS = new Float64Array(ns1);
  const mS = new Float64Array(ns1);
  const nzS = new Float64Array(ns1);
  for (let s = 0; s < ns1; s++) {
    const f = snFirst[s];
    const l = snFirst[s + 1] - 1;
    snParent1[s] = parent1[l] < 0 ? -1 : snOf1[parent1[l]];
    kS[s] = l - f + 1;
    mS[s] = count1[f];
    nzS[s] = kS[s] * (2 * mS[s] - kS[s]);
  }
  // Relaxed amalgamation, children before parents (supernodes are in postorder).
  const mergedInto = new Int32Array(ns1).fill(-1);
  for (let s = 0; s < ns1; s++) {
    const p = snParent1[s];
    if (p < 0) continue;
    const k = kS[s] + kS[p];
    const m = kS[s] + mS[p];
    const stored = k * (2 * m - k);
    const zeros = stored - nzS[s] - nzS[p];
    if (k <= AMALGAMATE_ALWAYS || (k <= AMALGAMATE_SMALL && zeros <= AMALGAMATE_SMALL_ZEROS * stored) || zeros <= AMALGAMATE_ZEROS * stored) {
      mergedInto[s] = p;
      kS[p] = k;
      mS[p] = m;
      nzS[p] += nzS[s];
    }
  }
  // Representatives (the topmost member of each merged group) and the merged tree.
  const rep = new Int32Array(ns1);
  for (let s = ns1 - 1; s >= 0; s--) rep[s] = mergedInto[s] < 0 ? s : rep[mergedInto[s]];
  const groupId = new Int32Array(ns1).fill(-1);
  let ng = 0;
  for (let s = 0; s < ns1; s++) if (rep[s] === s) groupId[s] = ng++;
  const gParent = new Int32Array(ng);
  for (let s = 0; s < ns1; s++) {
    if (rep[s] !== s) continue;
    gParent[groupId[s]] = snParent1[s] < 0 ? -1 : groupId[rep[snParent1[s]]];
  }
  // Members of each group, in ascending label order (they are a valid elimination order).
  const memPtr = new Int32Array(ng + 1);
  for (let s = 0; s < ns1; s++) memPtr[groupId[rep[s]] + 1]++;
  for (let g = 0; g < ng; g++) memPtr[g + 1] += memPtr[g];
  const memList = new Int32Array(ns1);
  const memFill = memPtr.slice(0, ng);
  for (let s = 0; s < ns1; s++) memList[memFill[groupId[rep[s]]]++] = s;
  // Labels 2: postorder of the group tree; pivots of each group contiguous.
  const gPost = postorder(gParent);
  const perm = new Int32Array(n);
  const first = new Int32Array(ng + 1);
  const gNew = new Int32Array(ng);
  let lab = 0;
  for (let t = 0; t < ng; t++) {
    const g = gPost[t];
    gNew[g] = t;
    first[t] = lab;
    for (let q = memPtr[g]; q < memPtr[g + 1]; q++) {
      const s = memList[q];
      for (let c = snFirst[s]; c < snFirst[s + 1]; c++) perm[lab++] = perm0[post[c]];
    }
  }
  first[ng] = n;
  const parent = new Int32Array(ng);
  for (let g = 0; g < ng; g++) parent[gNew[g]] = gParent[g] < 0 ? -1 : gNew[gParent[g]];
  const inv = invertPermutation(perm);
  const frontOf = new Int32Array(n);
  for (let s = 0; s < ng; s++) for (let t = first[s]; t < first[s + 1]; t++) frontOf[t] = s;
  // Children lists in ascending order (= the order their blocks are pushed).
  const childPtr = new Int32Array(ng + 1);
  for (let s = 0; s < ng; s++) if (parent[s] >= 0) childPtr[parent[s] + 1]++;
  for (let s = 0; s < ng; s++) childPtr[s + 1] += childPtr[s];
  const childList = new Int32Array(Math.max(0, ng - 1));
  const childFill = childPtr.slice(0, ng);
  for (let s = 0; s < ng; s++) if (parent[s] >= 0) childList[childFill[parent[s]]++] = s;

  // Front structures: pivots ∪ children's blocks ∪ later neighbours of the pivots.
  // Entries of A by row too, so each entry is assembled where its smaller label is eliminated.
  const nnz = colPtr[n];
  const rowPtr = new Int32Array(n + 1);
  for (let e = 0; e < nnz; e++) rowPtr[rowIdx[e] + 1]++;
  for (let r = 0; r < n; r++) rowPtr[r + 1] += rowPtr[r];
  const rowEntry = new Int32Array(nnz);
  const rowCol = new Int32Array(nnz);
  const rowFill = rowPtr.slice(0, n);
  for (let c = 0; c < n; c++) {
    for (let e = colPtr[c]; e < colPtr[c + 1]; e++) {
      const q = rowFill[rowIdx[e]]++;
      rowEntry[q] = e;
      rowCol[q] = c;
    }
  }
  const nonfsChunks: Int32Array[] = [];
  const nonfsPtr = new Int32Array(ng + 1);
  const relMap: number[] = [];
  const stamp = new Int32Array(n).fill(-1);
  const pos = new Int32Array(n);
  const asmPtr = new Int32Array(ng + 1);
  const asmEntry = new Int32Array(nnz);
  const asmRow = new Int32Array(nnz);
  const asmCol = new Int32Array(nnz);
  let asmTop = 0;
  let list = new Int32Array(64);
  let factorNonzeros = 0;
  let factorFlops = 0;
  let maxFront = 0;
  let stack = 0;
  let stackPeak = 0;
  const cbSize = new Float64Array(ng);
  for (let s = 0; s < ng; s++) {
    const f = first[s];
    const l = first[s + 1] - 1;
    const k = l - f + 1;
    let len = 0;
    const push = (v: number): void => {
      if (v > l && stamp[v] !== s) {
        stamp[v] = s;
        if (len === list.length) list = growInt(list, 2 * len);
        list[len++] = v;
      }
    };
    for (let t = childPtr[s]; t < childPtr[s + 1]; t++) {
      const c = childList[t];
      const chunk = nonfsChunks[c];
      for (let q = 0; q < chunk.length; q++) push(chunk[q]);
    }
    for (let t = f; t <= l; t++) {
      const v = perm[t];
      for (let e = ptr[v]; e < ptr[v + 1]; e++) push(inv[adj[e]]);
    }
    const nf = list.slice(0, len).sort();
    nonfsChunks.push(nf);
    nonfsPtr[s + 1] = nonfsPtr[s] + len;
    for (let q = 0; q < len; q++) pos[nf[q]] = k + q;
    for (let t = f; t <= l; t++) pos[t] = t - f;
    // Where each child's block lands in this front (symbolic positions).
    for (let t = childPtr[s]; t < childPtr[s + 1]; t++) {
      const c = childList[t];
      const chunk = nonfsChunks[c];
      for (let q = 0; q < chunk.length; q++) relMap[nonfsPtr[c] + q] = pos[chunk[q]];
    }
    // Matrix entries (r, c) with min(label r, label c) in this front.
    for (let t = f; t <= l; t++) {
      const v = perm[t];
      for (let e = colPtr[v]; e < colPtr[v + 1]; e++) {
        const r = inv[rowIdx[e]];
        if (r < f) continue;
        asmEntry[asmTop] = e;
        asmRow[asmTop] = pos[r];
        asmCol[asmTop] = t - f;
        asmTop++;
      }
      for (let q = rowPtr[v]; q < rowPtr[v + 1]; q++) {
        const c = inv[rowCol[q]];
        if (c <= l) continue;
        asmEntry[asmTop] = rowEntry[q];
        asmRow[asmTop] = t - f;
        asmCol[asmTop] = pos[c];
        asmTop++;
      }
    }
    asmPtr[s + 1] = asmTop;
    const m = k + len;
    if (m > maxFront) maxFront = m;
    factorNonzeros += k * (2 * m - k);
    for (let t = 0; t < k; t++) {
      const r = m - t - 1;
      factorFlops += 8 * r * r + 6 * r;
    }
    // Contribution-block stack: children popped, this block pushed.
    for (let t = childPtr[s]; t < childPtr[s + 1]; t++) stack -= cbSize[childList[t]];
    cbSize[s] = len * len;
    stack += cbSize[s];
    if (stack > stackPeak) stackPeak = stack;
  }
  if (asmTop !== nnz) throw new Error(`SparseLuPlan.analyse: internal error, ${asmTop} of ${nnz} entries placed in fronts`);
  const nonfs = new Int32Array(nonfsPtr[ng]);
  for (let s = 0; s < ng; s++) nonfs.set(nonfsChunks[s], nonfsPtr[s]);
  return {
    perm,
    symbolic: {
      first,
      parent,
      childPtr,
      childList,
      nonfsPtr,
      nonfs,
      relMap: Int32Array.from(relMap),
      asmPtr,
      asmEntry,
      asmRow,
      asmCol,
      stackPeak,
      factorNonzeros,
      factorFlops,
      maxFront,
    },
  };
}

/** Postorder of a forest given by parent[] (−1 for roots): post[t] = node visited t-th. Cost O(n). */
function postorder(parent: Int32Array): Int32Array {
  const n = parent.length;
  const head = new Int32Array(n).fill(-1);
  const next = new Int32Array(n).fill(-1);
  // Children linked in descending order so they are visited ascending.
  for (let v = n - 1; v >= 0; v--) {
    const p = parent[v];
    if (p < 0) continue;
    next[v] = head[p];
    head[p] = v;
  }
  const post = new Int32Array(n);
  const stack = new Int32Array(n);
  let t = 0;
  for (let root = 0; root < n; root++) {
    if (parent[root] >= 0) continue;
    let top = 0;
    stack[0] = root;
    while (top >= 0) {
      const v = stack[top];
      const c = head[v];
      if (c === -1) {
        post[t++] = v;
        top--;
      } else {
        head[v] = next[c];
        stack[++top] = c;
      }
    }
  }
  return post;
}
