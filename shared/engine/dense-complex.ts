/**
 * Dense complex kernels on column-major, interleaved (re, im) Float64Array blocks,
 * used on the frontal matrices of the multifrontal LU (sparse-lu.ts).
 *
 * A block of m rows has element (r, c) at offset 2·(c·m + r). All loops are written
 * over plain indices with complex arithmetic spelled out, so V8 keeps everything in
 * registers and nothing is allocated.
 */

/**
 * Applies the eliminations of pivots q0..q1−1 to column j of the front F (m rows):
 * for q = q0..q1−1: F[r, j] −= F[r, q] · F[q, j] for r = q+1..m−1, with the unit
 * lower multipliers stored in columns q (LAPACK getrf layout). Four pivots are
 * applied per sweep over the column to cut loads and stores of F[·, j] by 4.
 *
 * Cost: 8·(q1−q0)·(m − q0) real flops, about.
 */
function eliminateColumn(f: Float64Array, m: number, j: number, q0: number, q1: number): void {
  const cj = 2 * j * m;
  let q = q0;
  for (; q + 4 <= q1; q += 4) {
    triangle4(f, m, cj, q);
    groupRows(f, m, cj, q, q + 4);
  }
  for (; q < q1; q++) pivotRows(f, m, cj, q, q + 1);
}

/**
 * Rows r0..m−1 of the column at cj −= Σ of the four pivots q..q+3 (their U entries at
 * cj + 2q), one sum of four products per subtraction; nothing when all four are zero.
 */
function groupRows(f: Float64Array, m: number, cj: number, q: number, r0: number): void {
  const end = 2 * m;
  const c0 = 2 * q * m;
  const c1 = c0 + 2 * m;
  const c2 = c1 + 2 * m;
  const c3 = c2 + 2 * m;
  const a = cj + 2 * q;
  const u0r = f[a],
    u0i = f[a + 1],
    u1r = f[a + 2],
    u1i = f[a + 3];
  const u2r = f[a + 4],
    u2i = f[a + 5],
    u3r = f[a + 6],
    u3i = f[a + 7];
  if (u0r === 0 && u0i === 0 && u1r === 0 && u1i === 0 && u2r === 0 && u2i === 0 && u3r === 0 && u3i === 0) return;
  for (let r = 2 * r0; r < end; r += 2) {
    const x0r = f[c0 + r],
      x0i = f[c0 + r + 1];
    const x1r = f[c1 + r],
      x1i = f[c1 + r + 1];
    const x2r = f[c2 + r],
      x2i = f[c2 + r + 1];
    const x3r = f[c3 + r],
      x3i = f[c3 + r + 1];
    f[cj + r] -= x0r * u0r - x0i * u0i + x1r * u1r - x1i * u1i + x2r * u2r - x2i * u2i + x3r * u3r - x3i * u3i;
    f[cj + r + 1] -= x0r * u0i + x0i * u0r + x1r * u1i + x1i * u1r + x2r * u2i + x2i * u2r + x3r * u3i + x3i * u3r;
  }
}

/** Rows r0..m−1 of the column at cj −= L[·, q]·U[q, j] for one pivot q; nothing when U[q, j] = 0. */
function pivotRows(f: Float64Array, m: number, cj: number, q: number, r0: number): void {
  const c0 = 2 * q * m;
  const ur = f[cj + 2 * q],
    ui = f[cj + 2 * q + 1];
  if (ur === 0 && ui === 0) return;
  for (let r = 2 * r0; r < 2 * m; r += 2) {
    const xr = f[c0 + r],
      xi = f[c0 + r + 1];
    f[cj + r] -= xr * ur - xi * ui;
    f[cj + r + 1] -= xr * ui + xi * ur;
  }
}

/**
 * eliminateColumn on the two neighbouring columns j and j+1 at once: every
 * multiplier loaded from F serves two columns, which makes the trailing update
 * about a third faster in V8 than one column at a time (measured, 320×320 front).
 */
function eliminateColumnPair(f: Float64Array, m: number, j: number, q0: number, q1: number): void {
  const cj = 2 * j * m;
  const ck = cj + 2 * m;
  const end = 2 * m;
  let q = q0;
  for (; q + 4 <= q1; q += 4) {
    triangle4(f, m, cj, q);
    triangle4(f, m, ck, q);
    const c0 = 2 * q * m;
    const c1 = c0 + 2 * m;
    const c2 = c1 + 2 * m;
    const c3 = c2 + 2 * m;
    const a = cj + 2 * q;
    const b = ck + 2 * q;
    const u0r = f[a],
      u0i = f[a + 1],
      u1r = f[a + 2],
      u1i = f[a + 3];
    const u2r = f[a + 4],
      u2i = f[a + 5],
      u3r = f[a + 6],
      u3i = f[a + 7];
    const v0r = f[b],
      v0i = f[b + 1],
      v1r = f[b + 2],
      v1i = f[b + 3];
    const v2r = f[b + 4],
      v2i = f[b + 5],
      v3r = f[b + 6],
      v3i = f[b + 7];
    if (
      u0r === 0 &&
      u0i === 0 &&
      u1r === 0 &&
      u1i === 0 &&
      u2r === 0 &&
      u2i === 0 &&
      u3r === 0 &&
      u3i === 0 &&
      v0r === 0 &&
      v0i === 0 &&
      v1r === 0 &&
      v1i === 0 &&
      v2r === 0 &&
      v2i === 0 &&
      v3r === 0 &&
      v3i === 0
    )
      continue;
    for (let r = 2 * (q + 4); r < end; r += 2) {
      const x0r = f[c0 + r],
        x0i = f[c0 + r + 1];
      const x1r = f[c1 + r],
        x1i = f[c1 + r + 1];
      const x2r = f[c2 + r],
        x2i = f[c2 + r + 1];
      const x3r = f[c3 + r],
        x3i = f[c3 + r + 1];
      f[cj + r] -= x0r * u0r - x0i * u0i + x1r * u1r - x1i * u1i + x2r * u2r - x2i * u2i + x3r * u3r - x3i * u3i;
      f[cj + r + 1] -= x0r * u0i + x0i * u0r + x1r * u1i + x1i * u1r + x2r * u2i + x2i * u2r + x3r * u3i + x3i * u3r;
      f[ck + r] -= x0r * v0r - x0i * v0i + x1r * v1r - x1i * v1i + x2r * v2r - x2i * v2i + x3r * v3r - x3i * v3i;
      f[ck + r + 1] -= x0r * v0i + x0i * v0r + x1r * v1i + x1i * v1r + x2r * v2i + x2i * v2r + x3r * v3i + x3i * v3r;
    }
  }
  if (q < q1) {
    eliminateColumn(f, m, j, q, q1);
    eliminateColumn(f, m, j + 1, q, q1);
  }
}

