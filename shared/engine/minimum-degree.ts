/**
 * Approximate minimum-degree ordering (Amestoy, Davis & Duff, "An approximate minimum
 * degree ordering algorithm", SIAM J. Matrix Anal. Appl. 17 (1996) 886–905), in a
 * plain form: the quotient graph of elements (eliminated pivots) and variables, the
 * approximate external degree bound of that paper, element absorption, and
 * indistinguishable variables merged into supervariables (found by hashing their
 * adjacency, then compared exactly) so they are eliminated together. Not done here:
 * aggressive absorption and the special handling of dense rows.
 *
 * On the product's matrices (a lattice with dense lead-mouth blocks) it often needs
 * fewer flops than nested dissection up to some 10⁴ sites; SparseLuPlan.analyse runs
 * both and keeps the cheaper (predicted flops of the symbolic analysis).
 *
 * Cost: about O(nnz(L)) time on lattice graphs (each variable's lists are touched when
 * a neighbouring pivot is eliminated), O(n + nnz(A) + Σ|L_e|) memory.
 */
import type { Adjacency } from './ordering';

/**
 * Returns perm with perm[k] = the original index of the k-th unknown to eliminate.
 * @param graph symmetric adjacency without the diagonal (symmetricAdjacency)
 */
export function minimumDegreeOrder(graph: Adjacency): Int32Array {
  const n = graph.n;
  const { ptr, adj } = graph;
  // Variables: adjacent variables (pruned as elements cover them) and adjacent elements.
  const varAdj: Int32Array[] = [];
  const varAdjLen = new Int32Array(n);
  const elemAdj: number[][] = [];
  for (let i = 0; i < n; i++) {
    varAdj.push(adj.slice(ptr[i], ptr[i + 1]));
    varAdjLen[i] = ptr[i + 1] - ptr[i];
    elemAdj.push([]);
  }
  // Elements: the variables of each (live ones are those with state VARIABLE).
  const elemVars: (Int32Array | null)[] = new Array<Int32Array | null>(n).fill(null);
  const elemSize = new Int32Array(n); // weighted size Σ nv over live variables of the element
  const nv = new Int32Array(n).fill(1); // supervariable sizes; 0 once merged into another
  const next = new Int32Array(n).fill(-1); // members of a supervariable, chained from its principal
  const state = new Uint8Array(n); // 0 variable, 1 element, 2 absorbed element or merged variable
  const degree = new Int32Array(n);
  // Degree buckets: doubly linked lists.
  const head = new Int32Array(n + 1).fill(-1);
  const bNext = new Int32Array(n).fill(-1);
  const bPrev = new Int32Array(n).fill(-1);
  let minDeg = 0;
  const insert = (i: number, d: number): void => {
    degree[i] = d;
    bPrev[i] = -1;
    bNext[i] = head[d];
    if (head[d] >= 0) bPrev[head[d]] = i;
    head[d] = i;
    if (d < minDeg) minDeg = d;
  };
  const remove = (i: number): void => {
    const d = degree[i];
    if (bPrev[i] >= 0) bNext[bPrev[i]] = bNext[i];
    else head[d] = bNext[i];
    if (bNext[i] >= 0) bPrev[bNext[i]] = bPrev[i];
  };
  for (let i = 0; i < n; i++) insert(i, varAdjLen[i]);

  const mark = new Int32Array(n).fill(0);
  let stamp = 0;
  const w = new Int32Array(n).fill(-1);
  const wStamp = new Int32Array(n).fill(0);
  const perm = new Int32Array(n);
  let k = 0;
  let lp = new Int32Array(64);
  const hash = new Float64Array(n);

  while (k < n) {
    while (head[minDeg] < 0) minDeg++;
    const p = head[minDeg];
    remove(p);
    // Element p: its variables are p's variables and those of p's elements, less p.
    stamp++;
    mark[p] = stamp;
    let len = 0;
    let size = 0;
    const pushVar = (v: number): void => {
      if (state[v] !== 0 || mark[v] === stamp) return;
      mark[v] = stamp;
      if (len === lp.length) {
        const bigger = new Int32Array(2 * len);
        bigger.set(lp);
        lp = bigger;
      }
      lp[len++] = v;
      size += nv[v];
    };
    const pa = varAdj[p];
    for (let q = 0; q < varAdjLen[p]; q++) pushVar(pa[q]);
    for (const e of elemAdj[p]) {
      if (state[e] !== 1) continue;
      const le = elemVars[e]!;
      for (let q = 0; q < le.length; q++) pushVar(le[q]);
      state[e] = 2; // absorbed into p
      elemVars[e] = null;
    }
    // Output p's supervariable.
    for (let v = p; v >= 0; v = next[v]) perm[k++] = v;
    state[p] = 1;
    const lpList = lp.slice(0, len);
    elemVars[p] = lpList;
    elemSize[p] = size;
    varAdj[p] = new Int32Array(0);
    varAdjLen[p] = 0;
    elemAdj[p] = [];

    // |L_e \ L_p| for the other elements next to L_p (weighted), by subtraction.
    const wMark = stamp;
    for (let q = 0; q < len; q++) {
      const i = lpList[q];
      for (const e of elemAdj[i]) {
        if (state[e] !== 1 || e === p) continue;
        if (wStamp[e] !== wMark) {
          wStamp[e] = wMark;
          w[e] = elemSize[e];
        }
        w[e] -= nv[i];
      }
    }
    // Update every variable of L_p: its element list (absorbed ones out, p in), its
    // variable list (those now covered by p out), its approximate degree, its hash.
    const remaining = n - k;
    for (let q = 0; q < len; q++) {
      const i = lpList[q];
      remove(i);
      const ei = elemAdj[i];
      let out = 0;
      let dElems = 0;
      let h = 0;
      for (let t = 0; t < ei.length; t++) {
        const e = ei[t];
        if (state[e] !== 1 || e === p) continue;
        // an element inside L_p adds nothing: absorb it into p for this variable's view
        const we = wStamp[e] === wMark ? w[e] : elemSize[e];
        if (we === 0) {
          state[e] = 2;
          elemVars[e] = null;
          continue;
        }
        ei[out++] = e;
        dElems += we;
        h += e;
      }
      ei.length = out;
      ei.push(p);
      h += p;
      const ai = varAdj[i];
      let aOut = 0;
      let dVars = 0;
      for (let t = 0; t < varAdjLen[i]; t++) {
        const v = ai[t];
        if (state[v] !== 0 || mark[v] === stamp) continue; // eliminated, merged, or covered by p
        ai[aOut++] = v;
        dVars += nv[v];
        h += v;
      }
      varAdjLen[i] = aOut;
      const external = size - nv[i];
      const bound = Math.min(remaining - nv[i], degree[i] + external, dVars + external + dElems);
      degree[i] = Math.max(0, bound);
      hash[i] = h;
    }
    // Supervariables: variables of L_p with the same adjacency (same elements, same
    // variables) are indistinguishable; merge them into the first.
    for (let q = 0; q < len; q++) {
      const i = lpList[q];
      if (state[i] !== 0) continue;
      for (let r = q + 1; r < len; r++) {
        const j = lpList[r];
        if (state[j] !== 0 || hash[j] !== hash[i]) continue;
        if (!sameAdjacency(i, j, varAdj, varAdjLen, elemAdj, mark, ++stamp)) continue;
        // j joins i: its members follow i's in the order
        let tail = i;
        while (next[tail] >= 0) tail = next[tail];
        next[tail] = j;
        degree[i] = Math.max(0, degree[i] - nv[j]); // i's external degree no longer counts j
        nv[i] += nv[j];
        nv[j] = 0;
        state[j] = 2;
        varAdjLen[j] = 0;
        elemAdj[j] = [];
      }
    }
    for (let q = 0; q < len; q++) {
      const i = lpList[q];
      if (state[i] !== 0) continue;
      insert(i, Math.max(0, Math.min(degree[i], n - k - nv[i])));
    }
  }
  return perm;
}

/** True when variables i and j have the same element and variable lists, each other aside. */
function sameAdjacency(i: number, j: number, varAdj: Int32Array[], varAdjLen: Int32Array, elemAdj: number[][], mark: Int32Array, stamp: number): boolean {
  const ei = elemAdj[i];
  const ej = elemAdj[j];
  if (ei.length !== ej.length) return false;
  for (const e of ei) mark[e] = stamp;
  for (const e of ej) if (mark[e] !== stamp) return false;
  let ni = 0;
  const ai = varAdj[i];
  const aj = varAdj[j];
  for (let t = 0; t < varAdjLen[i]; t++) {
    if (ai[t] === j) continue;
    mark[ai[t]] = stamp;
    ni++;
  }
  let nj = 0;
  for (let t = 0; t < varAdjLen[j]; t++) {
    if (aj[t] === i) continue;
    if (mark[aj[t]] !== stamp) return false;
    nj++;
  }
  return ni === nj;
}
