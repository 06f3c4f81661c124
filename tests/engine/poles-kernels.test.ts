import { describe, expect, it } from 'vitest';
import { gaussLegendre, rectangleContour, panelPoints, PANEL_ORDER, type Contour } from '../../shared/engine/contour';
import { phaseSteps, settleWinding, wrapPhase } from '../../shared/engine/argument-principle';
import { complexEigenvalues } from '../../shared/engine/complex-eigenvalues';
import { complexSvd } from '../../shared/engine/complex-svd';
import { contourEigenvalues } from '../../shared/engine/contour-eigenvalues';

/** Deterministic pseudo-random numbers for the test matrices (common practice, no source). */
function lcg(seed: number): () => number {
  let s = seed >>> 0;
  return () => ((s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 4294967296) * 2 - 1;
}

describe('Gauss–Legendre panel rule', () => {
  it('integrates x^k exactly up to degree 2q − 1 (∫_{−1}^{1} x^k dx = 2/(k+1) for even k)', () => {
    for (const q of [PANEL_ORDER, 8]) {
      const { x, w } = gaussLegendre(q);
      for (let k = 0; k < 2 * q; k++) {
        let s = 0;
        for (let i = 0; i < q; i++) s += w[i] * x[i] ** k;
        const exact = k % 2 ? 0 : 2 / (k + 1);
        expect(Math.abs(s - exact)).toBeLessThan(1e-14);
      }
    }
  });

  it('matches the tabulated nodes and weights (Abramowitz & Stegun Table 25.4, from memory)', () => {
    const g5 = gaussLegendre(5);
    expect(Math.abs(g5.x[4] - 0.906179845938664)).toBeLessThan(1e-14);
    expect(Math.abs(g5.w[4] - 0.236926885056189)).toBeLessThan(1e-14);
    expect(Math.abs(g5.x[2])).toBeLessThan(1e-15);
    expect(Math.abs(g5.w[2] - 0.568888888888889)).toBeLessThan(1e-14);
    const g8 = gaussLegendre(8);
    expect(Math.abs(g8.x[7] - 0.960289856497536)).toBeLessThan(1e-14);
  });
});

describe('dense complex kernels of the contour method', () => {
  it('SVD reconstructs A = UΣVᴴ with orthonormal U, V and descending σ', () => {
    const m = 9;
    const r = lcg(3);
    const A = new Float64Array(2 * m * m).map(() => r());
    const { U, sigma, V } = complexSvd(m, A);
    for (let k = 1; k < m; k++) expect(sigma[k]).toBeLessThanOrEqual(sigma[k - 1]);
    for (let i = 0; i < m; i++)
      for (let j = 0; j < m; j++) {
        let re = 0;
        let im = 0;
        for (let k = 0; k < m; k++) {
          // U[i,k] σ_k conj(V[j,k])
          const ur = U[2 * (i * m + k)],
            ui = U[2 * (i * m + k) + 1];
          const vr = V[2 * (j * m + k)],
            vi = -V[2 * (j * m + k) + 1];
          re += sigma[k] * (ur * vr - ui * vi);
          im += sigma[k] * (ur * vi + ui * vr);
        }
        expect(Math.abs(re - A[2 * (i * m + j)])).toBeLessThan(1e-13);
        expect(Math.abs(im - A[2 * (i * m + j) + 1])).toBeLessThan(1e-13);
      }
    for (let a = 0; a < m; a++)
      for (let b = 0; b < m; b++) {
        let re = 0;
        let im = 0;
        for (let k = 0; k < m; k++) {
          re += U[2 * (k * m + a)] * U[2 * (k * m + b)] + U[2 * (k * m + a) + 1] * U[2 * (k * m + b) + 1];
          im += U[2 * (k * m + a)] * U[2 * (k * m + b) + 1] - U[2 * (k * m + a) + 1] * U[2 * (k * m + b)];
        }
        expect(Math.abs(re - (a === b ? 1 : 0))).toBeLessThan(1e-13);
        expect(Math.abs(im)).toBeLessThan(1e-13);
      }
  });

  it('finds the eigenvalues of S·D·S⁻¹ for a known complex diagonal D', () => {
    const m = 7;
    const d = Array.from({ length: m }, (_, k) => ({ re: 1 + k, im: 0.3 * (k % 3) - 0.5 }));
    // S = I + small strictly upper part, so S⁻¹ is exact by back substitution
    const r = lcg(5);
    const S = new Float64Array(2 * m * m);
    for (let i = 0; i < m; i++) {
      S[2 * (i * m + i)] = 1;
      for (let j = i + 1; j < m; j++) {
        S[2 * (i * m + j)] = 0.5 * r();
        S[2 * (i * m + j) + 1] = 0.5 * r();
      }
    }
    // S⁻¹ of a unit upper triangle by back substitution, then A = S·D·S⁻¹
    const Si = new Float64Array(2 * m * m);
    for (let j = 0; j < m; j++) {
      Si[2 * (j * m + j)] = 1;
      for (let i = j - 1; i >= 0; i--) {
        let re = 0;
        let im = 0;
        for (let k = i + 1; k <= j; k++) {
          const ar = S[2 * (i * m + k)],
            ai = S[2 * (i * m + k) + 1];
          const br = Si[2 * (k * m + j)],
            bi = Si[2 * (k * m + j) + 1];
          re -= ar * br - ai * bi;
          im -= ar * bi + ai * br;
        }
        Si[2 * (i * m + j)] = re;
        Si[2 * (i * m + j) + 1] = im;
      }
    }
    const A = new Float64Array(2 * m * m);
    for (let i = 0; i < m; i++)
      for (let j = 0; j < m; j++) {
        let re = 0;
        let im = 0;
        for (let k = 0; k < m; k++) {
          const sr = S[2 * (i * m + k)],
            si = S[2 * (i * m + k) + 1];
          const dr = sr * d[k].re - si * d[k].im,
            di = sr * d[k].im + si * d[k].re;
          const tr = Si[2 * (k * m + j)],
            ti = Si[2 * (k * m + j) + 1];
          re += dr * tr - di * ti;
          im += dr * ti + di * tr;
        }
        A[2 * (i * m + j)] = re;
        A[2 * (i * m + j) + 1] = im;
      }
    const e = complexEigenvalues(m, A);
    for (const want of d) {
      let best = Infinity;
      for (let k = 0; k < m; k++) best = Math.min(best, Math.hypot(e[2 * k] - want.re, e[2 * k + 1] - want.im));
      expect(best).toBeLessThan(1e-12);
    }
  });
});

/** Evaluates panels of a contour for T(z) = diag(z − a_k): exact probed resolvent and det. */
function diagonalProblem(zeros: { re: number; im: number }[], l: number) {
  const r = lcg(9);
  const n = zeros.length;
  const U = new Float64Array(2 * n * l).map(() => r());
  const V = new Float64Array(2 * n * l).map(() => r());
  return (panel: Contour['refs'][number]['panel']): boolean => {
    const pts = panelPoints(panel);
    panel.nodes = [];
    for (let q = 0; q < PANEL_ORDER; q++) {
      const zr = pts[2 * q],
        zi = pts[2 * q + 1];
      let logAbs = 0;
      let arg = 0;
      const inv: { re: number; im: number }[] = [];
      for (const a of zeros) {
        const dr = zr - a.re,
          di = zi - a.im;
        logAbs += Math.log(Math.hypot(dr, di));
        arg += Math.atan2(di, dr);
        const d2 = dr * dr + di * di;
        inv.push({ re: dr / d2, im: -di / d2 });
      }
      const probed = new Float64Array(2 * l * l);
      for (let x = 0; x < l; x++)
        for (let y = 0; y < l; y++) {
          let re = 0;
          let im = 0;
          for (let k = 0; k < n; k++) {
            // conj(U[k,x]) · inv_k · V[k,y]
            const ur = U[2 * (x * n + k)],
              ui = -U[2 * (x * n + k) + 1];
            const vr = V[2 * (y * n + k)],
              vi = V[2 * (y * n + k) + 1];
            const ar = ur * inv[k].re - ui * inv[k].im,
              ai = ur * inv[k].im + ui * inv[k].re;
            re += ar * vr - ai * vi;
            im += ar * vi + ai * vr;
          }
          probed[2 * (x * l + y)] = re;
          probed[2 * (x * l + y) + 1] = im;
        }
      panel.nodes.push({ zRe: zr, zIm: zi, logAbs, arg: wrapPhase(arg), probed });
    }
    return true;
  };
}

describe('argument principle and contour eigenvalues on T(z) = diag(z − a_k)', () => {
  // zeros inside [0, 4] × [−1, 1]: 4 of them, one 1e-3 from the bottom edge; 2 outside
  const inside = [
    { re: 0.7, im: -0.2 },
    { re: 1.9, im: 0.1 },
    { re: 2.0, im: -0.999 },
    { re: 3.3, im: -0.6 },
  ];
  const outside = [
    { re: 4.2, im: -0.3 },
    { re: 1.5, im: -1.4 },
  ];
  const zeros = [...inside, ...outside];

  it('counts the zeros inside, refining panels near the one close to the edge', () => {
    const contour = rectangleContour(0, 4, -1, 1, { maxPanel: 1 }, { maxPanel: 1 }, { maxPanel: 1 });
    const before = contour.refs.length;
    const count = settleWinding(contour, diagonalProblem(zeros, 3));
    expect(count.winding).toBe(inside.length);
    expect(contour.refs.length).toBeGreaterThan(before);
    expect(count.maxStep).toBeLessThan(Math.PI / 2);
    const { steps } = phaseSteps(contour);
    for (const s of steps) expect(Math.abs(s)).toBeLessThan(Math.PI / 2);
  });

  it('recovers the enclosed zeros from the block Hankel moments', () => {
    const contour = rectangleContour(0, 4, -1, 1, { maxPanel: 1 }, { maxPanel: 1 }, { maxPanel: 1 });
    settleWinding(contour, diagonalProblem(zeros, 3));
    const eig = contourEigenvalues(contour, 3, 3);
    for (const a of inside) {
      let best = Infinity;
      for (let k = 0; k < eig.rank; k++) best = Math.min(best, Math.hypot(eig.values[2 * k] - a.re, eig.values[2 * k + 1] - a.im));
      // the zero 1e-3 from the edge is resolved less well; Newton refines all of them later
      expect(best).toBeLessThan(a.im < -0.99 ? 1e-3 : 1e-6);
    }
  });

  it('wraps phases into (−π, π]', () => {
    expect(wrapPhase(3 * Math.PI)).toBeCloseTo(Math.PI, 15);
    expect(wrapPhase(-Math.PI)).toBeCloseTo(Math.PI, 15);
    expect(wrapPhase(0.25 - 4 * Math.PI)).toBeCloseTo(0.25, 14);
  });
});
