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
import { complexEigenvalues } from './complex-eigenvalues';
import { complexSvd } from './complex-svd';
import { traverse, type Contour } from './contour';

interface ContourEigenvalues {
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
export function contourEigenvalues(contour: Contour, probes: number, moments: number, rankTolerance = 1e-9): ContourEigenvalues {
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
