/**
 * Eigenvalues of T(z) inside a contour from probed contour moments: the block
 * Hankel ("higher moment") form of the contour-integral method.
 *
 * M_p = (1/2πi) ∮ s(z)^p Uᴴ T(z)⁻¹ V dz,  s(z) = (z − c)/ρ,  p = 0 … 2K−1,
 * with ℓ random right probes V and left probes U. With the Hankel matrices
 * H0 = [M_{i+j}], H1 = [M_{i+j+1}] (i, j < K, size ℓK) and the truncated SVD
 * H0 = Q Σ Wᴴ of rank r, the eigenvalues of B = Q_rᴴ H1 W_r Σ_r⁻¹ are s(z_n) for
 * the r eigenvalues z_n inside (Keldysh's theorem).
 * Sources: W.-J. Beyn, Linear Algebra Appl. 436 (2012) 3839–3863 (the integral
 * method, moments A_0, A_1); J. Asakura, T. Sakurai, H. Tadano, T. Ikegami,
 * K. Kimura, JSIAM Letters 1 (2009) 52–55 (the block Hankel higher-moment form),
 * which needs only ℓ ≥ (largest geometric multiplicity) probes instead of ℓ ≥ N.
 * Scaling by ρ (half the contour's longest side) keeps |s|^p bounded inside.
 * Cost: O(nodes·ℓ²·K) for the moments, O((ℓK)³) for SVD and eigenvalues.
 */
import { traverse, type Contour } from './contour';

export interface ContourEigenvalues {
  /** Candidate eigenvalues z (interleaved re, im), unrefined. */
  values: Float64Array;
  /** Singular values of H0, descending. */
  singular: Float64Array;
  /** Rank kept. */
  rank: number;
}

/**
 * Candidate eigenvalues of T inside `contour` from its evaluated nodes.
 * @param probes ℓ, the block width of the stored probed resolvents
 * @param moments K, Hankel blocks per side (ℓK ≥ the expected count + margin)
 * @param rankTolerance singular values below rankTolerance·σ_1 are treated as noise
 */
