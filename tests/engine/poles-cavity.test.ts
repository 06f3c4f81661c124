import { describe, expect, it } from 'vitest';
import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian';
import { findPoles } from '../../shared/engine/poles';
import type { PoleSearchResult } from '../../shared/engine/pole-types';
import type { CavityModelInput } from '../../shared/model/cavity-model';
import { DenseLuPlan } from './poles-fixtures';

const spacing = 5;
const material = { effectiveMass: 0.067 };

/** A 14×10 stadium-like cavity (rectangle minus a disk) with two narrow leads. */
function cavity(field: number, leadWidth: number): CavityModelInput {
  return {
    name: 'dot',
    spacing,
    material,
    grid: { nx: 14, ny: 10 },
    shape: {
      kind: 'subtract',
      from: { kind: 'rectangle', x0: 0, y0: 0, width: 70, height: 50 },
      remove: [{ kind: 'disk', cx: 45, cy: 30, radius: 7 }],
    },
    field,
    leads: [
      { side: 'left', start: 2, width: leadWidth },
      { side: 'right', start: 5, width: leadWidth },
    ],
  };
}

function expectCertified(r: PoleSearchResult): void {
  for (const p of r.certificate.pieces) {
    expect(p.windingNumber, `piece [${p.emin}, ${p.emax}] ${p.note ?? ''}`).toBe(p.polesFound);
  }
  expect(r.certificate.certified).toBe(true);
}

describe('findPoles on 2D cavities (EffectiveHamiltonian)', () => {
  it('finds the same poles with the sparse LU (default plan) as with a dense LU', () => {
    const op = new EffectiveHamiltonian(buildCavitySystem(cavity(0, 2)));
    const t = op.hopping;
    const window = { emin: 1.1 * t, emax: 2.0 * t, gammaMax: 0.08 * t }; // above the first channel opening at t
    const sparse = findPoles(op, window);
    const dense = findPoles(op, window, { plan: new DenseLuPlan(op) });
    expectCertified(sparse);
    expectCertified(dense);
    expect(sparse.poles.length).toBeGreaterThanOrEqual(3);
    expect(sparse.poles.length).toBe(dense.poles.length);
    sparse.poles.forEach((p, k) => {
      expect(Math.abs(p.energy - dense.poles[k].energy)).toBeLessThan(1e-10 * t);
      expect(Math.abs(p.width - dense.poles[k].width)).toBeLessThan(1e-10 * t);
      expect(p.residual).toBeLessThan(1e-12);
      // B = 0: T is complex symmetric, so ψ_L = ψ_R and K ≥ 1 exactly by Cauchy–Schwarz
      expect(p.petermann).toBeGreaterThanOrEqual(1 - 1e-10);
      const sum = p.partialWidths.reduce((a, b) => a + b, 0);
      expect(Math.abs(sum - p.width)).toBeLessThan(1e-9 * p.width + 1e-13 * t);
    });
  });

  it('splits at every channel threshold of wide leads and certifies each piece (B ≠ 0)', () => {
    const op = new EffectiveHamiltonian(buildCavitySystem(cavity(1.5, 4)));
    const t = op.hopping;
    const window = { emin: 0.3 * t, emax: 1.5 * t, gammaMax: 0.1 * t };
    const inside = op.thresholds.filter((e) => e > window.emin && e < window.emax);
    expect(inside.length).toBeGreaterThanOrEqual(2);
    const r = findPoles(op, window);
    expectCertified(r);
    // no contour crosses a threshold
    for (const p of r.certificate.pieces) for (const e of inside) expect(e <= p.emin || e >= p.emax).toBe(true);
    expect(r.certificate.pieces.length).toBeGreaterThanOrEqual(inside.length + 1);
    expect(r.poles.length).toBeGreaterThanOrEqual(3);
    for (const p of r.poles) {
      expect(p.residual).toBeLessThan(1e-12);
      expect(p.sheet).toEqual(op.sheetAt(p.energy));
      const sum = p.partialWidths.reduce((a, b) => a + b, 0);
      expect(Math.abs(sum - p.width)).toBeLessThan(1e-9 * p.width + 1e-13 * t);
      expect(p.petermann).toBeGreaterThanOrEqual(1 - 1e-10);
    }
  });
});
