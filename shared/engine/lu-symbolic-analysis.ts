/**
 * Symbolic analysis of the multifrontal sparse LU (sparse-lu.ts), once per pattern:
 * from an elimination order, the elimination tree (Liu 1986, ACM TOMS 12) and its
 * postorder, the column counts of L by row subtrees, fundamental supernodes, relaxed
 * amalgamation of small supernodes into their parents (fewer, larger dense fronts:
 * JavaScript pays per front, dense kernels are cheap), the index list of every
 * front, the map of each child's contribution block into its parent, and where
 * every matrix entry is assembled. Cost: O(nnz(L)) time.
 */
import { invertPermutation, type Adjacency } from './ordering';

/** Supernodes whose merged pivot count stays at or below this are always merged into their parent. */
const AMALGAMATE_ALWAYS = 4;
/** Up to this size, merging is accepted when at most this fraction of the merged front is explicit zeros. */
const AMALGAMATE_SMALL = 16;
const AMALGAMATE_SMALL_ZEROS = 0.3;
/** Any size: merging accepted when at most this fraction of stored entries are explicit zeros. */
const AMALGAMATE_ZEROS = 0.02;

/** Everything the numeric phase needs about the fronts, from the symbolic analysis. */
export interface SymbolicFronts {
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
  /** The same for a complex symmetric matrix (diagonal pivots, one triangle: sparse-lu.ts). */
  symmetricFlops: number;
  maxFront: number;
}

/**
 * Elimination tree, postorder, column counts, supernodes with amalgamation, front
 * index lists and assembly maps, for the elimination order perm0.
 * Returns the final order (a postorder of the amalgamated tree, equivalent to perm0
 * in fill) and the front structure in its labels. amalgamateAlways: supernodes whose
 * merged pivot count stays at or below it are always merged (default 4; the real fronts
 * of mouth-schur.ts, cheaper per flop, take 8).
 */
export function analyseFronts(
  graph: Adjacency,
  perm0: Int32Array,
  colPtr: Int32Array,
  rowIdx: Int32Array,
  amalgamateAlways = AMALGAMATE_ALWAYS,
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
    if (k <= amalgamateAlways || (k <= AMALGAMATE_SMALL && zeros <= AMALGAMATE_SMALL_ZEROS * stored) || zeros <= AMALGAMATE_ZEROS * stored) {
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
  let symmetricFlops = 0;
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
      // (diagonal pivots of a symmetric matrix: the lower triangle of the update, the
      // scaling, and the U row from the L column)
      symmetricFlops += 4 * r * r + 10 * r;
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
      symmetricFlops,
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

function growInt(a: Int32Array, need: number): Int32Array<ArrayBuffer> {
  const b = new Int32Array(Math.max(need, Math.ceil(a.length * 1.5)));
  b.set(a);
  return b;
}
