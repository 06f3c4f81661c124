/**
 * Complex Schur decomposition A = Q·T·Qᴴ of a small dense complex matrix, with the
 * Schur vectors, and reordering of the Schur form so that chosen eigenvalues come
 * first (their invariant subspace is then spanned by the leading columns of Q).
 * Used by the numerical leads (numerical-lead.ts) to find the invariant subspace of
 * the lead's retarded modes without forming eigenvectors.
 *
 * Matrices are row-major, interleaved (re, im): element (i, j) at 2·(i·n + j).
 *
 * Sources: Householder reduction to Hessenberg form and the shifted QR iteration with
 * Wilkinson shifts and Givens rotations, Golub & Van Loan, "Matrix Computations", 4th
 * ed. (2013), §7.4–7.5; reordering by swapping neighbouring diagonal entries with one
 * Givens rotation each, ibid. §7.6.2.
 */

/** The Schur form T (upper triangular) and the unitary Q with A = Q·T·Qᴴ. */
export interface ComplexSchur {
  n: number;
  t: Float64Array;
  q: Float64Array;
}

/**
 * Schur decomposition of the n×n matrix a (not modified). Throws when the QR
 * iteration does not converge in 60 steps per eigenvalue. Cost O(n³) (about 25n³ real flops).
 */
