/**
 * The cavity's Green's function on the lead mouths by a Schur complement, for sweeps
 * at real energies with a real Hamiltonian (no magnetic field): exact, no interpolation.
 *
 * With the mouth sites M ordered last, A(E) = E − H − Σ(E) and Σ touching only M×M,
 *   G_MM = [A(E)⁻¹]_MM = (S(E) − Σ(E))⁻¹,  S(E) = A_MM − A_MI A_II⁻¹ A_IM,
 * the Schur complement of the closed cavity onto its mouths (Schur complement and block
 * inverse: Golub & Van Loan, "Matrix Computations", 4th ed. (2013), §3.2.10 and §12.3).
 * A_II = (E − H)_II is real, so a multifrontal partial factorisation in real numbers
 * (a quarter of the complex flops, no factors kept, no triangular solves) leaves S(E) in
 * the root front. Interior pivots that fail the threshold test (E near an eigenvalue of
 * the interior with the mouth clamped) are delayed into the root, where Σ makes the
 * block regular: the root's remainder C on (delayed ∪ M) is completed with Σ in complex
 * numbers, C⁻¹ = [A⁻¹] on those unknowns, and its M×M block is G_MM.
 * The pivots are diagonal (symmetric swaps only), so arg det A(E) = arg det C + π·(number
 * of negative real pivots): the sweep's phase test sees the value a direct LU gives.
 *
 * Cost per energy: about a quarter of one complex LU's flops, plus a dense complex LU
 * of (delayed + M) unknowns and M solves with it (M = mouth sites of all leads).
 */
import { denseLu, denseLuSolve } from './dense-solve';
import { copyLowerSymmetric, factorFrontSymmetric } from './dense-real';
import { WasmRealFrontKernel } from './front-kernel-real-wasm';
import type { EffectiveHamiltonian } from './effective-hamiltonian';
import { contiguousRuns } from './lu-numeric-factorisation';
import { permutationParity, wrapAngle } from './lu-solves';
import { analyseFronts, type SymbolicFronts } from './lu-symbolic-analysis';
import { minimumDegreeOrder } from './minimum-degree';
import { nestedDissectionOrder, symmetricAdjacency, type Adjacency } from './ordering';
import { mouthOrder } from './scattering-point';
import { patternSlot } from './sparsity-pattern';

/** Delayed pivots beyond which at() leaves the energy to the direct solve (see at()). */
const DELAY_LIMIT = 64;
/** The pivot threshold u of the sparse LU (sparse-lu.ts): |a_rp| ≥ u·max|a_·p|. */
const PIVOT_THRESHOLD = 0.1;
/**
 * Supernodes of up to this many pivots are always merged into their parents: twice the
 * complex LU's 4, since a real front costs less per entry and the walk pays per front
 * (10,000-site bench rectangle: 2,767 → 1,369 fronts, +7% flops, about 7% faster).
 */
const AMALGAMATE_ALWAYS = 8;

/** G on the mouth sites (M×M row-major interleaved, in mouthOrder) and arg det A(E). */
interface MouthGreen {
  mouth: Float64Array;
  detPhase: number;
  /** Interior pivots delayed into the complex root block at this energy. */
  delayed: number;
}

/**
 * An elimination order with the sites `last` at the end (in the given order) and the
 * rest ordered by nested dissection or minimum degree, whichever the symbolic analysis
 * predicts fewer flops for (as SparseLuPlan.analyse does without the constraint).
 */
function constrainedOrder(graph: Adjacency, last: Int32Array, sites: { i: Int32Array; j: Int32Array }): Int32Array[] {
  const n = graph.n;
  const sub = new Int32Array(n).fill(-1);
  const back: number[] = [];
  const isLast = new Uint8Array(n);
  for (const v of last) isLast[v] = 1;
  for (let v = 0; v < n; v++) if (!isLast[v]) sub[v] = back.push(v) - 1;
  const ni = back.length;
  const ptr = new Int32Array(ni + 1);
  const adj: number[] = [];
  for (let a = 0; a < ni; a++) {
    const v = back[a];
    for (let e = graph.ptr[v]; e < graph.ptr[v + 1]; e++) if (sub[graph.adj[e]] >= 0) adj.push(sub[graph.adj[e]]);
    ptr[a + 1] = adj.length;
  }
  const inner: Adjacency = { n: ni, ptr, adj: Int32Array.from(adj) };
  const subSites = { i: Int32Array.from(back, (v) => sites.i[v]), j: Int32Array.from(back, (v) => sites.j[v]) };
  return [nestedDissectionOrder(inner, subSites), minimumDegreeOrder(inner)].map((order) => {
    const perm = new Int32Array(n);
    order.forEach((a, k) => (perm[k] = back[a]));
    perm.set(last, ni);
    return perm;
  });
}