/**
 * The unit lower 4×4 triangle of pivots q..q+3 applied to rows q+1..q+3 of the
 * column starting at offset cj, sequentially (each row needs the one above).
 */
function triangle4(f: Float64Array, m: number, cj: number, q: number): void {
  const c0 = 2 * q * m;
  const c1 = c0 + 2 * m;
  const c2 = c1 + 2 * m;
  const a0 = cj + 2 * q;
  const u0r = f[a0],
    u0i = f[a0 + 1];
  let l = c0 + 2 * (q + 1);
  const u1r = f[a0 + 2] - (f[l] * u0r - f[l + 1] * u0i);
  const u1i = f[a0 + 3] - (f[l] * u0i + f[l + 1] * u0r);
  f[a0 + 2] = u1r;
  f[a0 + 3] = u1i;
  l = c0 + 2 * (q + 2);
  let l2 = c1 + 2 * (q + 2);
  const u2r = f[a0 + 4] - (f[l] * u0r - f[l + 1] * u0i) - (f[l2] * u1r - f[l2 + 1] * u1i);
  const u2i = f[a0 + 5] - (f[l] * u0i + f[l + 1] * u0r) - (f[l2] * u1i + f[l2 + 1] * u1r);
  f[a0 + 4] = u2r;
  f[a0 + 5] = u2i;
  l = c0 + 2 * (q + 3);
  l2 = c1 + 2 * (q + 3);
  const l3 = c2 + 2 * (q + 3);
  f[a0 + 6] -= f[l] * u0r - f[l + 1] * u0i + (f[l2] * u1r - f[l2 + 1] * u1i) + (f[l3] * u2r - f[l3 + 1] * u2i);
  f[a0 + 7] -= f[l] * u0i + f[l + 1] * u0r + (f[l2] * u1i + f[l2 + 1] * u1r) + (f[l3] * u2i + f[l3 + 1] * u2r);
}

/**
 * Partial LU of a front: eliminates up to kFs fully-summed columns of the m×m
 * front F with threshold partial pivoting among the fully-summed rows 0..kFs−1
 * (Duff, Erisman & Reid, "Direct Methods for Sparse Matrices", 2nd ed. 2017, §5.4
 * and ch. 12 on delayed pivots in multifrontal codes).
 *
 * Pivot test for column p: a fully-summed row r is acceptable when
 * |F[r,p]| ≥ u · max over all rows ≥ p of |F[·,p]|; the diagonal is preferred when
 * acceptable, otherwise the largest fully-summed entry. A column with no acceptable
 * row is restored and swapped to the end of the candidates (a delayed pivot): the
 * caller passes it, with one unused fully-summed row, to the parent front.
 *
 * Blocked right-looking with left-looking inside each block of `nb` pivots, so a
 * rejected column is cheap to restore (`save` holds 2·m doubles). Row and column
 * swaps are mirrored in rowList/colList. On return F holds L (unit, below the
 * diagonal) and U (on and above) in its first `done` rows/columns, and the Schur
 * complement in F[done.., done..].
 *
 * Cost: 8·Σ_t (m − t)² real flops over the eliminated pivots t, about.
 *
 * symmetric: F is complex symmetric (Fᵀ = F, no conjugation), as z − H − Σ is without a
 * magnetic field. Only diagonal pivots are taken (the same threshold test on the
 * diagonal; a rejected column is delayed with its row, a symmetric swap), so the
 * remaining block stays symmetric: only its lower triangle is read and updated, the U
 * entries come from the L columns (U = D·Lᵀ, uFromL), half the flops of the trailing
 * update (the symmetric-indefinite pivoting of Duff, Erisman & Reid, §12.6, without 2×2
 * pivots). F then holds L and U in the layout above, and the Schur complement is mirrored
 * whole before returning (the WebAssembly kernel mirrors it only when pivots were
 * delayed, and its parents add the lower triangle of the others).
 *
 * Returns the number of pivots eliminated (kFs minus the delayed ones).
 */
