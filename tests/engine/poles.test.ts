import { describe, expect, it } from 'vitest';
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { findPoles } from '../../shared/engine/poles';
import { WorkCancelled, type Complex, type NonlinearOperator, type SheetFlags } from '../../shared/engine/operator';
import type { PoleSearchResult } from '../../shared/engine/pole-types';
import { HBAR_MEV_PS } from '../../shared/units/constants';
import { DenseLuPlan, StripWithLeads, transmission } from './poles-fixtures';

const t = 10; // meV: not 1, so a tolerance that forgot the energy scale shows up

/** A chain of nx sites (one row) with tunnel barriers of height vb on sites 1..thick and nx−1−thick..nx−2. */
function doubleBarrier(nx: number, vb: number, thick = 1): StripWithLeads {
  return new StripWithLeads({ nx, ny: 1, t, potential: (i) => ((i >= 1 && i <= thick) || (i >= nx - 1 - thick && i <= nx - 2) ? vb : 0) });
}

/** The certificate invariant every search must satisfy: the count equals the poles found on every piece. */
function expectCertified(r: PoleSearchResult): void {
  for (const p of r.certificate.pieces) {
    expect(p.windingNumber, `piece [${p.emin}, ${p.emax}] ${p.note ?? ''}`).toBe(p.polesFound);
    expect(p.certified).toBe(true);
    expect(r.poles.filter((q) => r.certificate.pieces[q.piece] === p).length).toBe(p.polesFound);
  }
  expect(r.certificate.certified).toBe(true);
}

/**
 * Independent cross-check (common practice, no source): iterate z ← the eigenvalue
 * of the dense H_eff(z) = H + Σ(z) nearest z on or below the real axis, from a
 * closed-cavity eigenvalue, to self-consistency. ml-matrix only does real matrices,
 * so H_eff = A + iB is embedded as [[A, −B], [B, A]], whose spectrum is {λ} ∪ {λ̄}.
 */
function selfConsistentPole(op: StripWithLeads, start: number, sheet: SheetFlags): Complex | null {
  const n = op.n;
  let z: Complex = { re: start, im: 0 };
  for (let it = 0; it < 300; it++) {
    const T = op.denseT(z, sheet);
    // H_eff = z − T
    const M = new Matrix(2 * n, 2 * n);
    for (let r = 0; r < n; r++)
      for (let c = 0; c < n; c++) {
        const a = (r === c ? z.re : 0) - T[2 * (r * n + c)];
        const b = (r === c ? z.im : 0) - T[2 * (r * n + c) + 1];
        M.set(r, c, a);
        M.set(r + n, c + n, a);
        M.set(r, c + n, -b);
        M.set(r + n, c, b);
      }
    const e = new EigenvalueDecomposition(M);
    let best: Complex | null = null;
    for (let k = 0; k < 2 * n; k++) {
      const cand = { re: e.realEigenvalues[k], im: e.imaginaryEigenvalues[k] };
      if (cand.im > 1e-12 * t) continue;
      if (!best || Math.hypot(cand.re - z.re, cand.im - z.im) < Math.hypot(best.re - z.re, best.im - z.im)) best = cand;
    }
    if (!best) return null;
    const step = Math.hypot(best.re - z.re, best.im - z.im);
    z = best;
    if (step < 1e-13 * t) return z;
  }
  return null;
}

function closedEigenvalues(op: StripWithLeads): number[] {
  const n = op.n;
  const H = new Matrix(n, n);
  for (let r = 0; r < n; r++) for (let c = 0; c < n; c++) H.set(r, c, op.H[r * n + c]);
  return new EigenvalueDecomposition(H).realEigenvalues.slice().sort((a, b) => a - b);
}