/**
 * The buffers of the real partial factorisation: in the WebAssembly kernel's memory when it
 * runs (front-kernel-real-wasm.ts), else plain arrays for the TypeScript kernel. Every view
 * is taken again whenever the kernel's memory grows.
 */
class RealFronts {
  front: Float64Array = new Float64Array(0);
  rowList: Int32Array = new Int32Array(0);
  colList: Int32Array = new Int32Array(0);
  save: Float64Array = new Float64Array(0);
  target: Int32Array = new Int32Array(0);
  /** Stretches of consecutive targets: [block offset, front offset, length] per run. */
  runs: Int32Array = new Int32Array(0);
  stack: Float64Array = new Float64Array(0);
  private cap = 0;
  private stackCap = 0;
  private at = { front: 0, rows: 0, cols: 0, save: 0, target: 0, runs: 0, stack: 0, offset: 0, h: 0, diagonal: 0 };
  private assembly: { offset: Int32Array; h: Float64Array; diagonal: Float64Array } = {
    offset: new Int32Array(0),
    h: new Float64Array(0),
    diagonal: new Float64Array(0),
  };

  constructor(
    readonly wasm: WasmRealFrontKernel | null,
    cap: number,
    stackCap: number,
  ) {
    this.ensureFront(cap);
    this.ensureStack(stackCap, 0);
  }

  /** The assembly plan of every front: place (column·m + row), −H and the diagonal flag of each entry. */
  setAssembly(offset: Int32Array, h: Float64Array, diagonal: Float64Array): void {
    this.assembly = { offset, h, diagonal };
    const wasm = this.wasm;
    if (!wasm) return;
    const n = offset.length;
    this.at.offset = wasm.reserve(4 * n);
    this.at.h = wasm.reserve(8 * n);
    this.at.diagonal = wasm.reserve(8 * n);
    wasm.i32(this.at.offset, n).set(offset);
    wasm.f64(this.at.h, n).set(h);
    wasm.f64(this.at.diagonal, n).set(diagonal);
    this.takeViews();
  }

  /** Zeroes the front (m rows) and adds E − H at entries from..to−1 of the assembly plan. */
  assemble(m: number, from: number, to: number, energy: number): void {
    if (this.wasm) return this.wasm.assembleFront(this.at.front, m * m, this.at.offset, this.at.h, this.at.diagonal, from, to, energy);
    const F = this.front;
    const { offset, h, diagonal } = this.assembly;
    F.fill(0, 0, m * m);
    for (let a = from; a < to; a++) F[offset[a]] += h[a] + energy * diagonal[a];
  }

  /** Room for a front of m rows (contents not kept). */
  ensureFront(m: number): void {
    if (m <= this.cap) return;
    const cap = Math.max(m, Math.ceil(1.5 * this.cap));
    this.cap = cap;
    const wasm = this.wasm;
    if (!wasm) {
      this.front = new Float64Array(cap * cap);
      this.rowList = new Int32Array(cap);
      this.colList = new Int32Array(cap);
      this.save = new Float64Array(cap);
      this.target = new Int32Array(cap);
      this.runs = new Int32Array(3 * cap);
      return;
    }
    this.at.front = wasm.reserve(8 * cap * cap);
    this.at.rows = wasm.reserve(4 * cap);
    this.at.cols = wasm.reserve(4 * cap);
    this.at.save = wasm.reserve(8 * cap);
    this.at.target = wasm.reserve(4 * cap);
    this.at.runs = wasm.reserve(12 * cap);
    this.takeViews();
  }

