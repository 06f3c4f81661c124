/**
 * Real symmetric dense front kernel, for the fronts of E − H with a real Hamiltonian (no
 * magnetic field) that the mouth Schur complement (mouth-schur.ts) eliminates in real
 * numbers: a real multiply-add is 2 flops against the complex one's 8, and symmetry
 * halves the update, so a front costs about an eighth of the complex LU's flops.
 *
 * A block of m rows has element (r, c) at offset c·m + r (column-major).
 */

/**
 * Column j −= Σ_{q0 ≤ q < q1} L[·, q]·U[q, j] below each pivot, unit lower multipliers
 * in columns q; four pivots per sweep over the column. Cost 2·(q1−q0)·(m − q0) flops.
 */
function eliminateColumn(f: Float64Array, m: number, j: number, q0: number, q1: number): void {
  const cj = j * m;
  let q = q0;
  for (; q + 4 <= q1; q += 4) {
    const a = cj + q;
    const c0 = q * m;
    const c1 = c0 + m;
    const c2 = c1 + m;
    const c3 = c2 + m;
    // the unit lower 4×4 triangle of pivots q..q+3, row by row
    const u0 = f[a];
    const u1 = f[a + 1] - f[c0 + q + 1] * u0;
    const u2 = f[a + 2] - f[c0 + q + 2] * u0 - f[c1 + q + 2] * u1;
    const u3 = f[a + 3] - f[c0 + q + 3] * u0 - f[c1 + q + 3] * u1 - f[c2 + q + 3] * u2;
    f[a + 1] = u1;
    f[a + 2] = u2;
    f[a + 3] = u3;
    if (u0 === 0 && u1 === 0 && u2 === 0 && u3 === 0) continue;
    for (let r = q + 4; r < m; r++) f[cj + r] -= f[c0 + r] * u0 + f[c1 + r] * u1 + f[c2 + r] * u2 + f[c3 + r] * u3;
  }
  for (; q < q1; q++) {
    const c0 = q * m;
    const u = f[cj + q];
    if (u === 0) continue;
    for (let r = q + 1; r < m; r++) f[cj + r] -= f[c0 + r] * u;
  }
}

/**
 * eliminateColumn on columns j and j+1 at once (each multiplier loaded serves two
 * columns), restricted to what a symmetric front needs: the rows q0..q1−1
 * (the U entries the later pivots of the block read) and the rows from `from` down
 * (the lower triangle, from = j), so the trailing update costs half the flops of an LU's.
 */
function eliminateLowerPair(f: Float64Array, m: number, j: number, q0: number, q1: number): void {
  const cj = j * m;
  const ck = cj + m;
  let q = q0;
  for (; q + 4 <= q1; q += 4) {
    const c0 = q * m;
    const c1 = c0 + m;
    const c2 = c1 + m;
    const c3 = c2 + m;
    const l10 = f[c0 + q + 1];
    const l20 = f[c0 + q + 2];
    const l21 = f[c1 + q + 2];
    const l30 = f[c0 + q + 3];
    const l31 = f[c1 + q + 3];
    const l32 = f[c2 + q + 3];
    const a = cj + q;
    const u0 = f[a];
    const u1 = f[a + 1] - l10 * u0;
    const u2 = f[a + 2] - l20 * u0 - l21 * u1;
    const u3 = f[a + 3] - l30 * u0 - l31 * u1 - l32 * u2;
    f[a + 1] = u1;
    f[a + 2] = u2;
    f[a + 3] = u3;
    const b = ck + q;
    const v0 = f[b];
    const v1 = f[b + 1] - l10 * v0;
    const v2 = f[b + 2] - l20 * v0 - l21 * v1;
    const v3 = f[b + 3] - l30 * v0 - l31 * v1 - l32 * v2;
    f[b + 1] = v1;
    f[b + 2] = v2;
    f[b + 3] = v3;
    if (u0 === 0 && u1 === 0 && u2 === 0 && u3 === 0 && v0 === 0 && v1 === 0 && v2 === 0 && v3 === 0) continue;
    // rows q+4..q1−1, then j..m−1 (row j of column j+1 lies above its diagonal: harmless, mirrored later)
    for (let r = q + 4; r < m; r++) {
      if (r === q1) r = j;
      const x0 = f[c0 + r];
      const x1 = f[c1 + r];
      const x2 = f[c2 + r];
      const x3 = f[c3 + r];
      f[cj + r] -= x0 * u0 + x1 * u1 + x2 * u2 + x3 * u3;
      f[ck + r] -= x0 * v0 + x1 * v1 + x2 * v2 + x3 * v3;
    }
  }
  for (; q < q1; q++) {
    const c0 = q * m;
    const u = f[cj + q];
    const v = f[ck + q];
    if (u === 0 && v === 0) continue;
    for (let r = q + 1; r < m; r++) {
      if (r === q1) r = j;
      f[cj + r] -= f[c0 + r] * u;
      f[ck + r] -= f[c0 + r] * v;
    }
  }
}

