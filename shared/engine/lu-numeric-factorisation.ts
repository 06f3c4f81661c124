/**
 * Numeric factorisation of the multifrontal sparse LU (sparse-lu.ts), thousands of
 * times per pattern: fronts in postorder; each is assembled from the matrix entries
 * and its children's contribution blocks (extend-add), its fully-summed block is
 * factorised by factorFront (dense-complex.ts, or its WebAssembly port), the Schur
 * complement goes on a stack for the parent, except for a parent's last child
 * (postorder puts the parent right after it): two front buffers alternate, so that
 * block is extend-added in place. Pivoting and delays are described in sparse-lu.ts.
 */
import { factorFront } from './dense-complex';
import { WasmFrontKernel } from './front-kernel-wasm';
import { SolveScratch, SparseLuFactors, type FactorSlot, type FactorStorage } from './lu-solves';
import type { SymbolicFronts } from './lu-symbolic-analysis';

// The plan table of the WebAssembly kernel: PLAN_TABLE addresses, in the order of the
// T_* indices of wasm/front-kernel.ts (those the TypeScript side rewrites are named here).
const PLAN_TABLE = 23;
const T_VALUES = 10;
const T_DELAY_STACK = 16;
const T_ROW_LIST = 19;
const T_CB_STACK = 21;

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

/**
 * The numeric phase of one plan: its front structure and the work buffers every
 * factorisation of the plan shares (factor() is synchronous, so one runs at a time).
 */
export class NumericFactorisation {
  readonly n: number;
  /** perm[k] = original index of the unknown with label k. */
  private readonly perm: Int32Array;
  private readonly threshold: number;
  private readonly factorNonzeros: number;
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
  // Scratch shared by factorisations (factor() is synchronous, so one at a time).
  private frontA: Float64Array;
  private frontB: Float64Array;
  // (views into the kernel's memory with the WebAssembly kernel, which reads them)
  private cbDim: Int32Array;
  private cbStart: Int32Array;
  private cbLd: Int32Array;
  private delayOut: Int32Array;
  private delayStart: Int32Array;
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
  private wsPack = 0;
  private wsCap = 0;
  private wsMap = 0;
  private wsRuns = 0;
  private wsCb = 0;
  private wsCbLength = 0;
  /** The plan table (wasm/front-kernel.ts, T_*): addresses of the plan's arrays in the kernel's memory. */
  private wsPlan = 0;
  private wsValues = 0;
  private wsState = 0;
  private wsDelay = 0;
  private wsDelayLength = 0;
  /**
   * The factor slot: the latest factorisation's values (wsStore) and index lists
   * (wsUnknowns), written there by the kernel and read there by its solves, until the
   * next factor() needs the slot: then a factorisation still held (not passed as reuse)
   * gets copies of its own (detachFromSlot), one copy instead of one per front.
   */
  private wsStore = 0;
  private wsStoreLength = 0;
  private wsUnknowns = 0;
  private wsUnknownsLength = 0;
  private slotOwner: WeakRef<SparseLuFactors> | null = null;
  private slotValLen = 0;
  private slotIdxLen = 0;
  private values: Float64Array = new Float64Array(0);

  private readonly frontCount: number;