describe('findPoles on a double-barrier chain', () => {
  const nx = 12;
  const op = doubleBarrier(nx, 3 * t);
  const window = { emin: 2.05 * t, emax: 5.95 * t, gammaMax: 0.25 * t };
  const result = findPoles(op, window, { plan: new DenseLuPlan(op) });

  it('certifies the count on every piece and finds the well levels', () => {
    expectCertified(result);
    expect(result.poles.length).toBeGreaterThanOrEqual(6);
    for (const p of result.poles) {
      expect(p.energy).toBeGreaterThan(window.emin);
      expect(p.energy).toBeLessThan(window.emax);
      expect(p.width).toBeGreaterThan(0);
      expect(p.width).toBeLessThanOrEqual(window.gammaMax);
      expect(p.residual).toBeLessThan(1e-12);
      expect(p.bound).toBe(false);
    }
  });

  it('agrees with a self-consistent dense eigenvalue iteration (ml-matrix)', () => {
    const closed = closedEigenvalues(op);
    let checked = 0;
    for (const p of result.poles) {
      if (p.energy < 2.5 * t || p.energy > 5.5 * t) continue; // the iteration stalls near the band edges
      const start = closed.reduce((b, e) => (Math.abs(e - p.energy) < Math.abs(b - p.energy) ? e : b), closed[0]);
      const z = selfConsistentPole(op, start, op.sheetAt(p.energy));
      expect(z).not.toBeNull();
      expect(Math.abs(z!.re - p.energy)).toBeLessThan(1e-9 * t);
      expect(Math.abs(-2 * z!.im - p.width)).toBeLessThan(1e-9 * t);
      checked++;
    }
    expect(checked).toBeGreaterThanOrEqual(3);
  });

  it('reports partial widths that add up to Γ, equal by the mirror symmetry', () => {
    for (const p of result.poles) {
      const sum = p.partialWidths.reduce((a, b) => a + b, 0);
      expect(Math.abs(sum - p.width)).toBeLessThan(1e-10 * p.width + 1e-13 * t);
      expect(Math.abs(p.partialWidths[0] - p.partialWidths[1])).toBeLessThan(1e-8 * p.width);
    }
  });

  it('derives lifetime and quality factor from Γ (ħ from CODATA 2018)', () => {
    for (const p of result.poles) {
      expect(p.lifetimePs!).toBeCloseTo(HBAR_MEV_PS / p.width, 12);
      expect(Math.abs(p.quality! - p.energy / p.width)).toBeLessThan(1e-12 * Math.abs(p.quality!));
      expect(p.sheet).toEqual([[true], [true]]);
      expect(p.nearThreshold).toBeNull();
    }
  });

  it('normalises each mode and makes its largest site real and positive', () => {
    for (const p of result.poles) {
      let s = 0;
      let big = 0;
      let at = -1;
      for (let k = 0; k < op.n; k++) {
        const a = Math.hypot(p.mode[2 * k], p.mode[2 * k + 1]);
        s += a * a;
        if (a > big * (1 + 1e-9)) {
          big = a;
          at = k;
        }
      }
      expect(Math.abs(s - 1)).toBeLessThan(1e-12);
      expect(p.mode[2 * at]).toBeGreaterThan(0);
      expect(Math.abs(p.mode[2 * at + 1])).toBeLessThan(1e-15);
    }
  });
});

describe('an isolated narrow resonance', () => {
  // two-site barriers of 6t around a six-site well; its second level lies near 2.7t
  const op = doubleBarrier(12, 6 * t, 2);
  const result = findPoles(op, { emin: 2.5 * t, emax: 2.9 * t, gammaMax: 0.01 * t }, { plan: new DenseLuPlan(op) });

  it('has Γ equal to the FWHM of its Fisher–Lee transmission peak within 1%', () => {
    expectCertified(result);
    expect(result.poles.length).toBeGreaterThanOrEqual(1);
    const p = result.poles[0];
    expect(p.width).toBeLessThan(1e-3 * t);
    // Breit–Wigner: T(E) ≈ Γ_LΓ_R/((E − E_n)² + Γ²/4) near an isolated pole (Datta,
    // "Electronic Transport in Mesoscopic Systems", 1995, §6.2): its FWHM is Γ.
    const T = (E: number): number => transmission(op, E);
    let a = p.energy - p.width;
    let b = p.energy + p.width;
    for (let k = 0; k < 80; k++) {
      const m1 = a + (b - a) / 3;
      const m2 = b - (b - a) / 3;
      if (T(m1) < T(m2)) a = m1;
      else b = m2;
    }
    const peakE = 0.5 * (a + b);
    const half = 0.5 * T(peakE);
    const edge = (lo: number, hi: number): number => {
      // bisection for T = half between lo (T < half) and hi (T > half), either order
      for (let k = 0; k < 80; k++) {
        const m = 0.5 * (lo + hi);
        if (T(m) < half) lo = m;
        else hi = m;
      }
      return 0.5 * (lo + hi);
    };
    const fwhm = edge(peakE + 5 * p.width, peakE) - edge(peakE - 5 * p.width, peakE);
    expect(Math.abs(fwhm - p.width)).toBeLessThan(0.01 * p.width);
  });

  it('has a Petermann factor of 1 to within its small width', () => {
    const p = result.poles[0];
    expect(p.petermann).toBeGreaterThanOrEqual(1 - 1e-12);
    expect(p.petermann - 1).toBeLessThan(1e-3);
  });
});

