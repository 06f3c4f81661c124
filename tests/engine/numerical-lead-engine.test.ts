import { describe, expect, it } from 'vitest';
import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian';
import { findPoles } from '../../shared/engine/poles';
import { squareLatticeLead } from '../../shared/engine/numerical-lead-square';
import { withNumericalLeads } from '../../shared/engine/numerical-lead-system';
import { transmissionAt } from '../../shared/engine/transmission';
import type { CavityModelInput } from '../../shared/model/cavity-model';
import type { LeadSide } from '../../shared/model/cavity-model';
import { complexSvd } from '../../shared/engine/complex-svd';
import { DeviceOperator, ribbonDevice, zigzagRibbonCell } from './numerical-lead-systems';
import { DenseLuPlan } from './poles-fixtures';

const spacing = 5;
const material = { effectiveMass: 0.067 };

/** The cavity of tests/engine/poles-cavity.test.ts: a 14×10 rectangle minus a disk, two leads. */
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

describe('numerical leads in the engine (square lattice: same results as the closed form)', () => {
  it('the pole search finds the same certified poles with either kind of lead (B ≠ 0, thresholds in the window)', () => {
    const system = buildCavitySystem(cavity(1.5, 4));
    const closed = new EffectiveHamiltonian(system);
    const numerical = new EffectiveHamiltonian(withNumericalLeads(system));
    const t = closed.hopping;
    expect(numerical.thresholds.length).toBe(closed.thresholds.length);
    numerical.thresholds.forEach((e, k) => expect(Math.abs(e - closed.thresholds[k])).toBeLessThan(1e-12 * t));
    const window = { emin: 0.3 * t, emax: 1.5 * t, gammaMax: 0.1 * t };
    const a = findPoles(closed, window);
    const b = findPoles(numerical, window);
    expect(a.certificate.certified).toBe(true);
    expect(b.certificate.certified).toBe(true);
    expect(b.poles.length).toBe(a.poles.length);
    expect(a.poles.length).toBeGreaterThanOrEqual(3);
    a.poles.forEach((p, k) => {
      expect(Math.abs(p.energy - b.poles[k].energy)).toBeLessThan(1e-10 * t);
      expect(Math.abs(p.width - b.poles[k].width)).toBeLessThan(1e-10 * t);
      p.partialWidths.forEach((g, l) => expect(Math.abs(g - b.poles[k].partialWidths[l])).toBeLessThan(1e-10 * t));
    });
  });

  it('transmission, reflection and open channels agree at energies across several thresholds', () => {
    const system = buildCavitySystem(cavity(0.8, 4));
    const closed = new EffectiveHamiltonian(system);
    const numerical = new EffectiveHamiltonian(withNumericalLeads(system));
    const t = closed.hopping;
    for (const f of [0.13, 0.5, 0.9, 1.4, 2.2, 3.1]) {
      const a = transmissionAt(closed, f * t);
      const b = transmissionAt(numerical, f * t);
      expect(b.channels).toEqual(a.channels);
      expect(Math.abs(b.transmission[0][1] - a.transmission[0][1])).toBeLessThan(1e-10);
      expect(Math.abs(b.reflection[0] - a.reflection[0])).toBeLessThan(1e-10);
      expect(b.unitarityResidual).toBeLessThan(1e-10);
    }
  });
});