  /** Room for `need` doubles of contribution blocks, keeping the first `keep`. */
  ensureStack(need: number, keep: number): void {
    if (need <= this.stackCap) return;
    const cap = Math.max(need, Math.ceil(1.5 * this.stackCap));
    this.stackCap = cap;
    const wasm = this.wasm;
    if (!wasm) {
      const grown = new Float64Array(cap);
      grown.set(this.stack.subarray(0, keep));
      this.stack = grown;
      return;
    }
    const old = this.at.stack;
    this.at.stack = wasm.reserve(8 * cap);
    wasm.f64(this.at.stack, keep).set(wasm.f64(old, keep));
    this.takeViews();
  }

  private takeViews(): void {
    const wasm = this.wasm!;
    const { cap, at } = this;
    this.front = wasm.f64(at.front, cap * cap);
    this.rowList = wasm.i32(at.rows, cap);
    this.colList = wasm.i32(at.cols, cap);
    this.save = wasm.f64(at.save, cap);
    this.target = wasm.i32(at.target, cap);
    this.runs = wasm.i32(at.runs, 3 * cap);
    this.stack = wasm.f64(at.stack, this.stackCap);
  }

  /** Partial LDLᵀ of the front (m rows, kFs candidates) by factorFrontSymmetric or its WebAssembly port. */
  factor(m: number, kFs: number): number {
    if (this.wasm) return this.wasm.factorFront(this.at.front, m, kFs, PIVOT_THRESHOLD, this.at.rows, this.at.cols, this.at.save);
    return factorFrontSymmetric(this.front, m, kFs, PIVOT_THRESHOLD, this.rowList, this.colList, this.save);
  }

  /**
   * Adds the mc×mc block at `start` of the stack into the front (m rows): entry (ii, jj)
   * to (target[ii], target[jj]), the rows in stretches of consecutive targets.
   */
  extendAdd(m: number, start: number, mc: number): void {
    const { target, runs } = this;
    const nRuns = contiguousRuns(target, mc, runs, 1);
    if (this.wasm) return this.wasm.extendAdd(this.at.front, m, this.at.stack + 8 * start, mc, this.at.target, this.at.runs, nRuns);
    const { front, stack } = this;
    let src = start;
    for (let jj = 0; jj < mc; jj++) {
      const dst = target[jj] * m;
      for (let g = 0; g < 3 * nRuns; g += 3) {
        const a = src + runs[g];
        const o = dst + runs[g + 1];
        for (let q = 0; q < runs[g + 2]; q++) front[o + q] += stack[a + q];
      }
      src += mc;
    }
  }

  /** Copies the Schur complement F[done.., done..] (m rows; its lower triangle) onto the stack at `top`, both triangles. */
  push(m: number, done: number, top: number): void {
    const mc = m - done;
    if (this.wasm) return this.wasm.copyLowerSymmetric(this.at.stack + 8 * top, this.at.front + 8 * (done * m + done), 8 * m, mc);
    copyLowerSymmetric(this.front, done * m + done, m, mc, this.stack, top);
  }
}

/**
 * Evaluates G_MM(E) by the Schur complement; one per operator, reused across energies
 * (one symbolic analysis). MouthSchur.forOperator returns null where it does not apply.
 */
export class MouthSchur {
  private readonly n: number;
  private readonly symbolic: SymbolicFronts;
  /** Labels (elimination positions) of the unique mouth sites: n − M .. n − 1. */
  private readonly mouthCount: number;
  /** For each entry of mouthOrder(op): its index among the unique mouth sites. */
  private readonly mouthIndex: Int32Array;
  private readonly fronts: RealFronts;
  private delayStack: Int32Array;
  private readonly cbDim: Int32Array;
  private readonly cbStart: Int32Array;
  private readonly delayOut: Int32Array;
  private readonly delayStart: Int32Array;
  /** −H at each assembled entry, and 1 where it is on the diagonal (E goes there). */
  private readonly asmH: Float64Array;
  private readonly asmDiagonal: Float64Array;
  /** Index among the unique mouth sites of each lead's p-th mouth site. */
  private readonly leadMouth: Int32Array[];
  /** Matrix entries on M×M (with Σ), interleaved complex, added to the root's remainder. */
  private readonly mouthEntries: Float64Array;
  /** Predicted real flops of one partial factorisation (for the docs and the bench). */
  readonly factorFlops: number;