/**
 * Partial LDLᵀ of a real symmetric front (E − H for a real Hamiltonian) with diagonal
 * pivots only: a fully-summed diagonal d is accepted when |d| ≥ u·max |F[r, p]| over its
 * whole column (threshold pivoting, growth ≤ 1 + 1/u per step: Duff, Erisman & Reid,
 * "Direct Methods for Sparse Matrices", 2nd ed. 2017, §5.4, and ch. 12 on delayed pivots
 * in multifrontal codes; the symmetric case in Duff & Reid 1983, ACM TOMS 9); otherwise
 * the column is delayed (swapped with its row behind the candidates), so it reaches the
 * parent front, and at the root the complex block that Σ regularises.
 *
 * Blocked as factorFront of dense-complex.ts (left-looking inside blocks of `nb` pivots,
 * so a rejected column is restored from `save`, m doubles), but each block's trailing
 * update computes the lower triangle only and then mirrors it for the next block, which
 * halves the flops. On return F holds the unit lower multipliers and the pivots in its
 * first `done` columns and the Schur complement in the lower triangle of F[done.., done..]
 * (its upper triangle is stale: copyLowerSymmetric packs it whole);
 * symmetric swaps are mirrored in rowList and colList (which stay equal).
 * Cost: Σ_t (m − t)² flops over the eliminated pivots t, about. Returns `done`.
 */
export function factorFrontSymmetric(
  f: Float64Array,
  m: number,
  kFs: number,
  threshold: number,
  rowList: Int32Array,
  colList: Int32Array,
  save: Float64Array,
  nb = 32,
): number {
  let p = 0;
  let kEnd = kFs;
  while (p < kEnd) {
    const b0 = p;
    while (p < kEnd && p - b0 < nb) {
      const cp = p * m;
      if (p > b0) {
        save.set(f.subarray(cp + b0, cp + m), 0);
        eliminateColumn(f, m, p, b0, p);
      }
      let colMag = 0;
      for (let r = p + 1; r < m; r++) {
        const mag = Math.abs(f[cp + r]);
        if (mag > colMag) colMag = mag;
      }
      const diagMag = Math.abs(f[cp + p]);
      if (!(diagMag > 0 && diagMag >= threshold * colMag)) {
        if (p > b0) f.set(save.subarray(0, m - b0), cp + b0);
        kEnd--;
        if (kEnd !== p) {
          swapRows(f, m, p, kEnd, rowList);
          swapColumns(f, m, p, kEnd, colList);
        }
        continue;
      }
      const inv = 1 / f[cp + p];
      for (let r = cp + p + 1; r < cp + m; r++) f[r] *= inv;
      p++;
    }
    if (p > b0) {
      let j = p;
      for (; j + 1 < m; j += 2) eliminateLowerPair(f, m, j, b0, p);
      if (j < m) eliminateColumn(f, m, j, b0, p);
      // the upper triangle of the trailing block from its lower one, for the next block's columns
      if (p < kEnd) for (let c = p; c < m; c++) for (let r = c + 1; r < m; r++) f[r * m + c] = f[c * m + r];
    }
  }
  return p;
}

function swapRows(f: Float64Array, m: number, a: number, b: number, rowList: Int32Array): void {
  const t = rowList[a];
  rowList[a] = rowList[b];
  rowList[b] = t;
  for (let c = 0; c < m * m; c += m) {
    const x = f[c + a];
    f[c + a] = f[c + b];
    f[c + b] = x;
  }
}

function swapColumns(f: Float64Array, m: number, a: number, b: number, colList: Int32Array): void {
  const t = colList[a];
  colList[a] = colList[b];
  colList[b] = t;
  const ca = a * m;
  const cb = b * m;
  for (let r = 0; r < m; r++) {
    const x = f[ca + r];
    f[ca + r] = f[cb + r];
    f[cb + r] = x;
  }
}

/**
 * Copies the symmetric block whose lower triangle is the mc×mc block at `src` of f
 * (column stride `stride`) into `out` at `at`, packed mc×mc with both triangles.
 */
export function copyLowerSymmetric(f: Float64Array, src: number, stride: number, mc: number, out: Float64Array, at: number): void {
  for (let c = 0; c < mc; c++) {
    const from = src + c * stride;
    for (let r = c; r < mc; r++) {
      const x = f[from + r];
      out[at + c * mc + r] = x;
      out[at + r * mc + c] = x;
    }
  }
}
