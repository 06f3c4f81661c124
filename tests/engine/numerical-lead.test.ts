import { describe, expect, it } from 'vitest';
import { complexSchur, reorderSchur, schurEigenvalues } from '../../shared/engine/complex-schur';
import { conjugateTranspose, denseMultiply } from '../../shared/engine/dense-solve';
import { hermitianEigen } from '../../shared/engine/hermitian-eigen';
import {
  channelFlags,
  leadChannels,
  leadThresholds,
  mouthBlock,
  mouthPhases,
  selfEnergyCoefficients,
  selfEnergyDerivativeCoefficients,
} from '../../shared/engine/leads';
import { leadBands } from '../../shared/engine/numerical-lead-bands';
import { realModes, realModesKept } from '../../shared/engine/numerical-lead-modes';
import { NumericalLead, solveStein } from '../../shared/engine/numerical-lead';
import { deviceScattering, ribbonDevice, squareRibbonCell, zigzagRibbonCell } from './numerical-lead-systems';

function maxDiff(a: Float64Array, b: Float64Array): number {
  let d = 0;
  for (let e = 0; e < a.length; e++) d = Math.max(d, Math.abs(a[e] - b[e]));
  return d;
}

function maxAbs(a: Float64Array): number {
  let d = 0;
  for (const x of a) d = Math.max(d, Math.abs(x));
  return d;
}

/** Deterministic pseudo-random numbers in [0, 1) (mulberry32). */
function random(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (s + 0x6d2b79f5) >>> 0;
    let x = s;
    x = Math.imul(x ^ (x >>> 15), x | 1);
    x ^= x + Math.imul(x ^ (x >>> 7), x | 61);
    return ((x ^ (x >>> 14)) >>> 0) / 4294967296;
  };
}

describe('dense kernels of the numerical leads', () => {
  it('complex Schur form, its reordering and the Stein solve hold their identities to rounding', () => {
    const n = 12;
    const rnd = random(7);
    const a = new Float64Array(2 * n * n).map(() => rnd() - 0.5);
    const s = complexSchur(n, a);
    const select = Array.from({ length: n }, (_, i) => i % 3 === 2);
    const wanted = schurEigenvalues(s).filter((_, e) => select[e >> 1]);
    reorderSchur(s, select);
    const back = denseMultiply(n, n, n, denseMultiply(n, n, n, s.q, s.t), conjugateTranspose(n, n, s.q));
    expect(maxDiff(back, a)).toBeLessThan(1e-13);
    for (let i = 1; i < n; i++) for (let j = 0; j < i; j++) expect(Math.hypot(s.t[2 * (i * n + j)], s.t[2 * (i * n + j) + 1])).toBe(0);
    expect(maxDiff(schurEigenvalues(s).subarray(0, wanted.length), wanted)).toBeLessThan(1e-12);
    // Stein: X − A X B = C with small A, B
    const b = new Float64Array(2 * n * n).map(() => (rnd() - 0.5) / n);
    const c = new Float64Array(2 * n * n).map(() => rnd() - 0.5);
    const as = a.map((x) => x / n);
    const x = solveStein(n, as, b, c);
    const axb = denseMultiply(n, n, n, denseMultiply(n, n, n, as, x), b);
    expect(
      maxDiff(
        x.map((v, e) => v - axb[e]),
        c,
      ),
    ).toBeLessThan(1e-13);
  });

  it('Hermitian eigenpairs satisfy A·V = V·Λ and V†V = 1, also with every eigenvalue doubled', () => {
    const rnd = random(3);
    const block = (n: number) => {
      const h = new Float64Array(2 * n * n);
      for (let i = 0; i < n; i++)
        for (let j = 0; j <= i; j++) {
          const re = rnd() - 0.5;
          const im = i === j ? 0 : rnd() - 0.5;
          h[2 * (i * n + j)] = re;
          h[2 * (i * n + j) + 1] = im;
          h[2 * (j * n + i)] = re;
          h[2 * (j * n + i) + 1] = -im;
        }
      return h;
    };
    // [[B, 0], [0, B]]: a repeated spectrum, where the eigenvectors are only fixed up to rotations
    const b = block(6);
    const doubled = new Float64Array(2 * 144);
    for (let i = 0; i < 6; i++)
      for (let j = 0; j < 6; j++)
        for (const o of [0, 6]) {
          doubled[2 * ((i + o) * 12 + j + o)] = b[2 * (i * 6 + j)];
          doubled[2 * ((i + o) * 12 + j + o) + 1] = b[2 * (i * 6 + j) + 1];
        }
    for (const [n, h] of [
      [10, block(10)],
      [40, block(40)],
      [12, doubled],
    ] as const) {
      const { values, vectors } = hermitianEigen(n, h);
      const av = denseMultiply(n, n, n, h, vectors);
      const vl = vectors.map((v, e) => v * values[(e >> 1) % n]);
      expect(maxDiff(av, vl)).toBeLessThan(1e-13 * n);
      const vv = denseMultiply(n, n, n, conjugateTranspose(n, n, vectors), vectors);
      for (let i = 0; i < n; i++) vv[2 * (i * n + i)] -= 1;
      expect(maxAbs(vv)).toBeLessThan(1e-13 * n);
      for (let i = 1; i < n; i++) expect(values[i]).toBeGreaterThanOrEqual(values[i - 1]);
    }
  });
});

