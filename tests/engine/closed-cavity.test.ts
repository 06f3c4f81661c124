import { describe, expect, it } from 'vitest';
import { closedCavityEigenvalues } from '../../shared/engine/closed-cavity';
import { buildLattice } from '../../shared/engine/lattice';
import { buildCavitySystem } from '../../shared/engine/effective-hamiltonian';
import { rasteriseShape } from '../../shared/model/geometry';
import { cyclotronEnergy } from '../../shared/units/constants';
import type { CavityModelInput } from '../../shared/model/cavity-model';

describe('closed-cavity eigenvalues', () => {
  it('finds the rectangle levels nearest a target, with multiplicity', () => {
    // E_nm = 2t(2 − cos(nπ/(Nx+1)) − cos(mπ/(Ny+1))) (contract, exact). A square has
    // E_nm = E_mn: pairs of exactly degenerate levels that one Krylov space cannot both hold.
    const nx = 30,
      ny = 30,
      t = 1;
    const mask = rasteriseShape({ kind: 'rectangle', x0: 0, y0: 0, width: nx, height: ny }, nx, ny, 1);
    const lattice = buildLattice(mask, nx, ny, t, 0);
    const exact: number[] = [];
    for (let n = 1; n <= nx; n++)
      for (let m = 1; m <= ny; m++) exact.push(2 * t * (2 - Math.cos((n * Math.PI) / (nx + 1)) - Math.cos((m * Math.PI) / (ny + 1))));
    const target = 0.731 * t;
    const count = 9;
    const nearest = [...exact]
      .sort((a, b) => Math.abs(a - target) - Math.abs(b - target))
      .slice(0, count)
      .sort((a, b) => a - b);
    const res = closedCavityEigenvalues(lattice, { target, count, vectors: true });
    expect(res.energies).toHaveLength(count);
    res.energies.forEach((e, k) => expect(Math.abs(e - nearest[k])).toBeLessThan(1e-9 * t));
    res.residuals.forEach((r) => expect(r).toBeLessThan(1e-7 * t));
    // Eigenvectors of distinct or degenerate levels come out orthonormal.
    const v = res.vectors!;
    for (let a = 0; a < count; a++)
      for (let b = 0; b <= a; b++) {
        let re = 0,
          im = 0;
        for (let k = 0; k < v[a].length; k += 2) {
          re += v[a][k] * v[b][k] + v[a][k + 1] * v[b][k + 1];
          im += v[a][k] * v[b][k + 1] - v[a][k + 1] * v[b][k];
        }
        expect(Math.hypot(re - (a === b ? 1 : 0), im)).toBeLessThan(1e-8);
      }
  });

  it('approaches the continuum disk levels t·(j a/R)² as a/R falls', () => {
    // Zeros of J_m (Abramowitz & Stegun, Table 9.5): j_{0,1}, j_{1,1} (twice: m = ±1), j_{2,1} (twice), j_{0,2}.
    const zeros = [2.404825557695773, 3.831705970207512, 3.831705970207512, 5.135622301840683, 5.135622301840683, 5.520078110286311];
    const worst: number[] = [];
    for (const r of [10, 20, 30]) {
      const size = 2 * r + 3;
      const doc: CavityModelInput = {
        name: 'disk',
        spacing: 1,
        material: 'gaas',
        grid: { nx: size, ny: size },
        shape: { kind: 'disk', cx: r + 1, cy: r + 1, radius: r },
      };
      const sys = buildCavitySystem(doc);
      const t = sys.hopping;
      // Hard wall at R = (r + ½)a (contract, "Closed-cavity limits").
      const R = r + 0.5;
      const continuum = zeros.map((j) => (t * j * j) / (R * R));
      const res = closedCavityEigenvalues(sys.lattice, { target: 0, count: 6 });
      const errors = res.energies.map((e, k) => e / continuum[k] - 1);
      worst.push(Math.max(...errors.map(Math.abs)));
      if (r === 30) {
        // The contract reports about 1 % high at r = 30.
        errors.forEach((e) => expect(e).toBeGreaterThan(0));
        expect(worst[worst.length - 1]).toBeLessThan(0.02);
      }
    }
    expect(worst[1]).toBeLessThan(worst[0]);
    expect(worst[2]).toBeLessThan(worst[1]);
  });

  it('gives Landau levels (n + ½)ħω_c in a large square in a field', () => {
    // ħω_c = ħeB/m* (Ashcroft & Mermin ch. 14; constants CODATA 2018): 3.456 meV at 2 T in GaAs.
    // 100 × 100 sites of 2 nm: side 200 nm ≈ 11 magnetic lengths; φ = 0.0019 per plaquette.
    const field = 2;
    const doc: CavityModelInput = {
      name: 'landau',
      spacing: 2,
      material: 'gaas',
      grid: { nx: 100, ny: 100 },
      shape: { kind: 'rectangle', x0: 0, y0: 0, width: 200, height: 200 },
      field,
    };
    const sys = buildCavitySystem(doc);
    const hw = cyclotronEnergy(field, 0.067);
    expect(hw).toBeCloseTo(3.4559, 3);
    for (const n of [0, 1, 2]) {
      const level = (n + 0.5) * hw;
      // Aim just below the level: a target on an eigenvalue would make H − σ singular.
      const res = closedCavityEigenvalues(sys.lattice, { target: level * 0.995, count: 4 });
      // Bulk states of one level, degenerate to exponential accuracy; lattice shifts < 1 %.
      res.energies.forEach((e) => expect(Math.abs(e / level - 1)).toBeLessThan(0.01));
    }
  });

  it('copes with a target sitting exactly on an eigenvalue', () => {
    // Chain of 5 sites: E_n = 2t(2 − cos(nπ/6) − cos(π/2)) (contract rectangle formula, Ny = 1).
    const lattice = buildLattice(rasteriseShape({ kind: 'rectangle', x0: 0, y0: 0, width: 5, height: 1 }, 5, 1, 1), 5, 1, 1, 0);
    const e2 = 2 * (2 - Math.cos((2 * Math.PI) / 6));
    const res = closedCavityEigenvalues(lattice, { target: e2, count: 1 });
    expect(Math.abs(res.energies[0] - e2)).toBeLessThan(1e-9);
  });

  it('rejects bad options', () => {
    const lattice = buildLattice(rasteriseShape({ kind: 'rectangle', x0: 0, y0: 0, width: 4, height: 4 }, 4, 4, 1), 4, 4, 1, 0);
    expect(() => closedCavityEigenvalues(lattice, { target: NaN, count: 2 })).toThrow(/target/);
    expect(() => closedCavityEigenvalues(lattice, { target: 1, count: 0 })).toThrow(/count/);
    // More than the number of sites: clipped to all 16.
    expect(closedCavityEigenvalues(lattice, { target: 1, count: 50 }).energies).toHaveLength(16);
  });
});
