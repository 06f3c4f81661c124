/**
 * Eigenvalues and eigenvectors of a small dense complex Hermitian matrix: Householder
 * reduction to tridiagonal form, a diagonal phase that makes the tridiagonal real, and the
 * implicit QL iteration with Wilkinson-type shifts on the real symmetric tridiagonal
 * (Golub & Van Loan, "Matrix Computations", 4th ed. (2013), §8.3; the QL sweep as in the
 * EISPACK routine tql2, Wilkinson & Reinsch, "Handbook for Automatic Computation II" (1971)).
 * O(n³) with a small constant: about 5× faster than the cyclic Jacobi it replaced at n = 40
 * (measured, docs DEVELOPERS.md "Measured figures"). Used for the bands
 * E(k) of a numerical lead and for the velocity matrix of degenerate propagating modes
 * (numerical-lead.ts).
 */

/** Eigenvalues ascending; vectors row-major n×n interleaved, column k the eigenvector of values[k]. */
interface HermitianEigen {
  values: Float64Array;
  vectors: Float64Array;
}

/**
 * Eigen-decomposition of the Hermitian n×n matrix a (row-major, interleaved; only
 * its Hermitian part is used). Accurate to rounding relative to ‖a‖; the vectors are
 * orthonormal to rounding, also for repeated eigenvalues. Cost O(n³).
 */
