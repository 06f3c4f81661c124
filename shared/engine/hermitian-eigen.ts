/**
 * Eigenvalues and eigenvectors of a small dense complex Hermitian matrix by cyclic
 * Jacobi rotations (Golub & Van Loan, "Matrix Computations", 4th ed. (2013), §8.5;
 * the complex pair (p, q) is first made real by the phase of a_pq, then rotated as in
 * the real symmetric case). Used for the bands E(k) of a numerical lead and for the
 * velocity matrix of degenerate propagating modes (numerical-lead.ts).
 */

/** Eigenvalues ascending; vectors row-major n×n interleaved, column k the eigenvector of values[k]. */
interface HermitianEigen {
  values: Float64Array;
  vectors: Float64Array;
}

/**
 * Eigen-decomposition of the Hermitian n×n matrix a (row-major, interleaved; only
 * its Hermitian part is used). Accurate to rounding relative to ‖a‖. Cost O(n³) per
 * sweep, about 6–10 sweeps.
 */
export function hermitianEigen(n: number, a: Float64Array): HermitianEigen {
  const m = new Float64Array(2 * n * n);
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      // Hermitian part, so rounding asymmetry in the input does not matter.
      m[2 * (i * n + j)] = 0.5 * (a[2 * (i * n + j)] + a[2 * (j * n + i)]);
      m[2 * (i * n + j) + 1] = 0.5 * (a[2 * (i * n + j) + 1] - a[2 * (j * n + i) + 1]);
    }
  const v = new Float64Array(2 * n * n);
  for (let i = 0; i < n; i++) v[2 * (i * n + i)] = 1;
  let norm2 = 0;
  for (let e = 0; e < 2 * n * n; e++) norm2 += m[e] * m[e];
  for (let sweep = 0; sweep < 100; sweep++) {
    let off = 0;
    for (let p = 0; p < n; p++) for (let q = p + 1; q < n; q++) off += m[2 * (p * n + q)] ** 2 + m[2 * (p * n + q) + 1] ** 2;
    if (off <= 1e-32 * norm2 || off === 0) break;
    for (let p = 0; p < n; p++)
      for (let q = p + 1; q < n; q++) {
        const br = m[2 * (p * n + q)];
        const bi = m[2 * (p * n + q) + 1];
        const r = Math.hypot(br, bi);
        if (r === 0 || r <= 1e-18 * Math.sqrt(norm2 / Math.max(1, n))) continue;
        const app = m[2 * (p * n + p)];
        const aqq = m[2 * (q * n + q)];
        const theta = (aqq - app) / (2 * r);
        const tt = (theta >= 0 ? 1 : -1) / (Math.abs(theta) + Math.sqrt(theta * theta + 1));
        const c = 1 / Math.sqrt(tt * tt + 1);
        const s = tt * c;
        // U = diag(1, e^{−iα})·[[c, s], [−s, c]], e^{iα} = b/r: zeroes m[p,q] in Uᴴ m U.
        const er = br / r;
        const ei = -bi / r; // e^{−iα}
        // U = [[c, s], [−s·e, c·e]]
        const u11r = c,
          u12r = s;
        const u21r = -s * er,
          u21i = -s * ei;
        const u22r = c * er,
          u22i = c * ei;
        // columns p, q of m and v ← ·U
        for (const x of [m, v]) {
          for (let i = 0; i < n; i++) {
            const ip = 2 * (i * n + p);
            const iq = 2 * (i * n + q);
            const xr = x[ip],
              xi = x[ip + 1],
              yr = x[iq],
              yi = x[iq + 1];
            x[ip] = xr * u11r + (yr * u21r - yi * u21i);
            x[ip + 1] = xi * u11r + (yr * u21i + yi * u21r);
            x[iq] = xr * u12r + (yr * u22r - yi * u22i);
            x[iq + 1] = xi * u12r + (yr * u22i + yi * u22r);
          }
        }
        // rows p, q of m ← Uᴴ·
        for (let j = 0; j < n; j++) {
          const pj = 2 * (p * n + j);
          const qj = 2 * (q * n + j);
          const xr = m[pj],
            xi = m[pj + 1],
            yr = m[qj],
            yi = m[qj + 1];
          // row p: ū11·x + ū21·y ; row q: ū12·x + ū22·y
          m[pj] = u11r * xr + (u21r * yr + u21i * yi);
          m[pj + 1] = u11r * xi + (u21r * yi - u21i * yr);
          m[qj] = u12r * xr + (u22r * yr + u22i * yi);
          m[qj + 1] = u12r * xi + (u22r * yi - u22i * yr);
        }
        m[2 * (p * n + q)] = 0;
        m[2 * (p * n + q) + 1] = 0;
        m[2 * (q * n + p)] = 0;
        m[2 * (q * n + p) + 1] = 0;
        m[2 * (p * n + p) + 1] = 0;
        m[2 * (q * n + q) + 1] = 0;
      }
  }
  const order = Array.from({ length: n }, (_, k) => k).sort((x, y) => m[2 * (x * n + x)] - m[2 * (y * n + y)]);
  const values = new Float64Array(n);
  const vectors = new Float64Array(2 * n * n);
  order.forEach((k, col) => {
    values[col] = m[2 * (k * n + k)];
    for (let i = 0; i < n; i++) {
      vectors[2 * (i * n + col)] = v[2 * (i * n + k)];
      vectors[2 * (i * n + col) + 1] = v[2 * (i * n + k) + 1];
    }
  });
  return { values, vectors };
}