export function complexSchur(n: number, a: Float64Array): ComplexSchur {
  const h = Float64Array.from(a.subarray(0, 2 * n * n));
  const q = new Float64Array(2 * n * n);
  for (let i = 0; i < n; i++) q[2 * (i * n + i)] = 1;
  const idx = (i: number, j: number) => 2 * (i * n + j);
  // Householder reduction to upper Hessenberg form, accumulating Q.
  const v = new Float64Array(2 * n);
  for (let k = 0; k < n - 2; k++) {
    let norm2 = 0;
    for (let i = k + 1; i < n; i++) norm2 += h[idx(i, k)] ** 2 + h[idx(i, k) + 1] ** 2;
    const norm = Math.sqrt(norm2);
    if (norm === 0) continue;
    const x0r = h[idx(k + 1, k)];
    const x0i = h[idx(k + 1, k) + 1];
    const x0a = Math.hypot(x0r, x0i);
    const phr = x0a > 0 ? x0r / x0a : 1;
    const phi = x0a > 0 ? x0i / x0a : 0;
    for (let i = k + 1; i < n; i++) {
      v[2 * i] = h[idx(i, k)];
      v[2 * i + 1] = h[idx(i, k) + 1];
    }
    v[2 * (k + 1)] += phr * norm;
    v[2 * (k + 1) + 1] += phi * norm;
    let vn2 = 0;
    for (let i = k + 1; i < n; i++) vn2 += v[2 * i] ** 2 + v[2 * i + 1] ** 2;
    const vn = Math.sqrt(vn2);
    for (let i = k + 1; i < n; i++) {
      v[2 * i] /= vn;
      v[2 * i + 1] /= vn;
    }
    // H ← (I − 2vvᴴ)H
    for (let j = 0; j < n; j++) {
      let sr = 0;
      let si = 0;
      for (let i = k + 1; i < n; i++) {
        const hr = h[idx(i, j)];
        const hi = h[idx(i, j) + 1];
        sr += v[2 * i] * hr + v[2 * i + 1] * hi;
        si += v[2 * i] * hi - v[2 * i + 1] * hr;
      }
      for (let i = k + 1; i < n; i++) {
        h[idx(i, j)] -= 2 * (v[2 * i] * sr - v[2 * i + 1] * si);
        h[idx(i, j) + 1] -= 2 * (v[2 * i] * si + v[2 * i + 1] * sr);
      }
    }
    // H ← H(I − 2vvᴴ), Q ← Q(I − 2vvᴴ)
    for (const m of [h, q]) {
      for (let i = 0; i < n; i++) {
        let sr = 0;
        let si = 0;
        for (let j = k + 1; j < n; j++) {
          const hr = m[idx(i, j)];
          const hi = m[idx(i, j) + 1];
          sr += hr * v[2 * j] - hi * v[2 * j + 1];
          si += hr * v[2 * j + 1] + hi * v[2 * j];
        }
        for (let j = k + 1; j < n; j++) {
          m[idx(i, j)] -= 2 * (sr * v[2 * j] + si * v[2 * j + 1]);
          m[idx(i, j) + 1] -= 2 * (si * v[2 * j] - sr * v[2 * j + 1]);
        }
      }
    }
    for (let i = k + 2; i < n; i++) {
      h[idx(i, k)] = 0;
      h[idx(i, k) + 1] = 0;
    }
  }
  let scale = 0;
  for (let e = 0; e < 2 * n * n; e++) scale = Math.max(scale, Math.abs(h[e]));
  const tiny = Number.MIN_VALUE / Number.EPSILON + 1e-300 * scale;
  const abs = (i: number, j: number) => Math.hypot(h[idx(i, j)], h[idx(i, j) + 1]);
  const cs = new Float64Array(n);
  const snr = new Float64Array(n);
  const sni = new Float64Array(n);
  let hi = n - 1;
  let iter = 0;
  while (hi > 0) {
    let l = hi;
    while (l > 0) {
      const sub = abs(l, l - 1);
      const diag = abs(l, l) + abs(l - 1, l - 1);
      // Relative test, or normwise (backward stable, and needed for multiple zero
      // eigenvalues such as λ = ∞ of a singular lead hopping, where the relative test stalls).
      if (sub <= Number.EPSILON * diag || sub <= Number.EPSILON * scale || sub <= tiny) break;
      l--;
    }
    if (l > 0) {
      h[idx(l, l - 1)] = 0;
      h[idx(l, l - 1) + 1] = 0;
    }
    if (l === hi) {
      hi--;
      iter = 0;
      continue;
    }
    if (++iter > 60) throw new Error(`complexSchur: QR did not converge (size ${n})`);
    // Wilkinson shift: the eigenvalue of the trailing 2×2 block nearer its last entry.
    const ar = h[idx(hi - 1, hi - 1)],
      ai = h[idx(hi - 1, hi - 1) + 1];
    const br = h[idx(hi - 1, hi)],
      bi = h[idx(hi - 1, hi) + 1];
    const cr = h[idx(hi, hi - 1)],
      ci = h[idx(hi, hi - 1) + 1];
    const dr = h[idx(hi, hi)],
      di = h[idx(hi, hi) + 1];
    const hr = 0.5 * (ar - dr);
    const hI = 0.5 * (ai - di);
    const discR = hr * hr - hI * hI + (br * cr - bi * ci);
    const discI = 2 * hr * hI + (br * ci + bi * cr);
    const mod = Math.hypot(discR, discI);
    const sqR = Math.sqrt(Math.max(0, 0.5 * (mod + discR)));
    const sqI = Math.sqrt(Math.max(0, 0.5 * (mod - discR))) * (discI < 0 ? -1 : 1);
    const m1r = 0.5 * (ar + dr) + sqR,
      m1i = 0.5 * (ai + di) + sqI;
    const m2r = 0.5 * (ar + dr) - sqR,
      m2i = 0.5 * (ai + di) - sqI;
    const first = Math.hypot(m1r - dr, m1i - di) < Math.hypot(m2r - dr, m2i - di);
    let muR = first ? m1r : m2r;
    let muI = first ? m1i : m2i;
    if (iter % 10 === 0) {
      // exceptional shift to break a cycle
      muR += abs(hi, hi - 1);
      muI += 0.5 * abs(hi, hi - 1);
    }
    for (let k = l; k <= hi; k++) {
      h[idx(k, k)] -= muR;
      h[idx(k, k) + 1] -= muI;
    }
    // QR of the shifted active block by Givens rotations: rows k, k+1 of the whole trailing part.
    for (let k = l; k < hi; k++) {
      const xr = h[idx(k, k)],
        xi = h[idx(k, k) + 1];
      const yr = h[idx(k + 1, k)],
        yi = h[idx(k + 1, k) + 1];
      const xa = Math.hypot(xr, xi);
      const nrm = Math.hypot(xa, Math.hypot(yr, yi));
      let c = 1,
        sR = 0,
        sI = 0;
      if (nrm > 0) {
        if (xa === 0) {
          c = 0;
          sR = 1;
        } else {
          c = xa / nrm;
          const ur = xr / xa,
            ui = xi / xa;
          sR = (ur * yr + ui * yi) / nrm;
          sI = (ui * yr - ur * yi) / nrm;
        }
      }
      cs[k] = c;
      snr[k] = sR;
      sni[k] = sI;
      for (let j = k; j < n; j++) {
        const pr = h[idx(k, j)],
          pi = h[idx(k, j) + 1];
        const qr = h[idx(k + 1, j)],
          qi = h[idx(k + 1, j) + 1];
        h[idx(k, j)] = c * pr + (sR * qr - sI * qi);
        h[idx(k, j) + 1] = c * pi + (sR * qi + sI * qr);
        h[idx(k + 1, j)] = -(sR * pr + sI * pi) + c * qr;
        h[idx(k + 1, j) + 1] = -(sR * pi - sI * pr) + c * qi;
      }
    }
    // RQ: the same rotations from the right on rows 0..k+2, and on Q.
    for (let k = l; k < hi; k++) {
      const c = cs[k],
        sR = snr[k],
        sI = sni[k];
      const top = Math.min(k + 2, hi);
      rotateColumns(h, n, k, top + 1, c, sR, sI);
      rotateColumns(q, n, k, n, c, sR, sI);
    }
    for (let k = l; k <= hi; k++) {
      h[idx(k, k)] += muR;
      h[idx(k, k) + 1] += muI;
    }
  }
  for (let i = 1; i < n; i++)
    for (let j = 0; j < i; j++) {
      h[idx(i, j)] = 0;
      h[idx(i, j) + 1] = 0;
    }
  return { n, t: h, q };
}

