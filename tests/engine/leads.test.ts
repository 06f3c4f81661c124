import { describe, expect, it } from 'vitest';
import { channelLambda, leadChannels } from '../../shared/engine/leads';
import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian';
import type { CavityModelInput } from '../../shared/model/cavity-model';

/** Dense complex inverse by Gauss-Jordan with partial pivoting (test-only reference). */
function invert(n: number, a: Float64Array): Float64Array {
  const m = Float64Array.from(a);
  const inv = new Float64Array(2 * n * n);
  for (let i = 0; i < n; i++) inv[2 * (i * n + i)] = 1;
  for (let c = 0; c < n; c++) {
    let piv = c;
    for (let r = c + 1; r < n; r++)
      if (Math.hypot(m[2 * (r * n + c)], m[2 * (r * n + c) + 1]) > Math.hypot(m[2 * (piv * n + c)], m[2 * (piv * n + c) + 1])) piv = r;
    for (const x of [m, inv])
      for (let k = 0; k < 2 * n; k++) {
        const t = x[2 * piv * n + k];
        x[2 * piv * n + k] = x[2 * c * n + k];
        x[2 * c * n + k] = t;
      }
    const pr = m[2 * (c * n + c)],
      pi = m[2 * (c * n + c) + 1];
    const d = pr * pr + pi * pi;
    const ir = pr / d,
      ii = -pi / d;
    for (const x of [m, inv])
      for (let k = 0; k < n; k++) {
        const re = x[2 * (c * n + k)],
          im = x[2 * (c * n + k) + 1];
        x[2 * (c * n + k)] = re * ir - im * ii;
        x[2 * (c * n + k) + 1] = re * ii + im * ir;
      }
    for (let r = 0; r < n; r++) {
      if (r === c) continue;
      const fr = m[2 * (r * n + c)],
        fi = m[2 * (r * n + c) + 1];
      for (const x of [m, inv])
        for (let k = 0; k < n; k++) {
          const re = x[2 * (c * n + k)],
            im = x[2 * (c * n + k) + 1];
          x[2 * (r * n + k)] -= fr * re - fi * im;
          x[2 * (r * n + k) + 1] -= fr * im + fi * re;
        }
    }
  }
  return inv;
}

function ribbonModel(width: number, field = 0, side: 'left' | 'top' = 'left'): CavityModelInput {
  return {
    name: 'ribbon',
    spacing: 4,
    material: { effectiveMass: 0.05 },
    grid: { nx: 6, ny: 6 },
    shape: { kind: 'rectangle', x0: 0, y0: 0, width: 24, height: 24 },
    field,
    leads: [{ side, start: 1, width, offset: 0.3 }],
  };
}