describe('weak coupling', () => {
  it('moves a pole onto the closed-well eigenvalue with Γ → 0 as the barriers grow', () => {
    const nx = 9;
    const M = nx - 4; // well sites between the two barrier sites
    // Closed well of M sites with hard walls, contract "Closed-cavity limits":
    // E_n = 2t(2 − cos(nπ/(M+1)) − cos(π/2)) for one row; n = 2 here.
    const target = 2 * t * (2 - Math.cos((2 * Math.PI) / (M + 1)));
    const offsets: number[] = [];
    const widths: number[] = [];
    for (const vb of [3 * t, 10 * t, 30 * t]) {
      const op = doubleBarrier(nx, vb);
      const r = findPoles(op, { emin: target - 0.3 * t, emax: target + 0.3 * t, gammaMax: 0.2 * t }, { plan: new DenseLuPlan(op) });
      expectCertified(r);
      expect(r.poles.length).toBe(1);
      offsets.push(Math.abs(r.poles[0].energy - target));
      widths.push(r.poles[0].width);
    }
    for (let k = 1; k < offsets.length; k++) {
      // second-order perturbation theory (common practice, no source): the shift goes as t²/V_b,
      // the width as the squared tunnel coupling (t²/V_b)², so ratios ≈ 0.3 and ≈ 0.1 per step
      expect(offsets[k]).toBeLessThan(0.5 * offsets[k - 1]);
      expect(widths[k]).toBeLessThan(0.2 * widths[k - 1]);
    }
    expect(offsets[2]).toBeLessThan(0.02 * t);
    expect(widths[2]).toBeLessThan(0.05 * widths[0]);
  });
});

describe('thresholds and bound states', () => {
  it('splits a window that straddles a channel threshold and keeps each piece on its own sheet', () => {
    // Two rows: ε_1 = 3t, ε_2 = 5t, so the second channel opens at ε_2 − 2t = 3t.
    const op = new StripWithLeads({ nx: 6, ny: 2, t, potential: (i) => (i === 0 || i === 5 ? 0.8 * t : 0) });
    expect(op.thresholds.some((e) => Math.abs(e - 3 * t) < 1e-12 * t)).toBe(true);
    const r = findPoles(op, { emin: 2.2 * t, emax: 3.8 * t, gammaMax: 0.3 * t }, { plan: new DenseLuPlan(op) });
    const pieces = r.certificate.pieces;
    expect(pieces.length).toBeGreaterThanOrEqual(2);
    expect(pieces.some((p) => p.emax <= 3 * t)).toBe(true);
    expect(pieces.some((p) => p.emin >= 3 * t)).toBe(true);
    for (const p of pieces) expect(p.emax <= 3 * t || p.emin >= 3 * t).toBe(true);
    expectCertified(r);
    expect(r.poles.length).toBeGreaterThanOrEqual(1);
    for (const p of r.poles) {
      expect(p.sheet[0][1]).toBe(p.energy > 3 * t);
      expect(Math.abs(p.partialWidths[0] + p.partialWidths[1] - p.width)).toBeLessThan(1e-10 * p.width + 1e-13 * t);
    }
    expect(r.certificate.summary).toMatch(/threshold/);
  });

  it('flags a bound state below the band bottom, with no lifetime or quality factor', () => {
    // an attractive site in the middle of a chain binds one state below the lead band [2t, 6t]
    const nx = 7;
    const op = new StripWithLeads({ nx, ny: 1, t, potential: (i) => (i === 3 ? -3 * t : 0) });
    const r = findPoles(op, { emin: -2 * t, emax: 1.99 * t, gammaMax: 0.1 * t }, { plan: new DenseLuPlan(op) });
    expectCertified(r);
    expect(r.poles.length).toBe(1);
    const p = r.poles[0];
    expect(p.bound).toBe(true);
    expect(p.width).toBe(0);
    expect(p.lifetimePs).toBeNull();
    expect(p.quality).toBeNull();
    // cross-check: self-consistent iteration on the real axis (all channels closed)
    const z = selfConsistentPole(op, -1 * t, op.sheetAt(p.energy));
    expect(Math.abs(z!.re - p.energy)).toBeLessThan(1e-9 * t);
    // cavity plus leads is one infinite chain (onsite ε0 = 4t) with one site at ε0 − V; it binds
    // where V·G_00(E) = 1, G_00 = 1/sqrt((E − ε0)² − 4t²): E = ε0 − sqrt(V² + 4t²) (Economou,
    // "Green's Functions in Quantum Physics", ch. 5; from memory)
    expect(Math.abs(p.energy - (4 * t - Math.sqrt(9 * t * t + 4 * t * t)))).toBeLessThan(1e-9 * t);
  });
});