export function factorFront(
  f: Float64Array,
  m: number,
  kFs: number,
  threshold: number,
  rowList: Int32Array,
  colList: Int32Array,
  save: Float64Array,
  nb = 32,
  symmetric = false,
): number {
  const u2 = threshold * threshold;
  let p = 0;
  let kEnd = kFs;
  let firstDelay = -1;
  while (p < kEnd) {
    const b0 = p;
    while (p < kEnd && p - b0 < nb) {
      const cp = 2 * p * m;
      if (p > b0) {
        save.set(f.subarray(cp + 2 * b0, cp + 2 * m), 0);
        if (symmetric) {
          uFromL(f, m, p, b0, p);
          lowerUpdate(f, m, p, b0, p, p);
        } else eliminateColumn(f, m, p, b0, p);
      }
      // Pivot search: the largest entry among fully-summed rows, and the column maximum.
      let best = -1;
      let bestMag = 0;
      for (let r = p; r < kFs; r++) {
        const xr = f[cp + 2 * r],
          xi = f[cp + 2 * r + 1];
        const mag = xr * xr + xi * xi;
        if (mag > bestMag) {
          bestMag = mag;
          best = r;
        }
      }
      let colMag = bestMag;
      for (let r = kFs; r < m; r++) {
        const xr = f[cp + 2 * r],
          xi = f[cp + 2 * r + 1];
        const mag = xr * xr + xi * xi;
        if (mag > colMag) colMag = mag;
      }
      const dr = f[cp + 2 * p],
        di = f[cp + 2 * p + 1];
      const diagMag = dr * dr + di * di;
      let piv = -1;
      if (diagMag > 0 && diagMag >= u2 * colMag) piv = p;
      else if (!symmetric && bestMag > 0 && bestMag >= u2 * colMag) piv = best;
      if (piv < 0) {
        // Delay: undo this block's updates on the column, move it behind the candidates.
        if (p > b0) f.set(save.subarray(0, 2 * (m - b0)), cp + 2 * b0);
        if (firstDelay < 0) firstDelay = p;
        kEnd--;
        if (kEnd !== p) {
          if (symmetric) {
            // (a symmetric swap moves entries across the diagonal: both triangles first)
            mirrorLower(f, m, p);
            swapRows(f, m, p, kEnd, rowList);
          }
          swapColumns(f, m, p, kEnd, colList);
        }
        continue;
      }
      if (piv !== p) swapRows(f, m, p, piv, rowList);
      // Multipliers: column p below the pivot times 1/pivot.
      const pr = f[cp + 2 * p],
        pi = f[cp + 2 * p + 1];
      const den = pr * pr + pi * pi;
      const ir = pr / den,
        ii = -pi / den;
      for (let r = 2 * (p + 1); r < 2 * m; r += 2) {
        const xr = f[cp + r],
          xi = f[cp + r + 1];
        f[cp + r] = xr * ir - xi * ii;
        f[cp + r + 1] = xr * ii + xi * ir;
      }
      p++;
    }
    // Right-looking update of every column not yet pivoted (later candidates and the rest).
    if (p > b0 && symmetric) {
      for (let j = p; j < m; j++) {
        uFromL(f, m, j, b0, p);
        lowerUpdate(f, m, j, b0, p, j);
      }
    } else if (p > b0) {
      let j = p;
      for (; j + 1 < m; j += 2) eliminateColumnPair(f, m, j, b0, p);
      if (j < m) eliminateColumn(f, m, j, b0, p);
    }
    // A symmetric front tries its delayed columns again when pivots were taken after the
    // first of them was set aside: the updates may have made their diagonals acceptable.
    if (p === kEnd && symmetric && kEnd < kFs && p > firstDelay) {
      kEnd = kFs;
      firstDelay = -1;
    }
  }
  if (symmetric) mirrorLower(f, m, p);
  return p;
}

/**
 * A symmetric front's U entries of column j from its L columns: U[q, j] = L[j, q]·d_q for
 * the pivots q0..q1−1, d_q = F[q, q] (U = D·Lᵀ), so no entry above the diagonal is read.
 */
function uFromL(f: Float64Array, m: number, j: number, q0: number, q1: number): void {
  const cj = 2 * j * m;
  for (let q = q0; q < q1; q++) {
    const cq = 2 * q * m;
    const dr = f[cq + 2 * q],
      di = f[cq + 2 * q + 1];
    const lr = f[cq + 2 * j],
      li = f[cq + 2 * j + 1];
    f[cj + 2 * q] = lr * dr - li * di;
    f[cj + 2 * q + 1] = lr * di + li * dr;
  }
}

/**
 * Rows from..m−1 of column j −= Σ_{q0 ≤ q < q1} L[·, q]·U[q, j], with the U entries in
 * place: the row loop of eliminateColumn (four pivots summed per subtraction, then the
 * rest one by one, pivots with zero U skipped) on the lower rows of a symmetric front.
 */
function lowerUpdate(f: Float64Array, m: number, j: number, q0: number, q1: number, from: number): void {
  const cj = 2 * j * m;
  let q = q0;
  for (; q + 4 <= q1; q += 4) groupRows(f, m, cj, q, from);
  for (; q < q1; q++) pivotRows(f, m, cj, q, from);
}

/** Copies the lower triangle of F[from.., from..] onto its upper triangle. */
function mirrorLower(f: Float64Array, m: number, from: number): void {
  for (let c = from; c + 1 < m; c++) {
    const col = 2 * c * m;
    for (let r = c + 1; r < m; r++) {
      const across = 2 * (r * m + c);
      f[across] = f[col + 2 * r];
      f[across + 1] = f[col + 2 * r + 1];
    }
  }
}

/** Swaps rows a and b across all m columns of F (and in rowList). */
function swapRows(f: Float64Array, m: number, a: number, b: number, rowList: Int32Array): void {
  const t = rowList[a];
  rowList[a] = rowList[b];
  rowList[b] = t;
  for (let c = 0; c < m; c++) {
    const ia = 2 * (c * m + a);
    const ib = 2 * (c * m + b);
    const xr = f[ia],
      xi = f[ia + 1];
    f[ia] = f[ib];
    f[ia + 1] = f[ib + 1];
    f[ib] = xr;
    f[ib + 1] = xi;
  }
}

/** Swaps columns a and b of F (and in colList). */
function swapColumns(f: Float64Array, m: number, a: number, b: number, colList: Int32Array): void {
  const t = colList[a];
  colList[a] = colList[b];
  colList[b] = t;
  const ca = 2 * a * m;
  const cb = 2 * b * m;
  for (let r = 0; r < 2 * m; r++) {
    const x = f[ca + r];
    f[ca + r] = f[cb + r];
    f[cb + r] = x;
  }
}

/*
 * Triangular solves with one factorised front. A right-hand side is held in x at
 * offset xo (front row r at x[xo + 2r]). The front's factors sit in f at offset v:
 * the m×k panel of L (unit, below the diagonal) and U11 (on and above), column t
 * at v + 2·t·m, followed by the k×(m−k) block U12, column j at v + 2·k·m + 2·j·k
 * (the layout SparseLuPlan.factor stores). Each kernel takes four columns of the
 * factor per sweep over x, so every load and store of x serves four multipliers
 * (the blocking of eliminateColumn), and the *Pair kernels update two right-hand
 * sides (offsets xo, yo) per load of the factor (4.3 → 7 GFlop/s on a 120×40
 * panel in V8, measured). Cost of each: 8 real flops per stored entry read and per
 * right-hand side (m·k − k²/2 entries of L, k²/2 + k·(m−k) of U), about.
 */