  private constructor(
    readonly op: EffectiveHamiltonian,
    symbolic: SymbolicFronts,
    mouthCount: number,
    unique: Int32Array,
    mouthIndex: Int32Array,
    minusH: Float64Array,
    kernel: 'wasm' | 'typescript',
  ) {
    this.n = op.n;
    this.symbolic = symbolic;
    this.mouthCount = mouthCount;
    this.mouthIndex = mouthIndex;
    const mx = Math.max(1, symbolic.maxFront);
    this.fronts = new RealFronts(kernel === 'wasm' ? WasmRealFrontKernel.create() : null, mx, Math.max(1, symbolic.stackPeak));
    this.delayStack = new Int32Array(64);
    const { first, nonfsPtr, asmPtr, asmRow, asmCol, asmEntry } = symbolic;
    // place of each entry in its front when no pivot was delayed into it (column·m + row)
    const offset = new Int32Array(asmRow.length);
    for (let f = 0; f + 1 < first.length; f++) {
      const m = first[f + 1] - first[f] + nonfsPtr[f + 1] - nonfsPtr[f];
      for (let a = asmPtr[f]; a < asmPtr[f + 1]; a++) offset[a] = asmCol[a] * m + asmRow[a];
    }
    // −H and the diagonal in assembly order, so each front reads its entries in one sweep
    const column = new Int32Array(asmEntry.length);
    for (let c = 0; c < op.n; c++) column.fill(c, op.colPtr[c], op.colPtr[c + 1]);
    this.asmH = Float64Array.from(asmEntry, (e) => minusH[2 * e]);
    this.asmDiagonal = Float64Array.from(asmEntry, (e) => (op.rowIdx[e] === column[e] ? 1 : 0));
    this.fronts.setAssembly(offset, this.asmH, this.asmDiagonal);
    this.leadMouth = op.system.leads.map((lead) => Int32Array.from(lead.mouth, (v) => unique.indexOf(v)));
    const ns = symbolic.first.length - 1;
    this.cbDim = new Int32Array(ns);
    this.cbStart = new Int32Array(ns);
    this.delayOut = new Int32Array(ns);
    this.delayStart = new Int32Array(ns);
    this.mouthEntries = new Float64Array(2 * mouthCount * mouthCount);
    this.factorFlops = symbolic.factorFlops / 8;
  }

  /**
   * The Schur path for op, or null where it does not apply: H not real symmetric (a
   * magnetic field, complex hoppings), no leads, or mouths not reachable as one tree (a
   * part of the cavity that no lead touches). Cost: two orderings and symbolic analyses.
   */
  static forOperator(op: EffectiveHamiltonian, options: { denseKernel?: 'wasm' | 'typescript' } = {}): MouthSchur | null {
    const n = op.n;
    const order = mouthOrder(op);
    if (order.length === 0) return null;
    const unique = Int32Array.from(new Set(order));
    const M = unique.length;
    if (M >= n) return null;
    // H real and symmetric (no field, real hoppings): every entry real and equal to its transpose
    const minusH = op.minusHamiltonian();
    for (let c = 0; c < n; c++)
      for (let e = op.colPtr[c]; e < op.colPtr[c + 1]; e++) {
        const t = patternSlot(op, c, op.rowIdx[e]);
        if (minusH[2 * e + 1] !== 0 || t < 0 || minusH[2 * t] !== minusH[2 * e]) return null;
      }
    const graph = symmetricAdjacency(n, op.colPtr, op.rowIdx);
    const candidates = constrainedOrder(graph, unique, op.sites).map((perm0) => analyseFronts(graph, perm0, op.colPtr, op.rowIdx, AMALGAMATE_ALWAYS));
    const { perm, symbolic } = candidates.reduce((best, c) => (c.symbolic.factorFlops < best.symbolic.factorFlops ? c : best));
    const ns = symbolic.first.length - 1;
    // One tree whose root front ends with the mouth sites, in the order given.
    for (let s = 0; s < ns - 1; s++) if (symbolic.parent[s] < 0) return null;
    if (symbolic.first[ns - 1] > n - M) return null;
    for (let a = 0; a < M; a++) if (perm[n - M + a] !== unique[a]) return null;
    const label = new Map<number, number>();
    unique.forEach((v, a) => label.set(v, a));
    const mouthIndex = Int32Array.from(order, (v) => label.get(v)!);
    return new MouthSchur(op, symbolic, M, unique, mouthIndex, minusH, options.denseKernel ?? 'wasm');
  }