describe('control and errors', () => {
  const op = doubleBarrier(8, 0.5 * t);
  const window = { emin: 2.5 * t, emax: 5.5 * t, gammaMax: 0.1 * t };

  it('reports monotone progress ending at 1', () => {
    const seen: number[] = [];
    findPoles(op, window, { plan: new DenseLuPlan(op), onProgress: (_s, f) => seen.push(f) });
    expect(seen.length).toBeGreaterThan(2);
    for (let k = 1; k < seen.length; k++) expect(seen[k]).toBeGreaterThanOrEqual(seen[k - 1]);
    expect(seen[seen.length - 1]).toBe(1);
  });

  it('throws WorkCancelled when the signal is aborted mid-search', () => {
    const ctl = new AbortController();
    let calls = 0;
    const plan = new DenseLuPlan(op);
    const counting = { factor: (v: Float64Array) => (++calls === 20 && ctl.abort(), plan.factor(v)) };
    expect(() => findPoles(op, window, { plan: counting, signal: ctl.signal })).toThrow(WorkCancelled);
    expect(calls).toBeLessThan(30);
  });

  it('names the bad field of a bad window or option', () => {
    const plan = new DenseLuPlan(op);
    expect(() => findPoles(op, { emin: 3, emax: 2, gammaMax: 1 }, { plan })).toThrow(/window\.emax/);
    expect(() => findPoles(op, { emin: 1, emax: 2, gammaMax: 0 }, { plan })).toThrow(/window\.gammaMax/);
    expect(() => findPoles(op, { emin: NaN, emax: 2, gammaMax: 1 }, { plan })).toThrow(/window\.emin/);
    expect(() => findPoles(op, window, { plan, probes: 0 })).toThrow(/options\.probes/);
    expect(() => findPoles(op, window, { plan, tolerance: -1 })).toThrow(/options\.tolerance/);
  });

  it('is reproducible for a fixed seed', () => {
    const a = findPoles(op, window, { plan: new DenseLuPlan(op), seed: 7 });
    const b = findPoles(op, window, { plan: new DenseLuPlan(op), seed: 7 });
    expect(a.poles.length).toBe(b.poles.length);
    a.poles.forEach((p, k) => expect(Math.abs(p.energy - b.poles[k].energy)).toBeLessThanOrEqual(1e-14 * t));
    expect(a.stats.factorisations).toBe(b.stats.factorisations);
  });
});