/** Unit lower 4×4 triangle of pivots t..t+3 (l0 = 2t; c0, c1, c2 their columns) applied to x[p..p+7] in place. */
function lowerTriangle4(f: Float64Array, c0: number, c1: number, c2: number, l0: number, x: Float64Array, p: number): void {
  const a0r = x[p],
    a0i = x[p + 1];
  let l = l0 + 2;
  const a1r = x[p + 2] - (f[c0 + l] * a0r - f[c0 + l + 1] * a0i);
  const a1i = x[p + 3] - (f[c0 + l] * a0i + f[c0 + l + 1] * a0r);
  l += 2;
  const a2r = x[p + 4] - (f[c0 + l] * a0r - f[c0 + l + 1] * a0i) - (f[c1 + l] * a1r - f[c1 + l + 1] * a1i);
  const a2i = x[p + 5] - (f[c0 + l] * a0i + f[c0 + l + 1] * a0r) - (f[c1 + l] * a1i + f[c1 + l + 1] * a1r);
  l += 2;
  x[p + 6] -= f[c0 + l] * a0r - f[c0 + l + 1] * a0i + (f[c1 + l] * a1r - f[c1 + l + 1] * a1i) + (f[c2 + l] * a2r - f[c2 + l + 1] * a2i);
  x[p + 7] -= f[c0 + l] * a0i + f[c0 + l + 1] * a0r + (f[c1 + l] * a1i + f[c1 + l + 1] * a1r) + (f[c2 + l] * a2i + f[c2 + l + 1] * a2r);
  x[p + 2] = a1r;
  x[p + 3] = a1i;
  x[p + 4] = a2r;
  x[p + 5] = a2i;
}

/**
 * Upper 4×4 triangle of columns q0..q0+3 of U11 (d = 2·q0; c0..c3 the columns)
 * solved in place on x[p..p+7], last unknown first.
 */
function upperTriangle4(f: Float64Array, c0: number, c1: number, c2: number, c3: number, d: number, x: Float64Array, p: number): void {
  let br = x[p + 6],
    bi = x[p + 7];
  let dr = f[c3 + d + 6],
    di = f[c3 + d + 7];
  let den = dr * dr + di * di;
  const x3r = (br * dr + bi * di) / den,
    x3i = (bi * dr - br * di) / den;
  br = x[p + 4] - (f[c3 + d + 4] * x3r - f[c3 + d + 5] * x3i);
  bi = x[p + 5] - (f[c3 + d + 4] * x3i + f[c3 + d + 5] * x3r);
  dr = f[c2 + d + 4];
  di = f[c2 + d + 5];
  den = dr * dr + di * di;
  const x2r = (br * dr + bi * di) / den,
    x2i = (bi * dr - br * di) / den;
  br = x[p + 2] - (f[c3 + d + 2] * x3r - f[c3 + d + 3] * x3i) - (f[c2 + d + 2] * x2r - f[c2 + d + 3] * x2i);
  bi = x[p + 3] - (f[c3 + d + 2] * x3i + f[c3 + d + 3] * x3r) - (f[c2 + d + 2] * x2i + f[c2 + d + 3] * x2r);
  dr = f[c1 + d + 2];
  di = f[c1 + d + 3];
  den = dr * dr + di * di;
  const x1r = (br * dr + bi * di) / den,
    x1i = (bi * dr - br * di) / den;
  br = x[p] - (f[c3 + d] * x3r - f[c3 + d + 1] * x3i) - (f[c2 + d] * x2r - f[c2 + d + 1] * x2i) - (f[c1 + d] * x1r - f[c1 + d + 1] * x1i);
  bi = x[p + 1] - (f[c3 + d] * x3i + f[c3 + d + 1] * x3r) - (f[c2 + d] * x2i + f[c2 + d + 1] * x2r) - (f[c1 + d] * x1i + f[c1 + d + 1] * x1r);
  dr = f[c0 + d];
  di = f[c0 + d + 1];
  den = dr * dr + di * di;
  x[p] = (br * dr + bi * di) / den;
  x[p + 1] = (bi * dr - br * di) / den;
  x[p + 2] = x1r;
  x[p + 3] = x1i;
  x[p + 4] = x2r;
  x[p + 5] = x2i;
  x[p + 6] = x3r;
  x[p + 7] = x3i;
}

/** x[p..p+1] ← x[p..p+1] / (f[c] + i·f[c+1]). */
function divideBy(f: Float64Array, c: number, x: Float64Array, p: number): void {
  const br = x[p],
    bi = x[p + 1];
  const dr = f[c],
    di = f[c + 1];
  const den = dr * dr + di * di;
  x[p] = (br * dr + bi * di) / den;
  x[p + 1] = (bi * dr - br * di) / den;
}

/**
 * Forward substitution with the unit lower panel: x[0..k) ← L11⁻¹ x[0..k), then
 * x[k..m) −= L21 · x[0..k) (Golub & Van Loan, "Matrix Computations", 4th ed.,
 * Alg. 3.1.3, column-oriented).
 */
export function lowerSolveFront(f: Float64Array, v: number, m: number, k: number, x: Float64Array, xo: number): void {
  const end = 2 * m;
  let t = 0;
  for (; t + 4 <= k; t += 4) {
    const c0 = v + 2 * t * m;
    const c1 = c0 + 2 * m;
    const c2 = c1 + 2 * m;
    const c3 = c2 + 2 * m;
    const p = xo + 2 * t;
    lowerTriangle4(f, c0, c1, c2, 2 * t, x, p);
    const a0r = x[p],
      a0i = x[p + 1],
      a1r = x[p + 2],
      a1i = x[p + 3];
    const a2r = x[p + 4],
      a2i = x[p + 5],
      a3r = x[p + 6],
      a3i = x[p + 7];
    // Right-hand sides are often zero on most of the lattice (coupling columns, probes on a mouth).
    if (a0r === 0 && a0i === 0 && a1r === 0 && a1i === 0 && a2r === 0 && a2i === 0 && a3r === 0 && a3i === 0) continue;
    for (let r = 2 * t + 8; r < end; r += 2) {
      x[xo + r] -=
        f[c0 + r] * a0r -
        f[c0 + r + 1] * a0i +
        f[c1 + r] * a1r -
        f[c1 + r + 1] * a1i +
        f[c2 + r] * a2r -
        f[c2 + r + 1] * a2i +
        f[c3 + r] * a3r -
        f[c3 + r + 1] * a3i;
      x[xo + r + 1] -=
        f[c0 + r] * a0i +
        f[c0 + r + 1] * a0r +
        f[c1 + r] * a1i +
        f[c1 + r + 1] * a1r +
        f[c2 + r] * a2i +
        f[c2 + r + 1] * a2r +
        f[c3 + r] * a3i +
        f[c3 + r + 1] * a3r;
    }
  }
  for (; t < k; t++) {
    const c0 = v + 2 * t * m;
    const ar = x[xo + 2 * t],
      ai = x[xo + 2 * t + 1];
    if (ar === 0 && ai === 0) continue;
    for (let r = 2 * t + 2; r < end; r += 2) {
      x[xo + r] -= f[c0 + r] * ar - f[c0 + r + 1] * ai;
      x[xo + r + 1] -= f[c0 + r] * ai + f[c0 + r + 1] * ar;
    }
  }
}