describe('a field in the leads (numerical-lead-square.ts)', () => {
  /**
   * Bond phases of a small patch: a 6×5 cavity in the Landau gauge plus two cells of a lead on
   * the given side; returns the flux (phase sum counterclockwise, over 2π) of every plaquette.
   */
  function plaquetteFluxes(side: LeadSide, flux: number, fieldInLead: boolean): number[] {
    const nx = 6;
    const ny = 5;
    const t = 1;
    const mouthI = side === 'left' ? [0, 0, 0] : side === 'right' ? [nx - 1, nx - 1, nx - 1] : [1, 2, 3];
    const mouthJ = side === 'bottom' ? [0, 0, 0] : side === 'top' ? [ny - 1, ny - 1, ny - 1] : [1, 2, 3];
    const spec = squareLatticeLead({ side, mouthI: Int32Array.from(mouthI), mouthJ: Int32Array.from(mouthJ), hopping: t, offset: 0, flux, fieldInLead });
    const [dx, dy] = { left: [-1, 0], right: [1, 0], bottom: [0, -1], top: [0, 1] }[side];
    // phase of the hop s → s′ (H[s′, s] = −t·e^{iθ}); sites keyed "i,j"
    const phase = new Map<string, number>();
    const bond = (a: string, b: string, theta: number) => {
      phase.set(`${a}>${b}`, theta);
      phase.set(`${b}>${a}`, -theta);
    };
    for (let i = 0; i < nx; i++)
      for (let j = 0; j < ny; j++) {
        if (i + 1 < nx) bond(`${i},${j}`, `${i + 1},${j}`, 2 * Math.PI * flux * j);
        if (j + 1 < ny) bond(`${i},${j}`, `${i},${j + 1}`, 0);
      }
    const w = mouthI.length;
    const arg = (m: Float64Array, r: number, c: number) => Math.atan2(-m[2 * (r * w + c) + 1], -m[2 * (r * w + c)]);
    const site = (r: number, cellIndex: number) => `${mouthI[r] + dx * (cellIndex + 1)},${mouthJ[r] + dy * (cellIndex + 1)}`;
    for (let r = 0; r < w; r++) {
      // mouth → lead: V[r,r] = H[lead, mouth] = −t·e^{iθ(mouth→lead)}
      bond(`${mouthI[r]},${mouthJ[r]}`, site(r, 0), arg(spec.coupling, r, r));
      // cell 0 → cell 1: H1[r,r] = H[cell 1, cell 0] = −t·e^{iθ(cell 0 → cell 1)}
      bond(site(r, 0), site(r, 1), arg(spec.cell.h1, r, r));
      for (const c of [0, 1]) if (r + 1 < w) bond(site(r, c), site(r + 1, c), arg(spec.cell.h0, r + 1, r));
    }
    const out: number[] = [];
    for (let i = -3; i < nx + 3; i++)
      for (let j = -3; j < ny + 3; j++) {
        const loop = [`${i},${j}`, `${i + 1},${j}`, `${i + 1},${j + 1}`, `${i},${j + 1}`, `${i},${j}`];
        let sum = 0;
        let ok = true;
        for (let k = 0; k < 4 && ok; k++) {
          const p = phase.get(`${loop[k]}>${loop[k + 1]}`);
          if (p === undefined) ok = false;
          else sum += p;
        }
        if (ok) out.push(sum / (2 * Math.PI));
      }
    return out;
  }

  it('every plaquette, at the mouth and inside the lead, holds the same flux −φ (counterclockwise phase sum)', () => {
    const flux = 0.037;
    for (const side of ['left', 'right', 'top', 'bottom'] as LeadSide[]) {
      const fluxes = plaquetteFluxes(side, flux, true);
      // 4×5 cavity plaquettes + 2 (mouth) + 2 (lead) plaquettes of a 3-site lead with 2 cells
      expect(fluxes.length).toBe(20 + 4);
      for (const f of fluxes) expect(Math.abs(f + flux - Math.round(f + flux))).toBeLessThan(1e-12);
    }
  });

  it('field-free leads keep the contract: the mouth and lead plaquettes hold no flux', () => {
    const flux = 0.037;
    for (const side of ['left', 'right', 'top', 'bottom'] as LeadSide[]) {
      const fluxes = plaquetteFluxes(side, flux, false);
      const zero = fluxes.filter((f) => Math.abs(f - Math.round(f)) < 1e-12).length;
      expect(zero).toBe(4);
      expect(fluxes.filter((f) => Math.abs(f + flux - Math.round(f + flux)) < 1e-12).length).toBe(20);
    }
  });

  it('the pole search certifies its window with the field in the leads (sheets continued numerically)', () => {
    const system = buildCavitySystem(cavity(1.5, 4));
    const op = new EffectiveHamiltonian(withNumericalLeads(system, { fieldInLeads: true, kSamples: 64 }));
    const t = op.hopping;
    const window = { emin: 0.3 * t, emax: 1.5 * t, gammaMax: 0.1 * t };
    const inside = op.thresholds.filter((e) => e > window.emin && e < window.emax);
    expect(inside.length).toBeGreaterThanOrEqual(2);
    const r = findPoles(op, window);
    expect(r.certificate.certified).toBe(true);
    expect(r.poles.length).toBeGreaterThanOrEqual(3);
    for (const p of r.poles) {
      expect(p.residual).toBeLessThan(1e-12);
      // partial widths from ψ†Γ_ℓψ sum to Γ (the contract's test; H Hermitian)
      const sum = p.partialWidths.reduce((a, b) => a + b, 0);
      expect(Math.abs(sum - p.width)).toBeLessThan(1e-9 * p.width + 1e-13 * t);
    }
  });

  it('mirror symmetry T(left→top, B) = T(left→bottom, −B) with the field in the leads (no spurious flux at the mouths)', () => {
    const doc = (field: number): CavityModelInput => ({
      name: 'cross',
      spacing,
      material,
      grid: { nx: 9, ny: 7 },
      shape: { kind: 'rectangle', x0: 0, y0: 0, width: 45, height: 35 },
      field,
      leads: [
        { side: 'left', start: 1, width: 5 },
        { side: 'top', start: 3, width: 4 },
        { side: 'bottom', start: 3, width: 4 },
      ],
    });
    const at = (field: number) => new EffectiveHamiltonian(withNumericalLeads(buildCavitySystem(doc(field)), { fieldInLeads: true, kSamples: 64 }));
    const plus = at(2);
    const minus = at(-2);
    const t = plus.hopping;
    for (const f of [0.5, 0.8, 1.2]) {
      const a = transmissionAt(plus, f * t);
      const b = transmissionAt(minus, f * t);
      expect(a.unitarityResidual).toBeLessThan(1e-10);
      expect(a.currentResidual).toBeLessThan(1e-10);
      expect(Math.abs(a.transmission[0][1] - b.transmission[0][2])).toBeLessThan(1e-10);
      expect(Math.abs(a.transmission[0][2] - b.transmission[0][1])).toBeLessThan(1e-10);
      // and the field matters: the two outputs differ at +B
      expect(Math.abs(a.transmission[0][1] - a.transmission[0][2])).toBeGreaterThan(1e-3);
    }
  });
});