  /**
   * G_MM at a real energy E (meV) and arg det A(E); null when A(E) is exactly singular
   * (the caller then uses a direct solve, which reports it), or when more than
   * max(DELAY_LIMIT, 2M) interior pivots were delayed into one front (the root or one on the
   * way), whose dense work would then outgrow the direct sparse solve's (a bipartite lattice near its band centre, e.g.
   * graphene near the Dirac point, has diagonals E − V small against its hoppings).
   */
  at(energy: number): MouthGreen | null {
    const op = this.op;
    const sheet = op.sheetAt(energy);
    const M = this.mouthCount;
    // −Σ on the mouths (A[mouth p, mouth q] −= Σ_ℓ[p, q], as EffectiveHamiltonian.assemble does)
    this.mouthEntries.fill(0);
    this.leadMouth.forEach((at, l) => {
      const sigma = op.selfEnergy(l, { re: energy, im: 0 }, sheet);
      const w = at.length;
      for (let p = 0; p < w; p++)
        for (let q = 0; q < w; q++) {
          const o = 2 * (at[p] * M + at[q]);
          this.mouthEntries[o] -= sigma[2 * (p * w + q)];
          this.mouthEntries[o + 1] -= sigma[2 * (p * w + q) + 1];
        }
    });
    const root = this.eliminateInterior(energy);
    const { size, block, delayed, sign } = root;
    if (delayed > Math.max(DELAY_LIMIT, 2 * M)) return null;
    const f = denseLu(size, block);
    if (f.pivotRatio === 0) return null;
    let arg = sign < 0 ? Math.PI : 0;
    for (let k = 0; k < size; k++) arg += Math.atan2(f.lu[2 * (k * size + k) + 1], f.lu[2 * (k * size + k)]);
    if (permutationParity(f.perm)) arg += Math.PI;
    const rhs = new Float64Array(2 * size * M);
    for (let a = 0; a < M; a++) rhs[2 * ((delayed + a) * M + a)] = 1;
    const x = denseLuSolve(f, rhs, M);
    const idx = this.mouthIndex;
    const Mo = idx.length;
    const mouth = new Float64Array(2 * Mo * Mo);
    for (let r = 0; r < Mo; r++)
      for (let c = 0; c < Mo; c++) {
        const o = 2 * ((delayed + idx[r]) * M + idx[c]);
        mouth[2 * (r * Mo + c)] = x[o];
        mouth[2 * (r * Mo + c) + 1] = x[o + 1];
      }
    return { mouth, detPhase: wrapAngle(arg), delayed };
  }