describe('numerical leads against the closed form (square lattice, no field)', () => {
  // Reference: the contract's closed-form leads (shared/engine/leads.ts, docs/physics-model.md "Leads").
  const W = 5;
  const t = 1.7;
  const offset = 0.3;
  const cell = squareRibbonCell(W, t, 0, () => offset);
  const coupling = new Float64Array(2 * W * W);
  for (let p = 0; p < W; p++) coupling[2 * (p * W + p)] = -t;
  const lead = new NumericalLead({ cell, mouthSize: W, coupling });
  const ch = leadChannels(W, t, offset);
  const theta = new Float64Array(W);

  it('finds the thresholds ε_m ± 2t', () => {
    const closed = leadThresholds(ch).sort((x, y) => x - y);
    expect(lead.thresholds.length).toBe(closed.length);
    lead.thresholds.forEach((e, i) => expect(Math.abs(e - closed[i])).toBeLessThan(1e-12 * t));
  });

  it('gives Σ and dΣ/dz to 1e-12·t at complex z in every piece, on both sides of each threshold', () => {
    const thr = lead.thresholds;
    let worstSigma = 0;
    let worstDerivative = 0;
    let checked = 0;
    for (let p = 0; p <= thr.length; p++) {
      const lo = p === 0 ? thr[0] - 2 * t : thr[p - 1];
      const hi = p === thr.length ? thr[thr.length - 1] + 2 * t : thr[p];
      // near both ends of the piece (so on both sides of every threshold) and in its middle
      for (const x of [lo + 0.01 * (hi - lo), 0.5 * (lo + hi), hi - 0.01 * (hi - lo)])
        for (const y of [0.2 * t, 0.01 * t, -0.01 * t, -0.2 * t, -0.6 * t]) {
          const flags = channelFlags(ch, x);
          const coef = new Float64Array(2 * W);
          selfEnergyCoefficients(ch, x, y, flags, coef);
          const sigma = mouthBlock(ch, theta, coef, new Float64Array(2 * W * W));
          selfEnergyDerivativeCoefficients(ch, x, y, flags, coef);
          const dSigma = mouthBlock(ch, theta, coef, new Float64Array(2 * W * W));
          const got = lead.selfEnergyWithDerivative(x, y, lead.sheetAt(x));
          worstSigma = Math.max(worstSigma, maxDiff(got.sigma, sigma));
          worstDerivative = Math.max(worstDerivative, maxDiff(got.derivative, dSigma));
          checked++;
        }
    }
    expect(checked).toBe(3 * 5 * (2 * W + 1));
    expect(worstSigma).toBeLessThan(1e-12 * t);
    // dΣ/dz is dimensionless (λ²/(λ² − 1)); the same 1e-12 bound.
    expect(worstDerivative).toBeLessThan(1e-12 * t);
  });

  it('agrees on the real axis inside the pieces (velocity rule) and with mouth phases e^{−iθ_p}Σ0e^{iθ_p′}', () => {
    // A top lead of a cavity in a field: θ_p = −2πφ·j0·i_p (docs/physics-model.md); V[p,p] = −t·e^{iθ_p}.
    const mouthI = Int32Array.from({ length: W }, (_, p) => 3 + p);
    const mouthJ = new Int32Array(W).fill(9);
    const ph = mouthPhases('top', mouthI, mouthJ, 0.013);
    const v = new Float64Array(2 * W * W);
    for (let p = 0; p < W; p++) {
      v[2 * (p * W + p)] = -t * Math.cos(ph[p]);
      v[2 * (p * W + p) + 1] = -t * Math.sin(ph[p]);
    }
    const phased = new NumericalLead({ cell, mouthSize: W, coupling: v });
    const thr = phased.thresholds;
    for (let p = 1; p < thr.length; p++) {
      const x = 0.5 * (thr[p - 1] + thr[p]);
      const coef = new Float64Array(2 * W);
      selfEnergyCoefficients(ch, x, 0, channelFlags(ch, x), coef);
      const sigma = mouthBlock(ch, ph, coef, new Float64Array(2 * W * W));
      expect(maxDiff(phased.selfEnergy(x, 0), sigma)).toBeLessThan(1e-12 * t);
    }
  });

  it('flux-normalised coupling columns are the contract’s sqrt(2t sin k_m)·χ_m up to sign', () => {
    const e = 0.5 * (lead.thresholds[3] + lead.thresholds[4]);
    const open = lead.channels(e);
    const flags = channelFlags(ch, e);
    expect(open.count).toBe(flags.filter(Boolean).length);
    for (let a = 0; a < open.count; a++) {
      // find the channel m by its velocity 2t·sin k_m
      const m = ch.energies.findIndex((em, i) => flags[i] && Math.abs(2 * t * Math.sqrt(1 - ((em - e) / (2 * t)) ** 2) - open.velocity[a]) < 1e-9);
      expect(m).toBeGreaterThanOrEqual(0);
      const amp = Math.sqrt(open.velocity[a]);
      let plus = 0;
      let minus = 0;
      for (let p = 0; p < W; p++) {
        const want = amp * ch.chi[m * W + p];
        const gr = open.columns[2 * (p * open.count + a)];
        const gi = open.columns[2 * (p * open.count + a) + 1];
        plus = Math.max(plus, Math.hypot(gr - want, gi));
        minus = Math.max(minus, Math.hypot(gr + want, gi));
      }
      expect(Math.min(plus, minus)).toBeLessThan(1e-12 * Math.sqrt(t));
    }
  });
});