export function hermitianEigen(n: number, a: Float64Array): HermitianEigen {
  // m: the Hermitian part, reduced in place; q: the accumulated reflections.
  const m = new Float64Array(2 * n * n);
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      // Hermitian part, so rounding asymmetry in the input does not matter.
      m[2 * (i * n + j)] = 0.5 * (a[2 * (i * n + j)] + a[2 * (j * n + i)]);
      m[2 * (i * n + j) + 1] = 0.5 * (a[2 * (i * n + j) + 1] - a[2 * (j * n + i) + 1]);
    }
  const q = new Float64Array(2 * n * n);
  for (let i = 0; i < n; i++) q[2 * (i * n + i)] = 1;
  const v = new Float64Array(2 * n);
  const p = new Float64Array(2 * n);
  // Householder: for column k, H = I − τ·v·v† maps m[k+1.., k] to α·e1 with |α| = ‖x‖.
  for (let k = 0; k < n - 2; k++) {
    let norm2 = 0;
    for (let i = k + 1; i < n; i++) norm2 += m[2 * (i * n + k)] ** 2 + m[2 * (i * n + k) + 1] ** 2;
    const x0r = m[2 * ((k + 1) * n + k)];
    const x0i = m[2 * ((k + 1) * n + k) + 1];
    const tail = norm2 - (x0r * x0r + x0i * x0i);
    if (tail === 0) continue; // already tridiagonal in this column
    const xnorm = Math.sqrt(norm2);
    const x0abs = Math.hypot(x0r, x0i);
    // α = −e^{i·arg x0}·‖x‖ (no cancellation in v0 = x0 − α)
    const phr = x0abs === 0 ? 1 : x0r / x0abs;
    const phi = x0abs === 0 ? 0 : x0i / x0abs;
    const ar = -phr * xnorm;
    const ai = -phi * xnorm;
    v.fill(0);
    v[2 * (k + 1)] = x0r - ar;
    v[2 * (k + 1) + 1] = x0i - ai;
    for (let i = k + 2; i < n; i++) {
      v[2 * i] = m[2 * (i * n + k)];
      v[2 * i + 1] = m[2 * (i * n + k) + 1];
    }
    let vv = 0;
    for (let i = k + 1; i < n; i++) vv += v[2 * i] ** 2 + v[2 * i + 1] ** 2;
    const tau = 2 / vv;
    // Two-sided update of the trailing block B = m[k+1.., k+1..]:
    // p = τ·B·v, K = (τ/2)·v†p (real), w = p − K·v, B ← B − v·w† − w·v†.
    let kr = 0;
    for (let i = k + 1; i < n; i++) {
      let sr = 0;
      let si = 0;
      const row = 2 * i * n;
      for (let j = k + 1; j < n; j++) {
        const br = m[row + 2 * j];
        const bi = m[row + 2 * j + 1];
        sr += br * v[2 * j] - bi * v[2 * j + 1];
        si += br * v[2 * j + 1] + bi * v[2 * j];
      }
      p[2 * i] = tau * sr;
      p[2 * i + 1] = tau * si;
      kr += v[2 * i] * p[2 * i] + v[2 * i + 1] * p[2 * i + 1];
    }
    const kk = 0.5 * tau * kr;
    for (let i = k + 1; i < n; i++) {
      p[2 * i] -= kk * v[2 * i];
      p[2 * i + 1] -= kk * v[2 * i + 1];
    }
    for (let i = k + 1; i < n; i++) {
      const row = 2 * i * n;
      const vir = v[2 * i];
      const vii = v[2 * i + 1];
      const wir = p[2 * i];
      const wii = p[2 * i + 1];
      for (let j = k + 1; j < n; j++) {
        // v_i·conj(w_j) + w_i·conj(v_j)
        const wjr = p[2 * j];
        const wji = p[2 * j + 1];
        const vjr = v[2 * j];
        const vji = v[2 * j + 1];
        m[row + 2 * j] -= vir * wjr + vii * wji + (wir * vjr + wii * vji);
        m[row + 2 * j + 1] -= vii * wjr - vir * wji + (wii * vjr - wir * vji);
      }
    }
    // column k below the diagonal becomes α·e1 (and row k its conjugate)
    m[2 * ((k + 1) * n + k)] = ar;
    m[2 * ((k + 1) * n + k) + 1] = ai;
    m[2 * (k * n + k + 1)] = ar;
    m[2 * (k * n + k + 1) + 1] = -ai;
    for (let i = k + 2; i < n; i++) {
      m[2 * (i * n + k)] = m[2 * (i * n + k) + 1] = 0;
      m[2 * (k * n + i)] = m[2 * (k * n + i) + 1] = 0;
    }
    // q ← q·H: q − τ·(q·v)·v†
    for (let r = 0; r < n; r++) {
      const row = 2 * r * n;
      let sr = 0;
      let si = 0;
      for (let j = k + 1; j < n; j++) {
        const qr = q[row + 2 * j];
        const qi = q[row + 2 * j + 1];
        sr += qr * v[2 * j] - qi * v[2 * j + 1];
        si += qr * v[2 * j + 1] + qi * v[2 * j];
      }
      sr *= tau;
      si *= tau;
      for (let j = k + 1; j < n; j++) {
        // (s)·conj(v_j)
        q[row + 2 * j] -= sr * v[2 * j] + si * v[2 * j + 1];
        q[row + 2 * j + 1] -= si * v[2 * j] - sr * v[2 * j + 1];
      }
    }
  }
  // T = q†·m·q is tridiagonal with complex off-diagonal t_k = m[k+1, k]. With the phases
  // δ_0 = 1, δ_{k+1} = δ_k·t_k/|t_k|, diag(δ)†·T·diag(δ) is real with off-diagonal |t_k|.
  const d = new Float64Array(n);
  const e = new Float64Array(n);
  let dr = 1;
  let di = 0;
  const phase = new Float64Array(2 * n);
  phase[0] = 1;
  for (let k = 0; k < n; k++) {
    d[k] = m[2 * (k * n + k)];
    if (k + 1 < n) {
      const tr = m[2 * ((k + 1) * n + k)];
      const ti = m[2 * ((k + 1) * n + k) + 1];
      const t = Math.hypot(tr, ti);
      e[k] = t;
      if (t !== 0) {
        const nr = (dr * tr - di * ti) / t;
        const ni = (dr * ti + di * tr) / t;
        dr = nr;
        di = ni;
      }
      phase[2 * (k + 1)] = dr;
      phase[2 * (k + 1) + 1] = di;
    }
  }
  // z (stored transposed: row j = eigenvector j in the tridiagonal basis) from tql2
  const z = new Float64Array(n * n);
  for (let i = 0; i < n; i++) z[i * n + i] = 1;
  tql2(n, d, e, z);
  const order = Array.from({ length: n }, (_, k) => k).sort((x, y) => d[x] - d[y]);
  const values = new Float64Array(n);
  const vectors = new Float64Array(2 * n * n);
  // eigenvector = q·diag(δ)·z_j
  const qd = new Float64Array(2 * n * n);
  for (let r = 0; r < n; r++)
    for (let j = 0; j < n; j++) {
      const qr = q[2 * (r * n + j)];
      const qi = q[2 * (r * n + j) + 1];
      qd[2 * (r * n + j)] = qr * phase[2 * j] - qi * phase[2 * j + 1];
      qd[2 * (r * n + j) + 1] = qr * phase[2 * j + 1] + qi * phase[2 * j];
    }
  order.forEach((src, col) => {
    values[col] = d[src];
    const zrow = src * n;
    for (let r = 0; r < n; r++) {
      let sr = 0;
      let si = 0;
      const row = 2 * r * n;
      for (let j = 0; j < n; j++) {
        const w = z[zrow + j];
        sr += qd[row + 2 * j] * w;
        si += qd[row + 2 * j + 1] * w;
      }
      vectors[2 * (r * n + col)] = sr;
      vectors[2 * (r * n + col) + 1] = si;
    }
  });
  return { values, vectors };
}