  /**
   * The real multifrontal partial factorisation of E − H: every interior unknown is
   * eliminated unless its pivot is delayed to the root. Returns the root's remainder
   * C on (delayed ∪ M), row-major interleaved complex with the mouth block's entries
   * (E − H − Σ, Σ already in mouthEntries) added, and the sign of det A / det C.
   */
  private eliminateInterior(energy: number): { size: number; block: Float64Array; delayed: number; sign: number } {
    const { first, childPtr, childList, nonfsPtr, nonfs, relMap, asmPtr, asmRow, asmCol } = this.symbolic;
    const ns = first.length - 1;
    const M = this.mouthCount;
    const { cbDim, cbStart, delayOut, delayStart } = this;
    let cbTop = 0;
    let delayTop = 0;
    let negative = 0;
    const fronts = this.fronts;
    for (let s = 0; s < ns; s++) {
      const isRoot = s === ns - 1;
      const f0 = first[s];
      const k = first[s + 1] - f0;
      // Candidates: the front's own pivots (at the root, all but the mouth sites) and the delayed ones.
      const kPiv = isRoot ? k - M : k;
      const c0 = childPtr[s];
      const c1 = childPtr[s + 1];
      let d = 0;
      for (let t = c0; t < c1; t++) d += delayOut[childList[t]];
      // Too many delays gathered in one front: its dense work would outgrow the direct solve's (see at()).
      if (d > Math.max(DELAY_LIMIT, 2 * M)) return { size: 0, block: new Float64Array(0), delayed: d, sign: 1 };
      const nf0 = nonfsPtr[s];
      const nfLen = nonfsPtr[s + 1] - nf0;
      const m = k + d + nfLen;
      const kFs = kPiv + d;
      fronts.ensureFront(m);
      const { front: F, rowList, colList, target } = fronts;
      const fast = d === 0 && !isRoot;
      // with no delayed pivots the entries' places in the front were computed once
      if (fast) fronts.assemble(m, asmPtr[s], asmPtr[s + 1], energy);
      else F.fill(0, 0, m * m);
      for (let q = 0; q < k; q++) {
        const at = q < kPiv ? q : q + d;
        rowList[at] = f0 + q;
        colList[at] = f0 + q;
      }
      for (let q = 0; q < nfLen; q++) {
        rowList[k + d + q] = nonfs[nf0 + q];
        colList[k + d + q] = nonfs[nf0 + q];
      }
      if (!fast) {
        for (let a = asmPtr[s]; a < asmPtr[s + 1]; a++) {
          const r = asmRow[a];
          const c = asmCol[a];
          const lr = r < kPiv ? r : r + d;
          const lc = c < kPiv ? c : c + d;
          const value = this.asmH[a] + energy * this.asmDiagonal[a];
          // the mouth block joins at the end, in complex numbers, with Σ (not symmetric in general)
          if (isRoot && r >= kPiv && c >= kPiv) this.mouthEntries[2 * ((r - kPiv) * M + (c - kPiv))] += value;
          else F[lc * m + lr] += value;
        }
      }
      // Extend-add of the children's blocks (on top of the stack, in order).
      let off = 0;
      const firstChildStart = c1 > c0 ? cbStart[childList[c0]] : cbTop;
      const firstDelayStart = c1 > c0 ? delayStart[childList[c0]] : delayTop;
      for (let t = c0; t < c1; t++) {
        const c = childList[t];
        const mc = cbDim[c];
        const dc = delayOut[c];
        const ds = delayStart[c];
        for (let q = 0; q < dc; q++) {
          target[q] = kPiv + off + q;
          rowList[kPiv + off + q] = this.delayStack[ds + q];
          colList[kPiv + off + q] = this.delayStack[ds + dc + q];
        }
        const rp = nonfsPtr[c];
        for (let q = dc; q < mc; q++) {
          const rel = relMap[rp + q - dc];
          target[q] = rel < kPiv ? rel : rel + d;
        }
        off += dc;
        fronts.extendAdd(m, cbStart[c], mc);
      }
      cbTop = firstChildStart;
      delayTop = firstDelayStart;

      const done = fronts.factor(m, kFs);
      for (let q = 0; q < done; q++) if (F[q * m + q] < 0) negative++;
      if (isRoot) {
        const size = m - done;
        const delayed = size - M;
        const block = new Float64Array(2 * size * size);
        // (the kernel leaves the lower triangle)
        for (let j = 0; j < size; j++)
          for (let i = j; i < size; i++) {
            const x = F[(done + j) * m + done + i];
            block[2 * (i * size + j)] = x;
            block[2 * (j * size + i)] = x;
          }
        for (let i = 0; i < M; i++)
          for (let j = 0; j < M; j++) {
            const o = 2 * ((delayed + i) * size + delayed + j);
            block[o] += this.mouthEntries[2 * (i * M + j)];
            block[o + 1] = this.mouthEntries[2 * (i * M + j) + 1];
          }
        return { size, block, delayed, sign: negative % 2 ? -1 : 1 };
      }
      const dOut = kFs - done;
      delayOut[s] = dOut;
      delayStart[s] = delayTop;
      if (dOut > 0) {
        if (delayTop + 2 * dOut > this.delayStack.length) {
          const grown = new Int32Array(2 * (delayTop + 2 * dOut));
          grown.set(this.delayStack);
          this.delayStack = grown;
        }
        for (let q = 0; q < dOut; q++) {
          this.delayStack[delayTop + q] = rowList[done + q];
          this.delayStack[delayTop + dOut + q] = colList[done + q];
        }
        delayTop += 2 * dOut;
      }
      const mc = m - done;
      cbDim[s] = mc;
      cbStart[s] = cbTop;
      // (growing the stack may move the front's view, not its contents)
      fronts.ensureStack(cbTop + mc * mc, cbTop);
      fronts.push(m, done, cbTop);
      cbTop += mc * mc;
    }
    throw new Error('MouthSchur: internal error, no root front');
  }
}