/** Columns k, k+1 of m (rows 0..rows−1) times the rotation [[c, −s],[s̄, c]] (col k: x·c + y·s̄; col k+1: −x·s + y·c). */
function rotateColumns(m: Float64Array, n: number, k: number, rows: number, c: number, sR: number, sI: number): void {
  for (let i = 0; i < rows; i++) {
    const a = 2 * (i * n + k);
    const xr = m[a],
      xi = m[a + 1];
    const yr = m[a + 2],
      yi = m[a + 3];
    m[a] = xr * c + (yr * sR + yi * sI);
    m[a + 1] = xi * c + (yi * sR - yr * sI);
    m[a + 2] = -(xr * sR - xi * sI) + yr * c;
    m[a + 3] = -(xr * sI + xi * sR) + yi * c;
  }
}

/** Diagonal of a Schur form: the eigenvalues, interleaved. */
export function schurEigenvalues(s: ComplexSchur): Float64Array {
  const out = new Float64Array(2 * s.n);
  for (let i = 0; i < s.n; i++) {
    out[2 * i] = s.t[2 * (i * s.n + i)];
    out[2 * i + 1] = s.t[2 * (i * s.n + i) + 1];
  }
  return out;
}

/**
 * Reorders the Schur form in place so that the diagonal entries with select[i]
 * true come first, keeping A = Q·T·Qᴴ (Golub & Van Loan §7.6.2: a neighbouring pair
 * (a, c) is swapped by the Givens rotation whose first column is the eigenvector
 * (b, c − a) of the 2×2 block [[a, b], [0, c]]). Returns how many were selected.
 * Cost O(n²) per swap, at most O(n³).
 */
export function reorderSchur(s: ComplexSchur, select: readonly boolean[]): number {
  const { n, t, q } = s;
  const flags = select.slice(0, n);
  let free = 0;
  for (let i = 0; i < n; i++) {
    if (!flags[i]) continue;
    for (let k = i; k > free; k--) {
      swapDiagonal(t, q, n, k - 1);
      flags[k] = flags[k - 1];
      flags[k - 1] = true;
    }
    free++;
  }
  return free;
}

/** Swaps the diagonal entries k and k+1 of the upper triangular t by a unitary similarity. */
function swapDiagonal(t: Float64Array, q: Float64Array, n: number, k: number): void {
  const a = 2 * (k * n + k);
  const ar = t[a],
    ai = t[a + 1];
  const br = t[a + 2],
    bi = t[a + 3];
  const d = 2 * ((k + 1) * n + k + 1);
  const cr = t[d],
    ci = t[d + 1];
  // x = (b, c − a): eigenvector of the block for c; G = [[g1, −ḡ2], [g2, ḡ1]], first column x/|x|.
  const x2r = cr - ar,
    x2i = ci - ai;
  const nrm = Math.hypot(Math.hypot(br, bi), Math.hypot(x2r, x2i));
  if (nrm === 0) return; // equal eigenvalues and no coupling: already in either order
  const g1r = br / nrm,
    g1i = bi / nrm,
    g2r = x2r / nrm,
    g2i = x2i / nrm;
  // rows k, k+1 ← Gᴴ·rows: row k: ḡ1·p + ḡ2·r; row k+1: −g2·p + g1·r
  for (let j = k; j < n; j++) {
    const p = 2 * (k * n + j);
    const r = 2 * ((k + 1) * n + j);
    const pr = t[p],
      pi = t[p + 1],
      rr = t[r],
      ri = t[r + 1];
    t[p] = g1r * pr + g1i * pi + (g2r * rr + g2i * ri);
    t[p + 1] = g1r * pi - g1i * pr + (g2r * ri - g2i * rr);
    t[r] = -(g2r * pr - g2i * pi) + (g1r * rr - g1i * ri);
    t[r + 1] = -(g2r * pi + g2i * pr) + (g1r * ri + g1i * rr);
  }
  // columns k, k+1 ← columns·G: col k: x·g1 + y·g2; col k+1: −x·ḡ2 + y·ḡ1
  for (const m of [t, q]) {
    const rows = m === t ? k + 2 : n;
    for (let i = 0; i < rows; i++) {
      const p = 2 * (i * n + k);
      const xr = m[p],
        xi = m[p + 1],
        yr = m[p + 2],
        yi = m[p + 3];
      m[p] = xr * g1r - xi * g1i + (yr * g2r - yi * g2i);
      m[p + 1] = xr * g1i + xi * g1r + (yr * g2i + yi * g2r);
      m[p + 2] = -(xr * g2r + xi * g2i) + (yr * g1r + yi * g1i);
      m[p + 3] = -(xi * g2r - xr * g2i) + (yi * g1r - yr * g1i);
    }
  }
  t[2 * ((k + 1) * n + k)] = 0;
  t[2 * ((k + 1) * n + k) + 1] = 0;
}