/** lowerSolveFront on two right-hand sides at once (offsets xo and yo). */
export function lowerSolveFrontPair(f: Float64Array, v: number, m: number, k: number, x: Float64Array, xo: number, yo: number): void {
  const end = 2 * m;
  let t = 0;
  for (; t + 4 <= k; t += 4) {
    const c0 = v + 2 * t * m;
    const c1 = c0 + 2 * m;
    const c2 = c1 + 2 * m;
    const c3 = c2 + 2 * m;
    const p = xo + 2 * t;
    const q = yo + 2 * t;
    lowerTriangle4(f, c0, c1, c2, 2 * t, x, p);
    lowerTriangle4(f, c0, c1, c2, 2 * t, x, q);
    const a0r = x[p],
      a0i = x[p + 1],
      a1r = x[p + 2],
      a1i = x[p + 3];
    const a2r = x[p + 4],
      a2i = x[p + 5],
      a3r = x[p + 6],
      a3i = x[p + 7];
    const b0r = x[q],
      b0i = x[q + 1],
      b1r = x[q + 2],
      b1i = x[q + 3];
    const b2r = x[q + 4],
      b2i = x[q + 5],
      b3r = x[q + 6],
      b3i = x[q + 7];
    for (let r = 2 * t + 8; r < end; r += 2) {
      const l0r = f[c0 + r],
        l0i = f[c0 + r + 1],
        l1r = f[c1 + r],
        l1i = f[c1 + r + 1];
      const l2r = f[c2 + r],
        l2i = f[c2 + r + 1],
        l3r = f[c3 + r],
        l3i = f[c3 + r + 1];
      x[xo + r] -= l0r * a0r - l0i * a0i + l1r * a1r - l1i * a1i + l2r * a2r - l2i * a2i + l3r * a3r - l3i * a3i;
      x[xo + r + 1] -= l0r * a0i + l0i * a0r + l1r * a1i + l1i * a1r + l2r * a2i + l2i * a2r + l3r * a3i + l3i * a3r;
      x[yo + r] -= l0r * b0r - l0i * b0i + l1r * b1r - l1i * b1i + l2r * b2r - l2i * b2i + l3r * b3r - l3i * b3i;
      x[yo + r + 1] -= l0r * b0i + l0i * b0r + l1r * b1i + l1i * b1r + l2r * b2i + l2i * b2r + l3r * b3i + l3i * b3r;
    }
  }
  for (; t < k; t++) {
    const c0 = v + 2 * t * m;
    const ar = x[xo + 2 * t],
      ai = x[xo + 2 * t + 1];
    const br = x[yo + 2 * t],
      bi = x[yo + 2 * t + 1];
    for (let r = 2 * t + 2; r < end; r += 2) {
      const lr = f[c0 + r],
        li = f[c0 + r + 1];
      x[xo + r] -= lr * ar - li * ai;
      x[xo + r + 1] -= lr * ai + li * ar;
      x[yo + r] -= lr * br - li * bi;
      x[yo + r + 1] -= lr * bi + li * br;
    }
  }
}

/**
 * Back substitution: x[0..k) −= U12 · x[k..m), then x[0..k) ← U11⁻¹ x[0..k)
 * (Golub & Van Loan, 4th ed., Alg. 3.1.4, column-oriented). x[k..m) is read only.
 */
export function upperSolveFront(f: Float64Array, v: number, m: number, k: number, x: Float64Array, xo: number): void {
  const kk = 2 * k;
  const rest = m - k;
  const u0 = v + kk * m;
  let j = 0;
  for (; j + 4 <= rest; j += 4) {
    const c0 = u0 + j * kk;
    const c1 = c0 + kk;
    const c2 = c1 + kk;
    const c3 = c2 + kk;
    const p = xo + kk + 2 * j;
    const z0r = x[p],
      z0i = x[p + 1],
      z1r = x[p + 2],
      z1i = x[p + 3];
    const z2r = x[p + 4],
      z2i = x[p + 5],
      z3r = x[p + 6],
      z3i = x[p + 7];
    if (z0r === 0 && z0i === 0 && z1r === 0 && z1i === 0 && z2r === 0 && z2i === 0 && z3r === 0 && z3i === 0) continue;
    for (let r = 0; r < kk; r += 2) {
      x[xo + r] -=
        f[c0 + r] * z0r -
        f[c0 + r + 1] * z0i +
        f[c1 + r] * z1r -
        f[c1 + r + 1] * z1i +
        f[c2 + r] * z2r -
        f[c2 + r + 1] * z2i +
        f[c3 + r] * z3r -
        f[c3 + r + 1] * z3i;
      x[xo + r + 1] -=
        f[c0 + r] * z0i +
        f[c0 + r + 1] * z0r +
        f[c1 + r] * z1i +
        f[c1 + r + 1] * z1r +
        f[c2 + r] * z2i +
        f[c2 + r + 1] * z2r +
        f[c3 + r] * z3i +
        f[c3 + r + 1] * z3r;
    }
  }
  for (; j < rest; j++) {
    const c0 = u0 + j * kk;
    const p = xo + kk + 2 * j;
    const zr = x[p],
      zi = x[p + 1];
    if (zr === 0 && zi === 0) continue;
    for (let r = 0; r < kk; r += 2) {
      x[xo + r] -= f[c0 + r] * zr - f[c0 + r + 1] * zi;
      x[xo + r + 1] -= f[c0 + r] * zi + f[c0 + r + 1] * zr;
    }
  }
  const m2 = 2 * m;
  let t = k;
  for (; t >= 4; t -= 4) {
    // Columns q0..q0+3 of U11: first the 4×4 triangle, then one sweep over the rows above.
    const d = 2 * (t - 4);
    const c0 = v + (t - 4) * m2;
    const c1 = c0 + m2;
    const c2 = c1 + m2;
    const c3 = c2 + m2;
    const p = xo + d;
    upperTriangle4(f, c0, c1, c2, c3, d, x, p);
    const x0r = x[p],
      x0i = x[p + 1],
      x1r = x[p + 2],
      x1i = x[p + 3];
    const x2r = x[p + 4],
      x2i = x[p + 5],
      x3r = x[p + 6],
      x3i = x[p + 7];
    if (x0r === 0 && x0i === 0 && x1r === 0 && x1i === 0 && x2r === 0 && x2i === 0 && x3r === 0 && x3i === 0) continue;
    for (let r = 0; r < d; r += 2) {
      x[xo + r] -=
        f[c0 + r] * x0r -
        f[c0 + r + 1] * x0i +
        f[c1 + r] * x1r -
        f[c1 + r + 1] * x1i +
        f[c2 + r] * x2r -
        f[c2 + r + 1] * x2i +
        f[c3 + r] * x3r -
        f[c3 + r + 1] * x3i;
      x[xo + r + 1] -=
        f[c0 + r] * x0i +
        f[c0 + r + 1] * x0r +
        f[c1 + r] * x1i +
        f[c1 + r + 1] * x1r +
        f[c2 + r] * x2i +
        f[c2 + r + 1] * x2r +
        f[c3 + r] * x3i +
        f[c3 + r + 1] * x3r;
    }
  }
  for (; t > 0; t--) {
    const q = t - 1;
    const c = v + q * m2;
    divideBy(f, c + 2 * q, x, xo + 2 * q);
    const ar = x[xo + 2 * q],
      ai = x[xo + 2 * q + 1];
    if (ar === 0 && ai === 0) continue;
    for (let r = 0; r < 2 * q; r += 2) {
      x[xo + r] -= f[c + r] * ar - f[c + r + 1] * ai;
      x[xo + r + 1] -= f[c + r] * ai + f[c + r + 1] * ar;
    }
  }
}

