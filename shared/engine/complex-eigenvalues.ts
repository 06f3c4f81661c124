/** Eigenvalues of a small dense complex matrix (the reduced matrix of the contour eigenvalue method). */
/**
 * Eigenvalues of a complex r×r matrix (row-major, interleaved): Householder
 * reduction to Hessenberg form, then single-shift QR with Wilkinson shifts and
 * Givens rotations (Golub & Van Loan, "Matrix Computations", 4th ed., §7.4–7.5).
 * Returns interleaved eigenvalues. Cost O(r³).
 */
export function complexEigenvalues(r: number, A: Float64Array): Float64Array {
  const H = Float64Array.from(A);
  const re = (i: number, j: number) => 2 * (i * r + j);
  // Householder to Hessenberg
  const v = new Float64Array(2 * r);
  for (let k = 0; k < r - 2; k++) {
    let norm2 = 0;
    for (let i = k + 1; i < r; i++) norm2 += H[re(i, k)] ** 2 + H[re(i, k) + 1] ** 2;
    const norm = Math.sqrt(norm2);
    if (norm === 0) continue;
    const x0r = H[re(k + 1, k)];
    const x0i = H[re(k + 1, k) + 1];
    const x0a = Math.hypot(x0r, x0i);
    const phr = x0a > 0 ? x0r / x0a : 1;
    const phi = x0a > 0 ? x0i / x0a : 0;
    // v = x + e^{iθ}‖x‖ e_1
    let vn2 = 0;
    for (let i = k + 1; i < r; i++) {
      v[2 * i] = H[re(i, k)];
      v[2 * i + 1] = H[re(i, k) + 1];
    }
    v[2 * (k + 1)] += phr * norm;
    v[2 * (k + 1) + 1] += phi * norm;
    for (let i = k + 1; i < r; i++) vn2 += v[2 * i] ** 2 + v[2 * i + 1] ** 2;
    const vn = Math.sqrt(vn2);
    for (let i = k + 1; i < r; i++) {
      v[2 * i] /= vn;
      v[2 * i + 1] /= vn;
    }
    // H ← (I − 2vvᴴ) H
    for (let j = 0; j < r; j++) {
      let sr = 0;
      let si = 0;
      for (let i = k + 1; i < r; i++) {
        const hr = H[re(i, j)];
        const hi = H[re(i, j) + 1];
        sr += v[2 * i] * hr + v[2 * i + 1] * hi;
        si += v[2 * i] * hi - v[2 * i + 1] * hr;
      }
      for (let i = k + 1; i < r; i++) {
        H[re(i, j)] -= 2 * (v[2 * i] * sr - v[2 * i + 1] * si);
        H[re(i, j) + 1] -= 2 * (v[2 * i] * si + v[2 * i + 1] * sr);
      }
    }
    // H ← H (I − 2vvᴴ)
    for (let i = 0; i < r; i++) {
      let sr = 0;
      let si = 0;
      for (let j = k + 1; j < r; j++) {
        const hr = H[re(i, j)];
        const hi = H[re(i, j) + 1];
        sr += hr * v[2 * j] - hi * v[2 * j + 1];
        si += hr * v[2 * j + 1] + hi * v[2 * j];
      }
      for (let j = k + 1; j < r; j++) {
        // subtract 2·s·conj(v_j)
        H[re(i, j)] -= 2 * (sr * v[2 * j] + si * v[2 * j + 1]);
        H[re(i, j) + 1] -= 2 * (si * v[2 * j] - sr * v[2 * j + 1]);
      }
    }
    for (let i = k + 2; i < r; i++) {
      H[re(i, k)] = 0;
      H[re(i, k) + 1] = 0;
    }
  }
  const out = new Float64Array(2 * r);
  const cs = new Float64Array(r);
  const snr = new Float64Array(r);
  const sni = new Float64Array(r);
  let hi = r - 1;
  let iter = 0;
  const abs = (i: number, j: number) => Math.hypot(H[re(i, j)], H[re(i, j) + 1]);
  while (hi >= 0) {
    if (hi === 0) {
      out[0] = H[0];
      out[1] = H[1];
      break;
    }
    let l = hi;
    while (l > 0 && abs(l, l - 1) > 1e-15 * (abs(l, l) + abs(l - 1, l - 1))) l--;
    if (l > 0) {
      H[re(l, l - 1)] = 0;
      H[re(l, l - 1) + 1] = 0;
    }
    if (l === hi) {
      out[2 * hi] = H[re(hi, hi)];
      out[2 * hi + 1] = H[re(hi, hi) + 1];
      hi--;
      iter = 0;
      continue;
    }
    if (++iter > 300) throw new Error(`complexEigenvalues: QR did not converge (size ${r})`);
    // Wilkinson shift from the trailing 2×2 block
    const ar = H[re(hi - 1, hi - 1)],
      ai = H[re(hi - 1, hi - 1) + 1];
    const br = H[re(hi - 1, hi)],
      bi = H[re(hi - 1, hi) + 1];
    const cr = H[re(hi, hi - 1)],
      ci = H[re(hi, hi - 1) + 1];
    const dr = H[re(hi, hi)],
      di = H[re(hi, hi) + 1];
    const hr = 0.5 * (ar - dr);
    const hI = 0.5 * (ai - di);
    // disc = h² + bc
    const discR = hr * hr - hI * hI + (br * cr - bi * ci);
    const discI = 2 * hr * hI + (br * ci + bi * cr);
    const mod = Math.hypot(discR, discI);
    const sqR = Math.sqrt(Math.max(0, 0.5 * (mod + discR)));
    const sqI = Math.sqrt(Math.max(0, 0.5 * (mod - discR))) * (discI < 0 ? -1 : 1);
    // pick the eigenvalue d − (bc)/(h ± sqrt) closest to d: μ = (a+d)/2 ± sqrt, nearer d
    const m1r = 0.5 * (ar + dr) + sqR,
      m1i = 0.5 * (ai + di) + sqI;
    const m2r = 0.5 * (ar + dr) - sqR,
      m2i = 0.5 * (ai + di) - sqI;
    let muR = Math.hypot(m1r - dr, m1i - di) < Math.hypot(m2r - dr, m2i - di) ? m1r : m2r;
    let muI = Math.hypot(m1r - dr, m1i - di) < Math.hypot(m2r - dr, m2i - di) ? m1i : m2i;
    if (iter % 10 === 0) {
      // exceptional shift to break cycles
      muR += abs(hi, hi - 1);
      muI += 0.5 * abs(hi, hi - 1);
    }
    for (let k = l; k <= hi; k++) {
      H[re(k, k)] -= muR;
      H[re(k, k) + 1] -= muI;
    }
    for (let k = l; k < hi; k++) {
      const xr = H[re(k, k)],
        xi = H[re(k, k) + 1];
      const yr = H[re(k + 1, k)],
        yi = H[re(k + 1, k) + 1];
      const xa = Math.hypot(xr, xi);
      const nrm = Math.hypot(xa, Math.hypot(yr, yi));
      let c = 0,
        sR = 1,
        sI = 0;
      if (nrm > 0) {
        if (xa === 0) {
          c = 0;
          sR = 1;
          sI = 0;
        } else {
          c = xa / nrm;
          // s = (x/|x|)·conj(y)/nrm
          const ur = xr / xa,
            ui = xi / xa;
          sR = (ur * yr + ui * yi) / nrm;
          sI = (ui * yr - ur * yi) / nrm;
        }
      }
      cs[k] = c;
      snr[k] = sR;
      sni[k] = sI;
      for (let j = k; j <= hi; j++) {
        const pr = H[re(k, j)],
          pi = H[re(k, j) + 1];
        const qr = H[re(k + 1, j)],
          qi = H[re(k + 1, j) + 1];
        // row k: c·p + s·q ; row k+1: −conj(s)·p + c·q
        H[re(k, j)] = c * pr + (sR * qr - sI * qi);
        H[re(k, j) + 1] = c * pi + (sR * qi + sI * qr);
        H[re(k + 1, j)] = -(sR * pr + sI * pi) + c * qr;
        H[re(k + 1, j) + 1] = -(sR * pi - sI * pr) + c * qi;
      }
    }
    for (let k = l; k < hi; k++) {
      const c = cs[k],
        sR = snr[k],
        sI = sni[k];
      const top = Math.min(k + 2, hi);
      for (let i = l; i <= top; i++) {
        const xr = H[re(i, k)],
          xi = H[re(i, k) + 1];
        const yr = H[re(i, k + 1)],
          yi = H[re(i, k + 1) + 1];
        // col k: x·c + y·conj(s) ; col k+1: −x·s + y·c
        H[re(i, k)] = xr * c + (yr * sR + yi * sI);
        H[re(i, k) + 1] = xi * c + (yi * sR - yr * sI);
        H[re(i, k + 1)] = -(xr * sR - xi * sI) + yr * c;
        H[re(i, k + 1) + 1] = -(xr * sI + xi * sR) + yi * c;
      }
    }
    for (let k = l; k <= hi; k++) {
      H[re(k, k)] += muR;
      H[re(k, k) + 1] += muI;
    }
  }
  return out;
}