describe('lead channels and self-energy', () => {
  const t = 2;
  it('follows the sheet rule for λ', () => {
    const out = new Float64Array(2);
    const eps = 4 * t;
    // Open on the real axis: |λ| = 1 and Im λ > 0 (outgoing).
    channelLambda(eps - 0.7 * t, 0, eps, t, true, out, 0);
    expect(Math.hypot(out[0], out[1])).toBeCloseTo(1, 14);
    expect(out[1]).toBeGreaterThan(0);
    // Below the real axis: |λ| > 1 on the continued sheet.
    channelLambda(eps - 0.7 * t, -0.1 * t, eps, t, true, out, 0);
    expect(Math.hypot(out[0], out[1])).toBeGreaterThan(1);
    // Closed on both sides of the band: |λ| < 1, and λ solves λ² − 2wλ + 1 = 0.
    for (const [re, im] of [
      [eps - 2.5 * t, -0.2 * t],
      [eps + 2.3 * t, -0.05 * t],
      [eps - 3 * t, 0],
    ]) {
      channelLambda(re, im, eps, t, false, out, 0);
      expect(Math.hypot(out[0], out[1])).toBeLessThan(1);
      const wr = (eps - re) / (2 * t),
        wi = -im / (2 * t);
      const qr = out[0] ** 2 - out[1] ** 2 - 2 * (wr * out[0] - wi * out[1]) + 1;
      const qi = 2 * out[0] * out[1] - 2 * (wr * out[1] + wi * out[0]);
      expect(Math.hypot(qr, qi)).toBeLessThan(1e-13);
    }
  });

  it('has orthonormal transverse modes', () => {
    const ch = leadChannels(7, t, 0);
    for (let m = 0; m < 7; m++)
      for (let n = 0; n < 7; n++) {
        let dot = 0;
        for (let p = 0; p < 7; p++) dot += ch.chi[m * 7 + p] * ch.chi[n * 7 + p];
        expect(Math.abs(dot - (m === n ? 1 : 0))).toBeLessThan(1e-14);
      }
  });

  it('matches the surface Green function of a semi-infinite ribbon found by iteration', () => {
    // Independent reference: g = (z − H_slice − t² g)^{-1}, iterated to its fixed point,
    // converges for Im z > 0 (common practice, no source); Σ = t²·g on the mouth.
    const width = 4;
    const op = new EffectiveHamiltonian(buildCavitySystem(ribbonModel(width)));
    const tt = op.hopping;
    const z = { re: 1.3 * tt, im: 0.4 * tt };
    const offset = 0.3;
    let g: Float64Array = new Float64Array(2 * width * width);
    for (let it = 0; it < 400; it++) {
      const a = new Float64Array(2 * width * width);
      for (let p = 0; p < width; p++) {
        a[2 * (p * width + p)] = z.re - offset - 4 * tt;
        a[2 * (p * width + p) + 1] = z.im;
        if (p + 1 < width) {
          a[2 * (p * width + p + 1)] = tt;
          a[2 * ((p + 1) * width + p)] = tt;
        }
      }
      for (let e = 0; e < a.length; e++) a[e] -= tt * tt * g[e];
      g = invert(width, a);
    }
    const sigma = op.selfEnergy(0, z, op.sheetAt(z.re));
    for (let e = 0; e < sigma.length; e++) expect(Math.abs(sigma[e] - tt * tt * g[e])).toBeLessThan(1e-10 * tt);
  });

  it('has dΣ/dz equal to central finite differences on open and closed sheets', () => {
    const op = new EffectiveHamiltonian(buildCavitySystem(ribbonModel(5, 0.7, 'top')));
    const tt = op.hopping;
    const nnz = op.rowIdx.length;
    const plus = new Float64Array(2 * nnz),
      minus = new Float64Array(2 * nnz),
      deriv = new Float64Array(2 * nnz);
    for (const re of [0.5 * tt, 1.9 * tt, 3.1 * tt]) {
      const sheet = op.sheetAt(re);
      // Lower half plane, where poles live, and on the real axis.
      for (const im of [-0.2 * tt, 0]) {
        const z = { re, im };
        op.assembleDerivative(z, sheet, deriv);
        for (const dir of [
          { re: 1, im: 0 },
          { re: 0, im: 1 },
        ]) {
          const h = 1e-5 * tt;
          op.assemble({ re: re + h * dir.re, im: im + h * dir.im }, sheet, plus);
          op.assemble({ re: re - h * dir.re, im: im - h * dir.im }, sheet, minus);
          let worst = 0;
          for (let e = 0; e < nnz; e++) {
            // (T(z+hd) − T(z−hd))/(2h) = d·T'(z) for an analytic T.
            const fr = (plus[2 * e] - minus[2 * e]) / (2 * h);
            const fi = (plus[2 * e + 1] - minus[2 * e + 1]) / (2 * h);
            const er = deriv[2 * e] * dir.re - deriv[2 * e + 1] * dir.im;
            const ei = deriv[2 * e] * dir.im + deriv[2 * e + 1] * dir.re;
            worst = Math.max(worst, Math.hypot(fr - er, fi - ei));
          }
          expect(worst).toBeLessThan(1e-6);
        }
      }
    }
  });

  it('gives Γ = WW† at a real energy and the width form −2 Im ψ†Σψ', () => {
    const op = new EffectiveHamiltonian(buildCavitySystem(ribbonModel(5, 1.3, 'top')));
    const tt = op.hopping;
    const e = 1.2 * tt;
    const sigma = op.selfEnergy(0, { re: e, im: 0 });
    const w = op.couplingColumns(e);
    const mouth = op.mouthSites(0);
    expect(w.count).toBe(op.openChannels(0, e).length);
    expect(w.count).toBeGreaterThan(0);
    expect(w.count).toBeLessThan(5);
    for (let p = 0; p < 5; p++)
      for (let q = 0; q < 5; q++) {
        // Γ[p,q] = i(Σ[p,q] − conj Σ[q,p])
        const dr = sigma[2 * (p * 5 + q)] - sigma[2 * (q * 5 + p)];
        const di = sigma[2 * (p * 5 + q) + 1] + sigma[2 * (q * 5 + p) + 1];
        const gr = -di,
          gi = dr;
        let wr = 0,
          wi = 0;
        for (let c = 0; c < w.count; c++) {
          const a = 2 * (c * op.n + mouth[p]),
            b = 2 * (c * op.n + mouth[q]);
          wr += w.values[a] * w.values[b] + w.values[a + 1] * w.values[b + 1];
          wi += w.values[a + 1] * w.values[b] - w.values[a] * w.values[b + 1];
        }
        expect(Math.abs(gr - wr)).toBeLessThan(1e-12 * tt);
        expect(Math.abs(gi - wi)).toBeLessThan(1e-12 * tt);
      }
    const psi = new Float64Array(2 * op.n);
    for (let k = 0; k < psi.length; k++) psi[k] = Math.sin(1.7 * k + 0.3);
    const z = { re: e, im: -0.1 * tt };
    const s = op.selfEnergy(0, z, op.sheetAt(e));
    let im = 0;
    for (let p = 0; p < 5; p++)
      for (let q = 0; q < 5; q++) {
        const a = 2 * mouth[p],
          b = 2 * mouth[q];
        const sr = s[2 * (p * 5 + q)],
          si = s[2 * (p * 5 + q) + 1];
        // Im(conj(ψ_p)·Σ[p,q]·ψ_q)
        const xr = sr * psi[b] - si * psi[b + 1],
          xi = sr * psi[b + 1] + si * psi[b];
        im += psi[a] * xi - psi[a + 1] * xr;
      }
    expect(op.leadWidthForm(z, op.sheetAt(e), 0, psi) / (-2 * im)).toBeCloseTo(1, 12);
  });

  it('lists thresholds sorted and de-duplicated', () => {
    const doc = ribbonModel(3);
    doc.leads = [
      { side: 'left', start: 0, width: 3 },
      { side: 'right', start: 2, width: 3 },
      { side: 'bottom', start: 1, width: 2, offset: 0.1 },
    ];
    const op = new EffectiveHamiltonian(buildCavitySystem(doc));
    expect(op.thresholds).toHaveLength(6 + 4);
    for (let k = 1; k < op.thresholds.length; k++) expect(op.thresholds[k]).toBeGreaterThan(op.thresholds[k - 1]);
    expect(op.leadCount).toBe(3);
    const out = new Float64Array(2 * op.rowIdx.length);
    expect(() => op.assemble({ re: 1, im: 0 }, op.sheetAt(1).slice(1), out)).toThrow(/sheet has flags for 2 leads/);
    expect(() => op.assemble({ re: 1, im: 0 }, op.sheetAt(1), new Float64Array(4))).toThrow(/out has length 4/);
    expect(() => op.leadWidthForm({ re: 1, im: 0 }, op.sheetAt(1), 5, new Float64Array(2 * op.n))).toThrow(/lead 5/);
  });
});