/** upperSolveFront on two right-hand sides at once (offsets xo and yo). */
export function upperSolveFrontPair(f: Float64Array, v: number, m: number, k: number, x: Float64Array, xo: number, yo: number): void {
  const kk = 2 * k;
  const rest = m - k;
  const u0 = v + kk * m;
  let j = 0;
  for (; j + 4 <= rest; j += 4) {
    const c0 = u0 + j * kk;
    const c1 = c0 + kk;
    const c2 = c1 + kk;
    const c3 = c2 + kk;
    const p = xo + kk + 2 * j;
    const q = yo + kk + 2 * j;
    const a0r = x[p],
      a0i = x[p + 1],
      a1r = x[p + 2],
      a1i = x[p + 3];
    const a2r = x[p + 4],
      a2i = x[p + 5],
      a3r = x[p + 6],
      a3i = x[p + 7];
    const b0r = x[q],
      b0i = x[q + 1],
      b1r = x[q + 2],
      b1i = x[q + 3];
    const b2r = x[q + 4],
      b2i = x[q + 5],
      b3r = x[q + 6],
      b3i = x[q + 7];
    for (let r = 0; r < kk; r += 2) {
      const l0r = f[c0 + r],
        l0i = f[c0 + r + 1],
        l1r = f[c1 + r],
        l1i = f[c1 + r + 1];
      const l2r = f[c2 + r],
        l2i = f[c2 + r + 1],
        l3r = f[c3 + r],
        l3i = f[c3 + r + 1];
      x[xo + r] -= l0r * a0r - l0i * a0i + l1r * a1r - l1i * a1i + l2r * a2r - l2i * a2i + l3r * a3r - l3i * a3i;
      x[xo + r + 1] -= l0r * a0i + l0i * a0r + l1r * a1i + l1i * a1r + l2r * a2i + l2i * a2r + l3r * a3i + l3i * a3r;
      x[yo + r] -= l0r * b0r - l0i * b0i + l1r * b1r - l1i * b1i + l2r * b2r - l2i * b2i + l3r * b3r - l3i * b3i;
      x[yo + r + 1] -= l0r * b0i + l0i * b0r + l1r * b1i + l1i * b1r + l2r * b2i + l2i * b2r + l3r * b3i + l3i * b3r;
    }
  }
  for (; j < rest; j++) {
    const c0 = u0 + j * kk;
    const ar = x[xo + kk + 2 * j],
      ai = x[xo + kk + 2 * j + 1];
    const br = x[yo + kk + 2 * j],
      bi = x[yo + kk + 2 * j + 1];
    for (let r = 0; r < kk; r += 2) {
      const lr = f[c0 + r],
        li = f[c0 + r + 1];
      x[xo + r] -= lr * ar - li * ai;
      x[xo + r + 1] -= lr * ai + li * ar;
      x[yo + r] -= lr * br - li * bi;
      x[yo + r + 1] -= lr * bi + li * br;
    }
  }
  const m2 = 2 * m;
  let t = k;
  for (; t >= 4; t -= 4) {
    const d = 2 * (t - 4);
    const c0 = v + (t - 4) * m2;
    const c1 = c0 + m2;
    const c2 = c1 + m2;
    const c3 = c2 + m2;
    const p = xo + d;
    const q = yo + d;
    upperTriangle4(f, c0, c1, c2, c3, d, x, p);
    upperTriangle4(f, c0, c1, c2, c3, d, x, q);
    const a0r = x[p],
      a0i = x[p + 1],
      a1r = x[p + 2],
      a1i = x[p + 3];
    const a2r = x[p + 4],
      a2i = x[p + 5],
      a3r = x[p + 6],
      a3i = x[p + 7];
    const b0r = x[q],
      b0i = x[q + 1],
      b1r = x[q + 2],
      b1i = x[q + 3];
    const b2r = x[q + 4],
      b2i = x[q + 5],
      b3r = x[q + 6],
      b3i = x[q + 7];
    for (let r = 0; r < d; r += 2) {
      const l0r = f[c0 + r],
        l0i = f[c0 + r + 1],
        l1r = f[c1 + r],
        l1i = f[c1 + r + 1];
      const l2r = f[c2 + r],
        l2i = f[c2 + r + 1],
        l3r = f[c3 + r],
        l3i = f[c3 + r + 1];
      x[xo + r] -= l0r * a0r - l0i * a0i + l1r * a1r - l1i * a1i + l2r * a2r - l2i * a2i + l3r * a3r - l3i * a3i;
      x[xo + r + 1] -= l0r * a0i + l0i * a0r + l1r * a1i + l1i * a1r + l2r * a2i + l2i * a2r + l3r * a3i + l3i * a3r;
      x[yo + r] -= l0r * b0r - l0i * b0i + l1r * b1r - l1i * b1i + l2r * b2r - l2i * b2i + l3r * b3r - l3i * b3i;
      x[yo + r + 1] -= l0r * b0i + l0i * b0r + l1r * b1i + l1i * b1r + l2r * b2i + l2i * b2r + l3r * b3i + l3i * b3r;
    }
  }
  for (; t > 0; t--) {
    const q = t - 1;
    const c = v + q * m2;
    divideBy(f, c + 2 * q, x, xo + 2 * q);
    divideBy(f, c + 2 * q, x, yo + 2 * q);
    const ar = x[xo + 2 * q],
      ai = x[xo + 2 * q + 1];
    const br = x[yo + 2 * q],
      bi = x[yo + 2 * q + 1];
    for (let r = 0; r < 2 * q; r += 2) {
      const lr = f[c + r],
        li = f[c + r + 1];
      x[xo + r] -= lr * ar - li * ai;
      x[xo + r + 1] -= lr * ai + li * ar;
      x[yo + r] -= lr * br - li * bi;
      x[yo + r + 1] -= lr * bi + li * br;
    }
  }
}