/**
 * Implicit QL on the real symmetric tridiagonal (diagonal d, off-diagonal e[k] = T[k+1, k],
 * e[n−1] = 0): d becomes the eigenvalues (unsorted), row j of z (n×n, rows rotated) its
 * eigenvector. After EISPACK tql2 (Wilkinson & Reinsch 1971), as in the public-domain JAMA.
 */
function tql2(n: number, d: Float64Array, e: Float64Array, z: Float64Array): void {
  const eps = 2 ** -52;
  let f = 0;
  let tst1 = 0;
  for (let l = 0; l < n; l++) {
    tst1 = Math.max(tst1, Math.abs(d[l]) + Math.abs(e[l]));
    let m = l;
    while (m < n - 1 && Math.abs(e[m]) > eps * tst1) m++;
    if (m > l) {
      for (let iter = 0; ; iter++) {
        if (iter > 60 * n) throw new Error('hermitianEigen: the QL iteration did not converge');
        let g = d[l];
        let p = (d[l + 1] - g) / (2 * e[l]);
        let r = Math.hypot(p, 1);
        if (p < 0) r = -r;
        d[l] = e[l] / (p + r);
        d[l + 1] = e[l] * (p + r);
        const dl1 = d[l + 1];
        let h = g - d[l];
        for (let i = l + 2; i < n; i++) d[i] -= h;
        f += h;
        p = d[m];
        let c = 1;
        let c2 = c;
        let c3 = c;
        const el1 = e[l + 1];
        let s = 0;
        let s2 = 0;
        for (let i = m - 1; i >= l; i--) {
          c3 = c2;
          c2 = c;
          s2 = s;
          g = c * e[i];
          h = c * p;
          r = Math.hypot(p, e[i]);
          e[i + 1] = s * r;
          s = e[i] / r;
          c = p / r;
          p = c * d[i] - s * g;
          d[i + 1] = h + s * (c * g + s * d[i]);
          // rotate rows i and i+1 of z (columns of the eigenvector matrix)
          const a0 = i * n;
          const a1 = (i + 1) * n;
          for (let k = 0; k < n; k++) {
            const zi1 = z[a1 + k];
            const zi = z[a0 + k];
            z[a1 + k] = s * zi + c * zi1;
            z[a0 + k] = c * zi - s * zi1;
          }
        }
        p = (-s * s2 * c3 * el1 * e[l]) / dl1;
        e[l] = s * p;
        d[l] = c * p;
        if (!(Math.abs(e[l]) > eps * tst1)) break;
      }
    }
    d[l] += f;
    e[l] = 0;
  }
}