  constructor(n: number, perm: Int32Array, s: SymbolicFronts, threshold: number, kernel: 'wasm' | 'typescript') {
    this.n = n;
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
    this.factorNonzeros = s.factorNonzeros;
    this.frontCount = s.first.length - 1;
    const mx = Math.max(1, s.maxFront);
    // (with the WebAssembly kernel these live in its memory: growWorkspace below)
    const dense = kernel === 'wasm' ? 0 : 2 * mx * mx;
    this.frontA = new Float64Array(dense);
    this.frontB = new Float64Array(dense);
    const ns = this.frontCount;
    this.cbDim = new Int32Array(ns);
    this.cbStart = new Int32Array(ns);
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
      // The contribution-block stack, map, runs and the per-front state live in the kernel's
      // memory too, with copies of the plan's arrays: assembly and extend-add run there.
      const wasm = this.wasm;
      this.wsMap = wasm.reserve(4 * this.map.length);
      this.wsRuns = wasm.reserve(4 * this.runs.length);
      this.wsCbLength = this.cbStack.length;
      this.wsCb = wasm.reserve(8 * this.wsCbLength);
      this.cbStack = new Float64Array(0);
      this.wsPlan = wasm.reserve(4 * PLAN_TABLE);
      const copy = (a: Int32Array): number => {
        const at = wasm.reserve(4 * Math.max(1, a.length));
        wasm.i32(at, a.length).set(a);
        return at;
      };
      const table = [copy(s.first), copy(s.childPtr), copy(s.childList), copy(s.nonfsPtr), copy(s.nonfs), copy(s.relMap)];
      table.push(copy(s.asmPtr), copy(s.asmEntry), copy(s.asmRow), copy(s.asmCol));
      // (the values' place is reserved by the first factor(), which knows their length)
      this.wsState = wasm.reserve(4 * 5 * ns);
      table.push(0);
      for (let q = 0; q < 5; q++) table.push(this.wsState + 4 * q * ns);
      this.wsUnknownsLength = 2 * (s.nonfs.length + n);
      this.wsUnknowns = wasm.reserve(4 * this.wsUnknownsLength);
      this.wsStoreLength = Math.max(2, 2 * s.factorNonzeros);
      this.wsStore = wasm.reserve(8 * this.wsStoreLength);
      this.wsDelayLength = 64;
      this.wsDelay = wasm.reserve(4 * this.wsDelayLength);
      table.push(this.wsDelay, this.wsMap, this.wsRuns, 0, 0, this.wsCb, copy(perm));
      wasm.i32(this.wsPlan, PLAN_TABLE).set(table);
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
    this.wsPack = wasm.reserve(WasmFrontKernel.packBytes(m));
    this.wsCap = m;
    wasm.i32(this.wsPlan + 4 * T_ROW_LIST, 2).set([this.wsRows, this.wsCols]);
    if (old > 0) {
      wasm.f64(this.wsA, 2 * old * old).set(wasm.f64(oldA, 2 * old * old));
      wasm.f64(this.wsB, 2 * old * old).set(wasm.f64(oldB, 2 * old * old));
    }
    this.takeViews();
  }

  /**
   * A larger slot of `bytes`-byte entries (4: Int32, 8: Float64) in the kernel's memory for one
   * at `old` of `length` entries: at least `need`, else 1.5×, with the first `keep` entries copied.
   * Returns its offset and length; the caller stores them and takes its views again.
   */
  private enlarge(old: number, length: number, need: number, keep: number, bytes: 4 | 8): [number, number] {
    const wasm = this.wasm!;
    const grown = Math.max(need, Math.ceil(length * 1.5));
    const at = wasm.reserve(bytes * grown);
    if (bytes === 8) wasm.f64(at, keep).set(wasm.f64(old, keep));
    else wasm.i32(at, keep).set(wasm.i32(old, keep));
    return [at, grown];
  }

  /** A larger contribution-block stack in the kernel's memory, keeping its first `keep` doubles. */
  private growCbStack(need: number, keep: number): void {
    [this.wsCb, this.wsCbLength] = this.enlarge(this.wsCb, this.wsCbLength, need, keep, 8);
    this.wasm!.i32(this.wsPlan + 4 * T_CB_STACK, 1)[0] = this.wsCb;
    this.takeViews();
  }

  /** A larger slot for the factor values in the kernel's memory, keeping its first `keep` doubles. */
  private growStore(need: number, keep: number): void {
    [this.wsStore, this.wsStoreLength] = this.enlarge(this.wsStore, this.wsStoreLength, need, keep, 8);
    this.takeViews();
  }