/**
 * First half of the transpose solve: x[0..k) ← U11⁻ᵀ x[0..k), then
 * x[k..m) −= U12ᵀ · x[0..k) (plain transpose, no conjugate; dot-product form,
 * Golub & Van Loan, 4th ed., Alg. 3.1.1 on Uᵀ).
 */
export function upperTransposeSolveFront(f: Float64Array, v: number, m: number, k: number, x: Float64Array, xo: number): void {
  const m2 = 2 * m;
  let t = 0;
  for (; t + 4 <= k; t += 4) {
    const c0 = v + t * m2;
    const c1 = c0 + m2;
    const c2 = c1 + m2;
    const c3 = c2 + m2;
    const d = 2 * t;
    // s_p = Σ_{i<t} U[i, t+p] x_i for the four columns at once.
    let s0r = 0,
      s0i = 0,
      s1r = 0,
      s1i = 0,
      s2r = 0,
      s2i = 0,
      s3r = 0,
      s3i = 0;
    for (let r = 0; r < d; r += 2) {
      const ar = x[xo + r],
        ai = x[xo + r + 1];
      s0r += f[c0 + r] * ar - f[c0 + r + 1] * ai;
      s0i += f[c0 + r] * ai + f[c0 + r + 1] * ar;
      s1r += f[c1 + r] * ar - f[c1 + r + 1] * ai;
      s1i += f[c1 + r] * ai + f[c1 + r + 1] * ar;
      s2r += f[c2 + r] * ar - f[c2 + r + 1] * ai;
      s2i += f[c2 + r] * ai + f[c2 + r + 1] * ar;
      s3r += f[c3 + r] * ar - f[c3 + r + 1] * ai;
      s3i += f[c3 + r] * ai + f[c3 + r + 1] * ar;
    }
    const p = xo + d;
    let br = x[p] - s0r,
      bi = x[p + 1] - s0i;
    let dr = f[c0 + d],
      di = f[c0 + d + 1];
    let den = dr * dr + di * di;
    const x0r = (br * dr + bi * di) / den,
      x0i = (bi * dr - br * di) / den;
    br = x[p + 2] - s1r - (f[c1 + d] * x0r - f[c1 + d + 1] * x0i);
    bi = x[p + 3] - s1i - (f[c1 + d] * x0i + f[c1 + d + 1] * x0r);
    dr = f[c1 + d + 2];
    di = f[c1 + d + 3];
    den = dr * dr + di * di;
    const x1r = (br * dr + bi * di) / den,
      x1i = (bi * dr - br * di) / den;
    br = x[p + 4] - s2r - (f[c2 + d] * x0r - f[c2 + d + 1] * x0i) - (f[c2 + d + 2] * x1r - f[c2 + d + 3] * x1i);
    bi = x[p + 5] - s2i - (f[c2 + d] * x0i + f[c2 + d + 1] * x0r) - (f[c2 + d + 2] * x1i + f[c2 + d + 3] * x1r);
    dr = f[c2 + d + 4];
    di = f[c2 + d + 5];
    den = dr * dr + di * di;
    const x2r = (br * dr + bi * di) / den,
      x2i = (bi * dr - br * di) / den;
    br = x[p + 6] - s3r - (f[c3 + d] * x0r - f[c3 + d + 1] * x0i) - (f[c3 + d + 2] * x1r - f[c3 + d + 3] * x1i) - (f[c3 + d + 4] * x2r - f[c3 + d + 5] * x2i);
    bi = x[p + 7] - s3i - (f[c3 + d] * x0i + f[c3 + d + 1] * x0r) - (f[c3 + d + 2] * x1i + f[c3 + d + 3] * x1r) - (f[c3 + d + 4] * x2i + f[c3 + d + 5] * x2r);
    dr = f[c3 + d + 6];
    di = f[c3 + d + 7];
    den = dr * dr + di * di;
    x[p] = x0r;
    x[p + 1] = x0i;
    x[p + 2] = x1r;
    x[p + 3] = x1i;
    x[p + 4] = x2r;
    x[p + 5] = x2i;
    x[p + 6] = (br * dr + bi * di) / den;
    x[p + 7] = (bi * dr - br * di) / den;
  }
  for (; t < k; t++) {
    const c = v + t * m2;
    let sr = 0,
      si = 0;
    for (let r = 0; r < 2 * t; r += 2) {
      const ar = x[xo + r],
        ai = x[xo + r + 1];
      sr += f[c + r] * ar - f[c + r + 1] * ai;
      si += f[c + r] * ai + f[c + r + 1] * ar;
    }
    const br = x[xo + 2 * t] - sr,
      bi = x[xo + 2 * t + 1] - si;
    const dr = f[c + 2 * t],
      di = f[c + 2 * t + 1];
    const den = dr * dr + di * di;
    x[xo + 2 * t] = (br * dr + bi * di) / den;
    x[xo + 2 * t + 1] = (bi * dr - br * di) / den;
  }
  const kk = 2 * k;
  const rest = m - k;
  const u0 = v + kk * m;
  let j = 0;
  for (; j + 4 <= rest; j += 4) {
    const c0 = u0 + j * kk;
    const c1 = c0 + kk;
    const c2 = c1 + kk;
    const c3 = c2 + kk;
    let s0r = 0,
      s0i = 0,
      s1r = 0,
      s1i = 0,
      s2r = 0,
      s2i = 0,
      s3r = 0,
      s3i = 0;
    for (let r = 0; r < kk; r += 2) {
      const ar = x[xo + r],
        ai = x[xo + r + 1];
      s0r += f[c0 + r] * ar - f[c0 + r + 1] * ai;
      s0i += f[c0 + r] * ai + f[c0 + r + 1] * ar;
      s1r += f[c1 + r] * ar - f[c1 + r + 1] * ai;
      s1i += f[c1 + r] * ai + f[c1 + r + 1] * ar;
      s2r += f[c2 + r] * ar - f[c2 + r + 1] * ai;
      s2i += f[c2 + r] * ai + f[c2 + r + 1] * ar;
      s3r += f[c3 + r] * ar - f[c3 + r + 1] * ai;
      s3i += f[c3 + r] * ai + f[c3 + r + 1] * ar;
    }
    const p = xo + kk + 2 * j;
    x[p] -= s0r;
    x[p + 1] -= s0i;
    x[p + 2] -= s1r;
    x[p + 3] -= s1i;
    x[p + 4] -= s2r;
    x[p + 5] -= s2i;
    x[p + 6] -= s3r;
    x[p + 7] -= s3i;
  }
  for (; j < rest; j++) {
    const c = u0 + j * kk;
    let sr = 0,
      si = 0;
    for (let r = 0; r < kk; r += 2) {
      const ar = x[xo + r],
        ai = x[xo + r + 1];
      sr += f[c + r] * ar - f[c + r + 1] * ai;
      si += f[c + r] * ai + f[c + r + 1] * ar;
    }
    const p = xo + kk + 2 * j;
    x[p] -= sr;
    x[p + 1] -= si;
  }
}