describe('the pole search on numerical leads of a singular cell (zigzag graphene)', () => {
  it('certifies a window across a threshold, and each pole is a singular point of the dense T(z)', () => {
    // A zigzag ribbon piece of 6 cells between two barrier cells (on-site +1.2t), zigzag leads.
    const t = 1;
    const dev = ribbonDevice(zigzagRibbonCell(4, t), 6, (c) => (c === 0 || c === 5 ? 1.2 * t : 0), 64);
    const op = new DeviceOperator(dev, t);
    const window = { emin: 0.1 * t, emax: 1.1 * t, gammaMax: 0.1 * t };
    // thresholds 0.8t and t (where several bands meet at k = π, one with an extremum)
    const inside = op.thresholds.filter((e) => e > window.emin && e < window.emax);
    expect(inside.length).toBe(2);
    const r = findPoles(op, window, { plan: new DenseLuPlan(op) });
    expect(r.certificate.certified).toBe(true);
    expect(r.certificate.pieces.length).toBe(3);
    expect(r.poles.length).toBeGreaterThanOrEqual(3);
    const n = op.n;
    const values = new Float64Array(2 * n * n);
    for (const p of r.poles) {
      // independent check: the smallest singular value of T(z) (one-sided Jacobi SVD) vanishes
      op.assemble({ re: p.energy, im: -p.width / 2 }, op.sheetAt(p.energy), values);
      const a = new Float64Array(2 * n * n);
      for (let c = 0; c < n; c++)
        for (let row = 0; row < n; row++) {
          a[2 * (row * n + c)] = values[2 * (c * n + row)];
          a[2 * (row * n + c) + 1] = values[2 * (c * n + row) + 1];
        }
      const sigma = complexSvd(n, a).sigma;
      expect(sigma[n - 1] / sigma[0]).toBeLessThan(1e-13);
      const sum = p.partialWidths.reduce((x, y) => x + y, 0);
      expect(Math.abs(sum - p.width)).toBeLessThan(1e-9 * p.width);
    }
  });
});
