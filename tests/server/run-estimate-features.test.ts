// The run estimate's cost features follow the LU the run will take: the symmetric path
// (diagonal pivots, one triangle) without a magnetic field, row pivoting in one.
import { describe, expect, it } from 'vitest';
import { runCostFeatures } from '../../server/runs/run-estimate.js';
import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian.js';
import { SparseLuPlan } from '../../shared/engine/sparse-lu.js';

const rectangle = (field: number) => ({
  name: 'rectangle',
  spacing: 5,
  material: 'gaas',
  grid: { nx: 24, ny: 18 },
  shape: { kind: 'rectangle', x0: 0, y0: 0, width: 120, height: 90 },
  field,
  leads: [
    { side: 'left', start: 4, width: 6 },
    { side: 'right', start: 8, width: 6 },
  ],
});

describe('run cost features', () => {
  for (const field of [0, 2]) {
    it(`${field} T: the flops of the LU the run takes (${field === 0 ? 'symmetric' : 'row pivoting'})`, () => {
      const doc = rectangle(field);
      const window = { emin: 2, emax: 8, gammaMax: 0.5 };
      const f = runCostFeatures(doc, { kind: 'pole-search', window });
      const op = new EffectiveHamiltonian(buildCavitySystem(doc));
      const plan = SparseLuPlan.analyse(op.n, op.colPtr, op.rowIdx, { sites: op.sites });
      expect(f.symmetricLu).toBe(field === 0);
      expect(f.factorFlops).toBe(field === 0 ? plan.symmetricFlops : plan.factorFlops);
      expect(plan.symmetricFlops).toBeLessThan(0.6 * plan.factorFlops);
      // and the run's own LU at a contour node takes that path
      const z = { re: 5, im: -0.1 };
      const values = new Float64Array(2 * op.rowIdx.length);
      op.assemble(z, op.sheetAt(z.re), values);
      expect(plan.factor(values).symmetric).toBe(field === 0);
    });
  }
});