export function contourEigenvalues(
  contour: Contour,
  probes: number,
  moments: number,
  rankTolerance = 1e-9,
): ContourEigenvalues {
  const l = probes;
  const K = moments;
  const cRe = 0.5 * (contour.x0 + contour.x1);
  const cIm = 0.5 * (contour.y0 + contour.y1);
  const rho = 0.5 * Math.max(contour.x1 - contour.x0, contour.y1 - contour.y0);
  const P = 2 * K;
  const ll = l * l;
  const M = new Float64Array(2 * ll * P);
  for (const { node, wRe, wIm } of traverse(contour)) {
    const sRe = (node.zRe - cRe) / rho;
    const sIm = (node.zIm - cIm) / rho;
    // weight w/(2πi) = (wIm − i·wRe)/(2π), then times s^p
    let fRe = wIm / (2 * Math.PI);
    let fIm = -wRe / (2 * Math.PI);
    const Y = node.probed;
    for (let p = 0; p < P; p++) {
      const off = 2 * ll * p;
      for (let q = 0; q < ll; q++) {
        const yr = Y[2 * q];
        const yi = Y[2 * q + 1];
        M[off + 2 * q] += fRe * yr - fIm * yi;
        M[off + 2 * q + 1] += fRe * yi + fIm * yr;
      }
      const t = fRe * sRe - fIm * sIm;
      fIm = fRe * sIm + fIm * sRe;
      fRe = t;
    }
  }
  const m = l * K;
  const H0 = new Float64Array(2 * m * m);
  const H1 = new Float64Array(2 * m * m);
  for (let bi = 0; bi < K; bi++) {
    for (let bj = 0; bj < K; bj++) {
      for (let a = 0; a < l; a++) {
        for (let b = 0; b < l; b++) {
          const row = bi * l + a;
          const col = bj * l + b;
          const src0 = 2 * (ll * (bi + bj) + a * l + b);
          const src1 = 2 * (ll * (bi + bj + 1) + a * l + b);
          H0[2 * (row * m + col)] = M[src0];
          H0[2 * (row * m + col) + 1] = M[src0 + 1];
          H1[2 * (row * m + col)] = M[src1];
          H1[2 * (row * m + col) + 1] = M[src1 + 1];
        }
      }
    }
  }
  const { U, sigma, V } = complexSvd(m, H0);
  let r = 0;
  while (r < m && sigma[r] > rankTolerance * sigma[0]) r++;
  if (!(sigma[0] > 0)) r = 0;
  // B = U_rᴴ H1 V_r Σ_r⁻¹
  const HV = new Float64Array(2 * m * r);
  for (let i = 0; i < m; i++) {
    for (let c = 0; c < r; c++) {
      let sr = 0;
      let si = 0;
      for (let k = 0; k < m; k++) {
        const hr = H1[2 * (i * m + k)];
        const hi = H1[2 * (i * m + k) + 1];
        const vr = V[2 * (k * m + c)];
        const vi = V[2 * (k * m + c) + 1];
        sr += hr * vr - hi * vi;
        si += hr * vi + hi * vr;
      }
      HV[2 * (i * r + c)] = sr;
      HV[2 * (i * r + c) + 1] = si;
    }
  }
  const B = new Float64Array(2 * r * r);
  for (let a = 0; a < r; a++) {
    for (let c = 0; c < r; c++) {
      let sr = 0;
      let si = 0;
      for (let k = 0; k < m; k++) {
        const ur = U[2 * (k * m + a)];
        const ui = -U[2 * (k * m + a) + 1];
        const hr = HV[2 * (k * r + c)];
        const hi = HV[2 * (k * r + c) + 1];
        sr += ur * hr - ui * hi;
        si += ur * hi + ui * hr;
      }
      B[2 * (a * r + c)] = sr / sigma[c];
      B[2 * (a * r + c) + 1] = si / sigma[c];
    }
  }
  const eig = complexEigenvalues(r, B);
  const values = new Float64Array(2 * r);
  for (let k = 0; k < r; k++) {
    values[2 * k] = cRe + rho * eig[2 * k];
    values[2 * k + 1] = cIm + rho * eig[2 * k + 1];
  }
  return { values, singular: sigma, rank: r };
}

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
    const ar = H[re(hi - 1, hi - 1)], ai = H[re(hi - 1, hi - 1) + 1];
    const br = H[re(hi - 1, hi)], bi = H[re(hi - 1, hi) + 1];
    const cr = H[re(hi, hi - 1)], ci = H[re(hi, hi - 1) + 1];
    const dr = H[re(hi, hi)], di = H[re(hi, hi) + 1];
    const hr = 0.5 * (ar - dr);
    const hI = 0.5 * (ai - di);
    // disc = h² + bc
    const discR = hr * hr - hI * hI + (br * cr - bi * ci);
    const discI = 2 * hr * hI + (br * ci + bi * cr);
    const mod = Math.hypot(discR, discI);
    const sqR = Math.sqrt(Math.max(0, 0.5 * (mod + discR)));
    const sqI = Math.sqrt(Math.max(0, 0.5 * (mod - discR))) * (discI < 0 ? -1 : 1);
    // pick the eigenvalue d − (bc)/(h ± sqrt) closest to d: μ = (a+d)/2 ± sqrt, nearer d
    const m1r = 0.5 * (ar + dr) + sqR, m1i = 0.5 * (ai + di) + sqI;
    const m2r = 0.5 * (ar + dr) - sqR, m2i = 0.5 * (ai + di) - sqI;
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
      const xr = H[re(k, k)], xi = H[re(k, k) + 1];
      const yr = H[re(k + 1, k)], yi = H[re(k + 1, k) + 1];
      const xa = Math.hypot(xr, xi);
      const nrm = Math.hypot(xa, Math.hypot(yr, yi));
      let c = 0, sR = 1, sI = 0;
      if (nrm > 0) {
        if (xa === 0) {
          c = 0;
          sR = 1;
          sI = 0;
        } else {
          c = xa / nrm;
          // s = (x/|x|)·conj(y)/nrm
          const ur = xr / xa, ui = xi / xa;
          sR = (ur * yr + ui * yi) / nrm;
          sI = (ui * yr - ur * yi) / nrm;
        }
      }
      cs[k] = c;
      snr[k] = sR;
      sni[k] = sI;
      for (let j = k; j <= hi; j++) {
        const pr = H[re(k, j)], pi = H[re(k, j) + 1];
        const qr = H[re(k + 1, j)], qi = H[re(k + 1, j) + 1];
        // row k: c·p + s·q ; row k+1: −conj(s)·p + c·q
        H[re(k, j)] = c * pr + (sR * qr - sI * qi);
        H[re(k, j) + 1] = c * pi + (sR * qi + sI * qr);
        H[re(k + 1, j)] = -(sR * pr + sI * pi) + c * qr;
        H[re(k + 1, j) + 1] = -(sR * pi - sI * pr) + c * qi;
      }
    }
    for (let k = l; k < hi; k++) {
      const c = cs[k], sR = snr[k], sI = sni[k];
      const top = Math.min(k + 2, hi);
      for (let i = l; i <= top; i++) {
        const xr = H[re(i, k)], xi = H[re(i, k) + 1];
        const yr = H[re(i, k + 1)], yi = H[re(i, k + 1) + 1];
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