describe('numerical leads of other cells', () => {
  it('dΣ/dz matches central differences for a zigzag graphene lead (singular H1) and a square lead in a field', () => {
    const t = 2.7; // eV-scale hopping of graphene, Castro Neto et al., Rev. Mod. Phys. 81, 109 (2009) (from memory)
    const cases = [
      { cell: zigzagRibbonCell(4, t), scale: t },
      { cell: squareRibbonCell(6, 1, 0.04), scale: 1 },
    ];
    for (const { cell, scale } of cases) {
      const n = cell.size;
      const coupling = new Float64Array(2 * n * n);
      for (let p = 0; p < n; p++) coupling[2 * (p * n + p)] = -scale;
      const lead = new NumericalLead({ cell, mouthSize: n, coupling }, { kSamples: 64 });
      const thr = lead.thresholds;
      const mid = Math.floor(thr.length / 2);
      for (const p of [mid - 2, mid + 1]) {
        const x = 0.37 * thr[p] + 0.63 * thr[p + 1];
        const sheet = lead.sheetAt(x);
        for (const y of [0.05 * scale, -0.05 * scale]) {
          const h = 1e-5 * scale;
          const d = lead.selfEnergyDerivative(x, y, sheet);
          const fdRe = lead.selfEnergy(x + h, y, sheet).map((v, e) => (v - lead.selfEnergy(x - h, y, sheet)[e]) / (2 * h));
          const up = lead.selfEnergy(x, y + h, sheet);
          const down = lead.selfEnergy(x, y - h, sheet);
          // along the imaginary direction dΣ/dz = (Σ(z + ih) − Σ(z − ih))/(2ih)
          const fdIm = new Float64Array(up.length);
          for (let e = 0; e < up.length; e += 2) {
            fdIm[e] = (up[e + 1] - down[e + 1]) / (2 * h);
            fdIm[e + 1] = -(up[e] - down[e]) / (2 * h);
          }
          const size = Math.max(1, maxAbs(d));
          expect(maxDiff(d, fdRe)).toBeLessThan(1e-7 * size);
          expect(maxDiff(d, fdIm)).toBeLessThan(1e-7 * size);
        }
      }
    }
  });

  it('Σ of a real lead is exactly symmetric (so T(z) takes the symmetric LU); in a field it is not', () => {
    const t = 2.7; // eV-scale hopping of graphene, Castro Neto et al., Rev. Mod. Phys. 81, 109 (2009) (from memory)
    const transposeGap = (b: Float64Array, m: number): number => {
      let worst = 0;
      for (let p = 0; p < m; p++)
        for (let q = 0; q < m; q++)
          worst = Math.max(worst, Math.hypot(b[2 * (p * m + q)] - b[2 * (q * m + p)], b[2 * (p * m + q) + 1] - b[2 * (q * m + p) + 1]));
      return worst;
    };
    for (const { cell, scale, real } of [
      { cell: zigzagRibbonCell(5, t), scale: t, real: true },
      { cell: squareRibbonCell(6, 1, 0.04), scale: 1, real: false },
    ]) {
      const n = cell.size;
      const coupling = new Float64Array(2 * n * n);
      for (let p = 0; p < n; p++) coupling[2 * (p * n + p)] = -scale;
      const lead = new NumericalLead({ cell, mouthSize: n, coupling }, { kSamples: 64 });
      const x = 0.5 * (lead.thresholds[1] + lead.thresholds[2]);
      const sheet = lead.sheetAt(x);
      const { sigma, derivative } = lead.selfEnergyWithDerivative(x, -0.03 * scale, sheet);
      if (real) {
        expect(transposeGap(sigma, n)).toBe(0);
        expect(transposeGap(derivative, n)).toBe(0);
        expect(transposeGap(lead.selfEnergy(x, 0.02 * scale, sheet), n)).toBe(0);
      } else expect(transposeGap(sigma, n)).toBeGreaterThan(1e-3 * scale);
    }
  });

  it('below the axis Σ is the analytic continuation of the retarded Σ (Cauchy integral across the real axis)', () => {
    // Cauchy's integral formula on a circle centred on the piece's real segment: it holds
    // only if the values below the axis continue those above it analytically (complex
    // analysis, common practice). The neighbouring piece's sheet, continued from the
    // wrong segment, fails it.
    for (const cell of [squareRibbonCell(6, 1, 0.04), zigzagRibbonCell(4, 1)]) {
      const n = cell.size;
      const coupling = new Float64Array(2 * n * n);
      for (let p = 0; p < n; p++) coupling[2 * (p * n + p)] = -1;
      const lead = new NumericalLead({ cell, mouthSize: n, coupling }, { kSamples: 64 });
      const thr = lead.thresholds;
      for (const p of [1, Math.floor(thr.length / 2) + 1]) {
        const xc = 0.5 * (thr[p - 1] + thr[p]);
        const r = 0.3 * (thr[p] - thr[p - 1]);
        const z0 = { re: xc + 0.2 * r, im: -0.6 * r };
        const cauchy = (sheet: boolean[]) => {
          const samples = 128;
          const acc = new Float64Array(2 * n * n);
          for (let k = 0; k < samples; k++) {
            const a = (2 * Math.PI * (k + 0.5)) / samples;
            const zr = xc + r * Math.cos(a);
            const zi = r * Math.sin(a);
            const f = lead.selfEnergy(zr, zi, sheet);
            // (1/2πi)∮ f/(z − z0) dz with dz = i·r·e^{ia}da
            const dr = zr - z0.re;
            const di = zi - z0.im;
            const d = dr * dr + di * di;
            const wr = r * Math.cos(a);
            const wi = r * Math.sin(a);
            const qr = (wr * dr + wi * di) / d / samples;
            const qi = (wi * dr - wr * di) / d / samples;
            for (let e = 0; e < acc.length; e += 2) {
              acc[e] += f[e] * qr - f[e + 1] * qi;
              acc[e + 1] += f[e] * qi + f[e + 1] * qr;
            }
          }
          return maxDiff(acc, lead.selfEnergy(z0.re, z0.im, sheet));
        };
        expect(cauchy(lead.sheetAt(xc))).toBeLessThan(1e-12);
        expect(cauchy(lead.sheetAt(0.5 * (thr[p] + thr[p + 1])))).toBeGreaterThan(1e-6);
      }
    }
  });

  it('finds the zigzag band edges at E = ±t, where several bands meet at k = π and one has its extremum', () => {
    // At k = π the intra-chain hoppings of a zigzag cell cancel: it falls into N − 1 dimers
    // (±t) and two edge sites (0) (derived here from the cell). The band through E = t with
    // dE/dk = 0 there opens two channels (seen: 10 propagating modes just below t, 12 above).
    const cell = zigzagRibbonCell(6, 1);
    const n = cell.size;
    const coupling = new Float64Array(2 * n * n);
    for (let p = 0; p < n; p++) coupling[2 * (p * n + p)] = -1;
    const lead = new NumericalLead({ cell, mouthSize: n, coupling }, { kSamples: 64 });
    for (const e of [-1, 1]) expect(Math.min(...lead.thresholds.map((x) => Math.abs(x - e)))).toBeLessThan(1e-9);
    expect(realModes(cell, 1 + 1e-4).propagating.length - realModes(cell, 1 - 1e-4).propagating.length).toBe(2);
  });

  it('kept real-energy modes are handed out as copies: reordering one leaves the next equal to a fresh solve', () => {
    const cell = zigzagRibbonCell(4, 1);
    const e = 0.37;
    const first = realModesKept(cell, e);
    reorderSchur(first.pencil.schur, first.retarded);
    first.retarded.fill(false);
    first.propagating[0].vector.fill(0);
    const again = realModesKept(cell, e);
    const fresh = realModes(cell, e);
    expect(Array.from(again.pencil.schur.q)).toEqual(Array.from(fresh.pencil.schur.q));
    expect(Array.from(again.pencil.schur.t)).toEqual(Array.from(fresh.pencil.schur.t));
    expect(again.retarded).toEqual(fresh.retarded);
    expect(Array.from(again.propagating[0].vector)).toEqual(Array.from(fresh.propagating[0].vector));
  });

  it('Γ = i(Σ − Σ†) = W·W† with the flux-normalised columns, in a field and for zigzag graphene', () => {
    for (const cell of [squareRibbonCell(7, 1, 0.03), zigzagRibbonCell(5, 1)]) {
      const n = cell.size;
      const coupling = new Float64Array(2 * n * n);
      for (let p = 0; p < n; p++) coupling[2 * (p * n + p)] = -1;
      const lead = new NumericalLead({ cell, mouthSize: n, coupling }, { kSamples: 64 });
      const thr = lead.thresholds;
      for (const p of [1, Math.floor(thr.length / 2) + 1]) {
        const e = 0.5 * (thr[p - 1] + thr[p]);
        const sigma = lead.selfEnergy(e, 0);
        const gamma = new Float64Array(sigma.length);
        for (let i = 0; i < n; i++)
          for (let j = 0; j < n; j++) {
            // i(Σ − Σ†)[i,j] = i(Σ_ij − conj Σ_ji)
            const dr = sigma[2 * (i * n + j)] - sigma[2 * (j * n + i)];
            const di = sigma[2 * (i * n + j) + 1] + sigma[2 * (j * n + i) + 1];
            gamma[2 * (i * n + j)] = -di;
            gamma[2 * (i * n + j) + 1] = dr;
          }
        const open = lead.channels(e);
        expect(open.count).toBeGreaterThan(0);
        const ww = denseMultiply(n, open.count, n, open.columns, conjugateTranspose(n, open.count, open.columns));
        expect(maxDiff(ww, gamma)).toBeLessThan(1e-11);
      }
    }
  });
});