  /** A larger slot for the index lists in the kernel's memory, keeping its first `keep` entries. */
  private growUnknowns(need: number, keep: number): void {
    [this.wsUnknowns, this.wsUnknownsLength] = this.enlarge(this.wsUnknowns, this.wsUnknownsLength, need, keep, 4);
    this.takeViews();
  }

  /** A larger delay stack in the kernel's memory, keeping its first `keep` entries. */
  private growDelayStack(need: number, keep: number): void {
    [this.wsDelay, this.wsDelayLength] = this.enlarge(this.wsDelay, this.wsDelayLength, need, keep, 4);
    this.wasm!.i32(this.wsPlan + 4 * T_DELAY_STACK, 1)[0] = this.wsDelay;
    this.takeViews();
  }

  /** Room for the matrix values in the kernel's memory (they are copied there by every factor()). */
  private placeValues(length: number): void {
    const wasm = this.wasm!;
    this.wsValues = wasm.reserve(8 * length);
    wasm.i32(this.wsPlan + 4 * T_VALUES, 1)[0] = this.wsValues;
    this.takeViews();
    this.values = wasm.f64(this.wsValues, length);
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
    const ns = this.frontCount;
    this.cbDim = wasm.i32(this.wsState, ns);
    this.cbStart = wasm.i32(this.wsState + 4 * ns, ns);
    this.cbLd = wasm.i32(this.wsState + 8 * ns, ns);
    this.delayOut = wasm.i32(this.wsState + 12 * ns, ns);
    this.delayStart = wasm.i32(this.wsState + 16 * ns, ns);
    this.delayStack = wasm.i32(this.wsDelay, this.wsDelayLength);
    if (this.values.length > 0) this.values = wasm.f64(this.wsValues, this.values.length);
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
   * Cost: about factorFlops real flops, 16·factorNonzeros bytes. Values are
   * checked by SparseLuPlan.factor.
   * @throws Error for a reuse from another plan or already released
   * @throws SingularMatrixError when a pivot column is exactly zero
   */
  factor(values: Float64Array, reuse?: SparseLuFactors, symmetric = false): SparseLuFactors {
    // (values must have gone through load() first: the kernel reads its copy)
    const wasm = this.wasm;
    if (wasm) {
      // The slot is about to be overwritten: a factorisation still held keeps copies.
      const owner = this.slotOwner?.deref();
      if (owner && owner !== reuse && owner.inSlot) owner.detachFromSlot(this.slotValLen, this.slotIdxLen);
      this.slotOwner = null;
    }
    const ns = this.frontCount;
    let storage: FactorStorage;
    if (reuse) {
      storage = reuse.takeStorage(this.scratch);
      // (with the WebAssembly kernel the factors go to the slot, not to these arrays)
      if (wasm) storage = { ...storage, store: NO_VALUES, index: NO_INDEX };
    } else {
      storage = {
        valOff: new Float64Array(ns + 1),
        idxOff: new Int32Array(ns + 1),
        frontDim: new Int32Array(ns),
        pivots: new Int32Array(ns),
        // Delayed pivots enlarge fronts beyond the prediction; the plan remembers the largest
        // storage any factorisation needed so later ones allocate once instead of growing.
        store: wasm ? NO_VALUES : new Float64Array(Math.max(this.storeHint, 2 * this.factorNonzeros)),
        index: wasm ? NO_INDEX : new Int32Array(Math.max(this.indexHint, 2 * (this.nonfs.length + this.n))),
      };
    }
    if (symmetric) {
      const lu = this.run(values, storage, true);
      if (lu) return lu;
      // A root front found no diagonal pivot for some column, or too many were delayed: row
      // pivoting does (the decision depends on the values alone, so every thread takes it alike).
      this.symmetricFallbacks++;
    }
    return this.run(values, storage, false)!;
  }

  /** Factorisations of symmetric matrices that had to be redone with unsymmetric pivoting (factor). */
  symmetricFallbacks = 0;
  /** Delayed pivots past which a symmetric factorisation gives up for row pivoting: max(64, n/64). */
  private get symmetricDelayLimit(): number {
    return Math.max(64, this.n >> 6);
  }

  /** The entry pairs (e, t), e < t, at transposed places of the pattern (setSymmetricPairs). */
  private pairs: Int32Array = new Int32Array(0);
  private wsPairs = 0;

  /** The pattern's pairs of transposed entries (e, t), e < t, flat: load() checks symmetry on them. */
  setSymmetricPairs(pairs: Int32Array): void {
    this.pairs = pairs;
    const wasm = this.wasm;
    if (!wasm || pairs.length === 0) return;
    this.wsPairs = wasm.reserve(4 * pairs.length);
    this.takeViews();
    wasm.i32(this.wsPairs, pairs.length).set(pairs);
  }

  /**
   * Makes values (interleaved, length 2·nnz) the next factor()'s input and checks them:
   * finite, and symmetric on the pairs of setSymmetricPairs. With the WebAssembly kernel
   * they are copied into its memory, where the kernel assembles from and checks them.
   */
  load(values: Float64Array): { finite: boolean; symmetric: boolean } {
    const wasm = this.wasm;
    const npairs = this.pairs.length >> 1;
    if (wasm) {
      if (this.values.length !== values.length) this.placeValues(values.length);
      this.values.set(values);
      const flags = wasm.checkValues(this.wsValues, values.length >> 1, this.wsPairs, npairs);
      return { finite: (flags & 1) !== 0, symmetric: npairs > 0 && (flags & 2) !== 0 };
    }
    // x·0 is NaN exactly when x is NaN or ±∞: one branch-free pass (four sums, so the
    // additions do not wait on each other).
    let p0 = 0,
      p1 = 0,
      p2 = 0,
      p3 = 0;
    let e = 0;
    for (; e + 4 <= values.length; e += 4) {
      p0 += values[e] * 0;
      p1 += values[e + 1] * 0;
      p2 += values[e + 2] * 0;
      p3 += values[e + 3] * 0;
    }
    for (; e < values.length; e++) p0 += values[e] * 0;
    if (p0 + p1 + p2 + p3 !== 0) return { finite: false, symmetric: false };
    const pairs = this.pairs;
    for (let q = 0; q < pairs.length; q += 2) {
      const a = 2 * pairs[q];
      const b = 2 * pairs[q + 1];
      if (values[a] !== values[b] || values[a + 1] !== values[b + 1]) return { finite: true, symmetric: false };
    }
    return { finite: true, symmetric: npairs > 0 };
  }

  /**
   * One pass over the fronts into `storage` (factor). Symmetric: diagonal pivots and
   * lower-triangle updates (factorFront of dense-complex.ts); returns null when a root
   * front is left with columns no diagonal pivot passes for, instead of throwing.
   */
  private run(values: Float64Array, storage: FactorStorage, symmetric: boolean): SparseLuFactors | null {
    const ns = this.frontCount;
    const { first, parent, childPtr, childList, nonfsPtr, nonfs, relMap, asmPtr, asmEntry, asmRow, asmCol } = this;
    const wasm = this.wasm;
    const { valOff, idxOff, frontDim, pivots } = storage;
    let { store, index } = storage;
    // Per supernode: its contribution block (where it starts, its column stride), how many of
    // its rows/columns are delayed: this.cbDim, cbStart, cbLd, delayOut, delayStart (read
    // through `this`: with the WebAssembly kernel they are views, taken again when its memory grows).
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
      for (let t = c0; t < c1; t++) d += this.delayOut[childList[t]];
      const nf0 = nonfsPtr[s];
      const nfLen = nonfsPtr[s + 1] - nf0;
      const m = k + d + nfLen;
      const kFs = k + d;
      // Two front buffers in turn, so the previous front's Schur complement stays readable.
      // (the stack top only drops before this front's block is pushed: cbTop + m² doubles suffice)
      const valNeed = valTop + 2 * kFs * (2 * m - kFs);
      if (wasm && (m > this.wsCap || cbTop + 2 * m * m > this.wsCbLength || idxTop + 2 * m > this.wsUnknownsLength || valNeed > this.wsStoreLength)) {
        const prevIsA = prevFront === this.frontA;
        if (m > this.wsCap) this.growWorkspace(m);
        if (cbTop + 2 * m * m > this.wsCbLength) this.growCbStack(cbTop + 2 * m * m, cbTop);
        if (idxTop + 2 * m > this.wsUnknownsLength) this.growUnknowns(idxTop + 2 * m, idxTop);
        if (valNeed > this.wsStoreLength) this.growStore(valNeed, valTop);
        prevFront = prevIsA ? this.frontA : this.frontB;
      }
      // (a block read in place was never pushed, so it does not move the stack top)
      const firstChildStart = c1 > c0 && childList[c0] !== prevDirect ? this.cbStart[childList[c0]] : cbTop;
      const firstDelayStart = c1 > c0 ? this.delayStart[childList[c0]] : delayTop;
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
      let done = 0;
      if (wasm) {
        // Zeroing, the matrix entries, the extend-add (same additions in the same order), the
        // dense factorisation, its L panel and U12 packed into the factor slot and the
        // front's unknowns into the slot's index lists, all in one call to the kernel.
        const prevAt = prevFront === this.frontA ? this.wsA : this.wsB;
        const at = F === this.frontA ? this.wsA : this.wsB;
        done = wasm.front(
          this.wsPlan,
          s,
          at,
          m,
          k,
          d,
          prevDirect,
          prevAt,
          this.threshold,
          this.wsSave,
          this.wsPack,
          this.wsStore + 8 * valTop,
          this.wsUnknowns + 4 * idxTop,
          symmetric,
        );
      } else {
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
        for (let t = c0; t < c1; t++) {
          const c = childList[t];
          const mc = this.cbDim[c];
          const dc = this.delayOut[c];
          const ds = this.delayStart[c];
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
          const ld = this.cbLd[c];
          // Runs of consecutive parent positions (separators are labelled contiguously), so
          // each column is added in a few contiguous stretches: [child offset, parent offset, length]·2.
          const runs = this.runs;
          const nRuns = contiguousRuns(map, mc, runs, 2);
          let src = this.cbStart[c];
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
      }
      cbTop = firstChildStart;
      delayTop = firstDelayStart;

      if (!wasm) {
        if (this.save.length < 2 * m) this.save = new Float64Array(2 * m);
        done = factorFront(F, m, kFs, this.threshold, rowList, colList, this.save, 32, symmetric);
      }
      if (parent[s] < 0 && done < kFs) {
        if (symmetric) return null;
        const col = this.perm[colList[done]];
        throw new SingularMatrixError(col, `no nonzero pivot is left for column ${col} (front ${s} of ${ns}, ${done} of ${kFs} pivots eliminated)`);
      }

      // Keep L (m×done) and U12 (done×(m−done)) of this front.
      const need = valTop + 2 * done * (2 * m - done);
      if (!wasm && need > store.length) store = growFloat(store, need);
      const lLen = 2 * done * m;
      const uLen = 2 * done;
      if (!wasm) {
        // The L panel is contiguous in F (one native copy); U12 is strided.
        store.set(F.subarray(0, lLen), valTop);
        let u = valTop + lLen;
        for (let c = done; c < m; c++) {
          const src = 2 * c * m;
          for (let q = 0; q < uLen; q++) store[u + q] = F[src + q];
          u += uLen;
        }
      }
      if (!wasm && idxTop + 2 * m > index.length) index = growInt(index, idxTop + 2 * m);
      // Original unknowns (not labels), so solves need no permuted copy of b.
      // (with the WebAssembly kernel they are copied out once, after the loop)
      if (!wasm) {
        const perm = this.perm;
        for (let q = 0; q < m; q++) {
          index[idxTop + q] = perm[rowList[q]];
          index[idxTop + m + q] = perm[colList[q]];
        }
      }
      valOff[s] = valTop;
      idxOff[s] = idxTop;
      frontDim[s] = m;
      pivots[s] = done;
      valTop = need;
      idxTop += 2 * m;

      // The Schur complement and the delayed rows/columns for the parent.
      const mc = m - done;
      this.cbDim[s] = mc;
      this.delayOut[s] = kFs - done;
      this.delayStart[s] = delayTop;
      prevFront = F;
      prevDirect = -1;
      if (mc > 0 && parent[s] === s + 1) {
        // Postorder puts a parent right after its last child: read this block in place.
        this.cbStart[s] = 2 * (done * m + done);
        this.cbLd[s] = 2 * m;
        prevDirect = s;
      } else if (mc > 0) {
        this.cbStart[s] = cbTop;
        this.cbLd[s] = 2 * mc;
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
        this.cbStart[s] = cbTop;
        this.cbLd[s] = 0;
      }
      const dOut = kFs - done;
      delayed += dOut;
      // Diagonal pivots that keep failing (graphene near its Dirac point, where the diagonal
      // E − E_D is small against t) would pile the whole matrix into a dense root: past the
      // limit the matrix goes through row pivoting instead.
      if (symmetric && delayed > this.symmetricDelayLimit) return null;
      if (dOut > 0) {
        if (delayTop + 2 * dOut > this.delayStack.length) {
          if (wasm) {
            // Growing takes every view again: prevFront must be the new view of its buffer,
            // else the next front would take the same buffer and overwrite the block it reads.
            const prevIsA = prevFront === this.frontA;
            this.growDelayStack(delayTop + 2 * dOut, delayTop);
            prevFront = prevIsA ? this.frontA : this.frontB;
          } else this.delayStack = growInt(this.delayStack, delayTop + 2 * dOut);
        }
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
    if (wasm) {
      const valLen = valTop;
      const idxLen = idxTop;
      const slot: FactorSlot = {
        store: () => wasm.f64(this.wsStore, valLen),
        index: () => wasm.i32(this.wsUnknowns, idxLen),
      };
      const lu = new SparseLuFactors(this.n, store, index, valOff, idxOff, frontDim, pivots, delayed, this.scratch, slot);
      lu.symmetric = symmetric;
      this.slotOwner = new WeakRef(lu);
      this.slotValLen = valLen;
      this.slotIdxLen = idxLen;
      return lu;
    }
    const lu = new SparseLuFactors(this.n, store, index, valOff, idxOff, frontDim, pivots, delayed, this.scratch);
    lu.symmetric = symmetric;
    return lu;
  }

  private growLists(m: number): void {
    this.rowList = new Int32Array(m);
    this.colList = new Int32Array(m);
  }
}

/**
 * Splits target[0..mc) into stretches of consecutive values: runs[3g..3g+2] = [first index,
 * its target, length], each times `scale` (2 for interleaved complex entries). Returns the count.
 */
export function contiguousRuns(target: Int32Array, mc: number, runs: Int32Array, scale: number): number {
  let nRuns = 0;
  for (let ii = 0; ii < mc;) {
    let len = 1;
    while (ii + len < mc && target[ii + len] === target[ii] + len) len++;
    runs[3 * nRuns] = scale * ii;
    runs[3 * nRuns + 1] = scale * target[ii];
    runs[3 * nRuns + 2] = scale * len;
    nRuns++;
    ii += len;
  }
  return nRuns;
}

const NO_VALUES = new Float64Array(0);
const NO_INDEX = new Int32Array(0);

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
