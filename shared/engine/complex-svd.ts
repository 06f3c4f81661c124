/** Singular value decomposition of a small dense complex matrix (contour eigenvalues, block AAA). */
/**
 * SVD A = U Σ Vᴴ of a square complex m×m matrix (row-major, interleaved) by
 * one-sided Jacobi rotations (Hestenes 1958; Demmel & Veselić, SIAM J. Matrix
 * Anal. Appl. 13 (1992) 1204–1245). Singular values descending. Cost O(m³) per sweep.
 */
export function complexSvd(m: number, A: Float64Array): { U: Float64Array; sigma: Float64Array; V: Float64Array } {
  // Work column-major: column j of W is W[2*(j*m + i)].
  const W = new Float64Array(2 * m * m);
  const V = new Float64Array(2 * m * m);
  for (let i = 0; i < m; i++) {
    for (let j = 0; j < m; j++) {
      W[2 * (j * m + i)] = A[2 * (i * m + j)];
      W[2 * (j * m + i) + 1] = A[2 * (i * m + j) + 1];
    }
    V[2 * (i * m + i)] = 1;
  }
  for (let sweep = 0; sweep < 60; sweep++) {
    let rotated = false;
    for (let p = 0; p < m - 1; p++) {
      for (let q = p + 1; q < m; q++) {
        let alpha = 0;
        let beta = 0;
        let gr = 0;
        let gi = 0;
        for (let i = 0; i < m; i++) {
          const pr = W[2 * (p * m + i)];
          const pi = W[2 * (p * m + i) + 1];
          const qr = W[2 * (q * m + i)];
          const qi = W[2 * (q * m + i) + 1];
          alpha += pr * pr + pi * pi;
          beta += qr * qr + qi * qi;
          gr += pr * qr + pi * qi; // conj(a_p)·a_q
          gi += pr * qi - pi * qr;
        }
        const g = Math.hypot(gr, gi);
        if (!(g > 1e-15 * Math.sqrt(alpha * beta)) || g === 0) continue;
        rotated = true;
        const zeta = (beta - alpha) / (2 * g);
        const t = (zeta >= 0 ? 1 : -1) / (Math.abs(zeta) + Math.sqrt(1 + zeta * zeta));
        const c = 1 / Math.sqrt(1 + t * t);
        const s = c * t;
        // a_q~ = a_q·e^{−iφ}, e^{iφ} = γ/|γ|
        const er = gr / g;
        const ei = -gi / g;
        rotate(W, m, p, q, c, s, er, ei);
        rotate(V, m, p, q, c, s, er, ei);
      }
    }
    if (!rotated) break;
  }
  const sigma = new Float64Array(m);
  for (let j = 0; j < m; j++) {
    let s = 0;
    for (let i = 0; i < m; i++) s += W[2 * (j * m + i)] ** 2 + W[2 * (j * m + i) + 1] ** 2;
    sigma[j] = Math.sqrt(s);
  }
  const order = Array.from({ length: m }, (_, k) => k).sort((a, b) => sigma[b] - sigma[a]);
  const U = new Float64Array(2 * m * m);
  const Vo = new Float64Array(2 * m * m);
  const so = new Float64Array(m);
  order.forEach((j, c) => {
    so[c] = sigma[j];
    const inv = sigma[j] > 0 ? 1 / sigma[j] : 0;
    for (let i = 0; i < m; i++) {
      U[2 * (i * m + c)] = W[2 * (j * m + i)] * inv;
      U[2 * (i * m + c) + 1] = W[2 * (j * m + i) + 1] * inv;
      // V is stored column-major like W: row i of column j is V[2*(j*m+i)]
      Vo[2 * (i * m + c)] = V[2 * (j * m + i)];
      Vo[2 * (i * m + c) + 1] = V[2 * (j * m + i) + 1];
    }
  });
  return { U, sigma: so, V: Vo };
}

/** [a_p, a_q] ← [c·a_p − s·a_q e^{−iφ}, s·a_p + c·a_q e^{−iφ}] on column-major columns. */
function rotate(X: Float64Array, m: number, p: number, q: number, c: number, s: number, er: number, ei: number): void {
  for (let i = 0; i < m; i++) {
    const pr = X[2 * (p * m + i)];
    const pi = X[2 * (p * m + i) + 1];
    const qr0 = X[2 * (q * m + i)];
    const qi0 = X[2 * (q * m + i) + 1];
    const qr = qr0 * er - qi0 * ei;
    const qi = qr0 * ei + qi0 * er;
    X[2 * (p * m + i)] = c * pr - s * qr;
    X[2 * (p * m + i) + 1] = c * pi - s * qi;
    X[2 * (q * m + i)] = s * pr + c * qr;
    X[2 * (q * m + i) + 1] = s * pi + c * qi;
  }
}