/** Two copies of one operator side by side (block-diagonal T): every pole is exactly doubly degenerate. */
class TwoCopies implements NonlinearOperator {
  readonly n: number;
  readonly colPtr: Int32Array;
  readonly rowIdx: Int32Array;
  readonly sites: { i: Int32Array; j: Int32Array };
  readonly thresholds: readonly number[];
  readonly leadCount: number;
  readonly hopping: number;
  constructor(private readonly a: NonlinearOperator) {
    const n = a.n;
    const nnz = a.colPtr[n];
    this.n = 2 * n;
    this.colPtr = new Int32Array(2 * n + 1);
    this.rowIdx = new Int32Array(2 * nnz);
    for (let c = 0; c <= n; c++) this.colPtr[c] = a.colPtr[c];
    for (let c = 1; c <= n; c++) this.colPtr[n + c] = nnz + a.colPtr[c];
    for (let p = 0; p < nnz; p++) {
      this.rowIdx[p] = a.rowIdx[p];
      this.rowIdx[nnz + p] = n + a.rowIdx[p];
    }
    // the copy sits one lattice column to the right of the original's last column
    const shift = Math.max(...a.sites.i) + 2;
    this.sites = {
      i: Int32Array.from([...a.sites.i, ...Array.from(a.sites.i, (i) => i + shift)]),
      j: Int32Array.from([...a.sites.j, ...a.sites.j]),
    };
    this.thresholds = a.thresholds;
    this.leadCount = 2 * a.leadCount;
    this.hopping = a.hopping;
  }
  sheetAt(e: number): SheetFlags {
    const s = this.a.sheetAt(e);
    return [...s, ...s.map((r) => r.slice())];
  }
  private both(write: (z: Complex, s: SheetFlags, out: Float64Array) => void, z: Complex, s: SheetFlags, out: Float64Array): void {
    const nnz = this.a.colPtr[this.a.n];
    const half = new Float64Array(2 * nnz);
    write(z, s.slice(0, this.a.leadCount), half);
    out.set(half, 0);
    out.set(half, 2 * nnz);
  }
  assemble(z: Complex, s: SheetFlags, out: Float64Array): void {
    this.both((zz, ss, o) => this.a.assemble(zz, ss, o), z, s, out);
  }
  assembleDerivative(z: Complex, s: SheetFlags, out: Float64Array): void {
    this.both((zz, ss, o) => this.a.assembleDerivative(zz, ss, o), z, s, out);
  }
  leadWidthForm(z: Complex, s: SheetFlags, lead: number, psi: Float64Array): number {
    const n = this.a.n;
    const copy = lead >= this.a.leadCount ? 1 : 0;
    return this.a.leadWidthForm(z, s.slice(0, this.a.leadCount), lead - copy * this.a.leadCount, psi.subarray(2 * n * copy, 2 * n * (copy + 1)));
  }
}

describe('degenerate poles', () => {
  const single = doubleBarrier(9, 3 * t);
  const op = new TwoCopies(single);
  const window = { emin: 2.5 * t, emax: 5.5 * t, gammaMax: 0.25 * t };
  const reference = findPoles(single, window, { plan: new DenseLuPlan(single) });

  it('lists an exactly double pole twice, with independent modes, as the count demands', () => {
    const r = findPoles(op, window, { plan: new DenseLuPlan(op) });
    expectCertified(r);
    expect(reference.poles.length).toBeGreaterThanOrEqual(2);
    expect(r.poles.length).toBe(2 * reference.poles.length);
    reference.poles.forEach((p, k) => {
      const pair = [r.poles[2 * k], r.poles[2 * k + 1]];
      for (const q of pair) {
        expect(Math.abs(q.energy - p.energy)).toBeLessThan(1e-10 * t);
        expect(Math.abs(q.width - p.width)).toBeLessThan(1e-10 * t);
      }
      // |ψ1ᴴψ2| < 1: two directions in the two-dimensional null space
      let re = 0;
      let im = 0;
      for (let i = 0; i < op.n; i++) {
        const [a, b] = [pair[0].mode, pair[1].mode];
        re += a[2 * i] * b[2 * i] + a[2 * i + 1] * b[2 * i + 1];
        im += a[2 * i] * b[2 * i + 1] - a[2 * i + 1] * b[2 * i];
      }
      expect(Math.hypot(re, im)).toBeLessThan(0.95);
    });
  });

  it('never claims a piece it could not confirm, even with a single probe vector', () => {
    const r = findPoles(op, window, { plan: new DenseLuPlan(op), probes: 1 });
    for (const p of r.certificate.pieces) {
      expect(p.certified).toBe(p.windingNumber !== null && p.windingNumber === p.polesFound);
      if (!p.certified) expect(p.note).toBeTruthy();
    }
    expect(r.certificate.certified).toBe(r.certificate.pieces.every((p) => p.certified));
    // whatever it lists is a true pole of the single copy
    for (const q of r.poles) {
      expect(reference.poles.some((p) => Math.abs(p.energy - q.energy) < 1e-9 * t && Math.abs(p.width - q.width) < 1e-9 * t)).toBe(true);
    }
  });
});