/**
 * Second half of the transpose solve: x[0..k) ← L11⁻ᵀ (x[0..k) − L21ᵀ x[k..m))
 * (plain transpose, unit diagonal, dot-product form). x[k..m) is read only.
 */
export function lowerTransposeSolveFront(f: Float64Array, v: number, m: number, k: number, x: Float64Array, xo: number): void {
  const m2 = 2 * m;
  let t = k;
  for (; t >= 4; t -= 4) {
    const q0 = t - 4;
    const c0 = v + q0 * m2;
    const c1 = c0 + m2;
    const c2 = c1 + m2;
    const c3 = c2 + m2;
    const d = 2 * q0;
    // s_p = Σ_{i ≥ q0+4} L[i, q0+p] x_i, the part below the 4×4 triangle.
    let s0r = 0,
      s0i = 0,
      s1r = 0,
      s1i = 0,
      s2r = 0,
      s2i = 0,
      s3r = 0,
      s3i = 0;
    for (let r = d + 8; r < m2; r += 2) {
      const ar = x[xo + r],
        ai = x[xo + r + 1];
      s0r += f[c0 + r] * ar - f[c0 + r + 1] * ai;
      s0i += f[c0 + r] * ai + f[c0 + r + 1] * ar;
      s1r += f[c1 + r] * ar - f[c1 + r + 1] * ai;
      s1i += f[c1 + r] * ai + f[c1 + r + 1] * ar;
      s2r += f[c2 + r] * ar - f[c2 + r + 1] * ai;
      s2i += f[c2 + r] * ai + f[c2 + r + 1] * ar;
      s3r += f[c3 + r] * ar - f[c3 + r + 1] * ai;
      s3i += f[c3 + r] * ai + f[c3 + r + 1] * ar;
    }
    const p = xo + d;
    const x3r = x[p + 6] - s3r,
      x3i = x[p + 7] - s3i;
    const x2r = x[p + 4] - s2r - (f[c2 + d + 6] * x3r - f[c2 + d + 7] * x3i);
    const x2i = x[p + 5] - s2i - (f[c2 + d + 6] * x3i + f[c2 + d + 7] * x3r);
    const x1r = x[p + 2] - s1r - (f[c1 + d + 6] * x3r - f[c1 + d + 7] * x3i) - (f[c1 + d + 4] * x2r - f[c1 + d + 5] * x2i);
    const x1i = x[p + 3] - s1i - (f[c1 + d + 6] * x3i + f[c1 + d + 7] * x3r) - (f[c1 + d + 4] * x2i + f[c1 + d + 5] * x2r);
    x[p] -= s0r + (f[c0 + d + 6] * x3r - f[c0 + d + 7] * x3i) + (f[c0 + d + 4] * x2r - f[c0 + d + 5] * x2i) + (f[c0 + d + 2] * x1r - f[c0 + d + 3] * x1i);
    x[p + 1] -= s0i + (f[c0 + d + 6] * x3i + f[c0 + d + 7] * x3r) + (f[c0 + d + 4] * x2i + f[c0 + d + 5] * x2r) + (f[c0 + d + 2] * x1i + f[c0 + d + 3] * x1r);
    x[p + 2] = x1r;
    x[p + 3] = x1i;
    x[p + 4] = x2r;
    x[p + 5] = x2i;
    x[p + 6] = x3r;
    x[p + 7] = x3i;
  }
  for (; t > 0; t--) {
    const q = t - 1;
    const c = v + q * m2;
    let sr = 0,
      si = 0;
    for (let r = 2 * q + 2; r < m2; r += 2) {
      const ar = x[xo + r],
        ai = x[xo + r + 1];
      sr += f[c + r] * ar - f[c + r + 1] * ai;
      si += f[c + r] * ai + f[c + r + 1] * ar;
    }
    x[xo + 2 * q] -= sr;
    x[xo + 2 * q + 1] -= si;
  }
}