describe('transmission through clean and disordered ribbons with numerical leads', () => {
  it('a clean square ribbon steps through 1, 2, 3, 4 with S†S = 1 (common practice, no source)', () => {
    const dev = ribbonDevice(squareRibbonCell(4, 1), 3);
    const thr = dev.leads[1].lead.thresholds;
    const steps: number[] = [];
    for (let p = 1; p < thr.length && thr[p - 1] < 4; p++) {
      const r = deviceScattering(dev, 0.5 * (thr[p - 1] + thr[p]));
      expect(r.unitarity).toBeLessThan(1e-12);
      expect(Math.abs(r.transmission - r.open[0])).toBeLessThan(1e-12);
      expect(r.reflection).toBeLessThan(1e-12);
      steps.push(r.open[0]);
    }
    expect(steps).toEqual([1, 2, 3, 4]);
  });

  it('a clean zigzag graphene ribbon steps through 1, 3, 5 near the Dirac point (Brey & Fertig, PRB 73, 235411 (2006))', () => {
    const t = 2.7; // a_CC = 0.142 nm, t ≈ 2.7 eV (Castro Neto et al., Rev. Mod. Phys. 81, 109 (2009), from memory)
    const dev = ribbonDevice(zigzagRibbonCell(8, t), 2, undefined, 64);
    const thr = dev.leads[1].lead.thresholds.filter((e) => e > 1e-9 * t);
    const steps: number[] = [];
    // the pieces above E = 0: (0, thr[0]), (thr[0], thr[1]), (thr[1], thr[2])
    for (const [lo, hi] of [
      [0, thr[0]],
      [thr[0], thr[1]],
      [thr[1], thr[2]],
    ]) {
      const r = deviceScattering(dev, 0.5 * (lo + hi));
      expect(r.unitarity).toBeLessThan(1e-11);
      expect(Math.abs(r.transmission - r.open[0])).toBeLessThan(1e-10);
      steps.push(Math.round(r.transmission));
    }
    expect(steps).toEqual([1, 3, 5]);
  });

  it('Landau bands of a wide square lead approach ħω_c(n + ½) with the lattice correction (docs/physics-model.md)', () => {
    // ħω_c = 4πφ·t on the lattice (a²/ℓ² = 2πφ = ħω_c/2t); lowest bulk levels = band minima over k.
    const flux = 0.01;
    const cell = squareRibbonCell(48, 1, flux);
    const hw = 4 * Math.PI * flux;
    // orbit centre y0/a = k/(2πφ) (mid-ribbon near k = 2πφ·24); sample the plateau around it.
    const ks = Array.from({ length: 9 }, (_, i) => 2 * Math.PI * flux * (16 + 2 * i)).flatMap((k) => [k, -k]);
    for (let lvl = 0; lvl < 3; lvl++) {
      const e = Math.min(...ks.map((k) => leadBands(cell, k)[lvl]));
      const corrected = hw * (lvl + 0.5) - (hw * hw * (2 * lvl * lvl + 2 * lvl + 1)) / 32;
      const plain = hw * (lvl + 0.5);
      expect(Math.abs(e - corrected) / e).toBeLessThan(2e-3);
      expect(Math.abs(e - plain) / e).toBeGreaterThan(Math.abs(e - corrected) / e);
    }
  });

  it('edge states carry the velocity sign the Lorentz force gives: for B > 0 the +x movers hug the top edge', () => {
    // q = −e, B along +z, v along +x: F = qv×B points to +y (docs/physics-model.md, "Gauge"); at
    // the top edge the skipping orbits of a counterclockwise cyclotron motion drift along +x.
    const w = 24;
    for (const flux of [0.03, -0.03]) {
      const cell = squareRibbonCell(w, 1, flux);
      const hw = 4 * Math.PI * Math.abs(flux);
      const level = (n: number) => hw * (n + 0.5) - (hw * hw * (2 * n * n + 2 * n + 1)) / 32;
      const modes = realModes(cell, 0.5 * (level(1) + level(2)));
      const movers = modes.propagating.filter((p) => p.velocity > 0);
      expect(movers.length).toBe(2); // two Landau levels below E
      for (const p of movers) {
        let y = 0;
        for (let r = 0; r < w; r++) y += r * (p.vector[2 * r] ** 2 + p.vector[2 * r + 1] ** 2);
        if (flux > 0) expect(y).toBeGreaterThan(0.75 * (w - 1));
        else expect(y).toBeLessThan(0.25 * (w - 1));
      }
    }
  });

  it('at high field the two-terminal transmission equals the number of Landau levels below E, even with disorder', () => {
    const flux = 0.03;
    const hw = 4 * Math.PI * flux;
    const level = (n: number) => hw * (n + 0.5) - (hw * hw * (2 * n * n + 2 * n + 1)) / 32;
    const rnd = random(11);
    const pot = Array.from({ length: 6 * 16 }, () => 0.2 * (rnd() - 0.5));
    const clean = ribbonDevice(squareRibbonCell(16, 1, flux), 6, undefined, 64);
    const dirty = ribbonDevice(squareRibbonCell(16, 1, flux), 6, (c, s) => pot[c * 16 + s], 64);
    for (const [e, count] of [
      [0.5 * (level(0) + level(1)), 1],
      [0.5 * (level(1) + level(2)), 2],
    ]) {
      const r = deviceScattering(clean, e);
      expect(r.open).toEqual([count, count]);
      expect(r.unitarity).toBeLessThan(1e-11);
      expect(Math.abs(r.transmission - count)).toBeLessThan(1e-10);
      // Disorder of ±0.1t: backscattering between edge states W ≈ 7ℓ apart is exponentially
      // small but not zero (seen: 1e-5 at the second plateau).
      const d = deviceScattering(dirty, e);
      expect(d.unitarity).toBeLessThan(1e-11);
      expect(Math.abs(d.transmission - count)).toBeLessThan(1e-4);
    }
  });

  it('Onsager: G(B) = G(−B) for two terminals through a disordered piece, while T(B) ≠ T(0)', () => {
    const rnd = random(5);
    const pot = Array.from({ length: 4 * 6 }, () => 1.5 * (rnd() - 0.5));
    const at = (flux: number) =>
      deviceScattering(
        ribbonDevice(squareRibbonCell(6, 1, flux), 4, (c, s) => pot[c * 6 + s], 64),
        1.3,
      );
    const plus = at(0.02);
    const minus = at(-0.02);
    const zero = at(0);
    expect(plus.unitarity).toBeLessThan(1e-11);
    expect(Math.abs(plus.transmission - minus.transmission)).toBeLessThan(1e-10);
    expect(Math.abs(plus.transmission - zero.transmission)).toBeGreaterThan(1e-3);
    // current conservation: R + T = N for the left lead
    expect(Math.abs(plus.reflection + plus.transmission - plus.open[0])).toBeLessThan(1e-11);
  });
});
