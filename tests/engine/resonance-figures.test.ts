// The figures stored with every resonance (shared/model/resonance-validity.ts): Q, τ and the
// lattice-validity mark, on the square lattice and on graphene's honeycomb.
import { describe, expect, it } from 'vitest';
import { cavityModelSchema } from '../../shared/model/cavity-model';
import { resonanceFigures, resonancePhysicsOf, resonancePhysicsOfDocument, validityLimitOf } from '../../shared/model/resonance-validity';
import { HBAR_MEV_PS } from '../../shared/units/constants';

const graphene = (nextHopping = 0) =>
  cavityModelSchema.parse({
    name: 'graphene disk',
    spacing: 0.142,
    lattice: { kind: 'honeycomb', hopping: 2.7, nextHopping },
    grid: { nx: 40, ny: 24 },
    shape: { kind: 'disk', cx: 2.8, cy: 2.6, radius: 2.2 },
  });

describe('stored resonance figures', () => {
  it('measures Q of a graphene resonance from the Dirac point, holes included, and sets no discretisation limit', () => {
    const p = resonancePhysicsOf(graphene());
    expect(p.diracEnergy).toBe(0);
    const hole = resonanceFigures(-100, 1, p);
    // Q = |E − E_D|/Γ: positive for a hole (E < E_D), as for an electron at +100 meV.
    expect(hole.quality).toBeCloseTo(100, 12);
    expect(resonanceFigures(100, 1, p).quality).toBeCloseTo(100, 12);
    expect(hole.lifetimePs).toBeCloseTo(HBAR_MEV_PS, 12);
    // The lattice is the crystal's: no "refine the grid" limit, so the mark is not applicable.
    expect(hole.validity.limit).toBeNull();
    expect(hole.validity.aboveLimit).toBeNull();
    expect(validityLimitOf(p)).toBeNull();
    // λ = 2πħv_F/|E − E_D| with ħv_F = 3t·a_CC/2 (Castro Neto et al., Rev. Mod. Phys. 81, 109 (2009), §II.A, from memory).
    expect(hole.validity.wavelengthSpacings).toBeCloseTo((2 * Math.PI * 1.5 * 2700) / 100, 9);
    // With next-nearest hopping t' the Dirac point moves to 3t' (same source): Q is measured from there.
    const shifted = resonancePhysicsOf(graphene(0.1));
    expect(shifted.diracEnergy).toBeCloseTo(300, 12);
    expect(resonanceFigures(200, 2, shifted).quality).toBeCloseTo(50, 12);
    // A stored document that no longer parses still says it is graphene.
    const fallback = resonancePhysicsOfDocument({ lattice: { kind: 'honeycomb', nextHopping: 0.1 } }, { physics: 'electrons', hopping: 2700 });
    expect(fallback.diracEnergy).toBeCloseTo(300, 12);
  });

  it('keeps Q = E/Γ and the square lattice limit for a 2DEG dot', () => {
    const square = cavityModelSchema.parse({
      name: 'box',
      spacing: 5,
      material: 'gaas',
      grid: { nx: 10, ny: 10 },
      shape: { kind: 'rectangle', x0: 0, y0: 0, width: 50, height: 50 },
    });
    const p = resonancePhysicsOf(square);
    expect(p.diracEnergy).toBeNull();
    const f = resonanceFigures(5, 0.01, p);
    expect(f.quality).toBeCloseTo(500, 9);
    const limit = validityLimitOf(p)!;
    expect(limit).toBeGreaterThan(0);
    expect(f.validity.aboveLimit).toBe(5 > limit);
    expect(resonanceFigures(limit * 1.01, 0.01, p).validity.aboveLimit).toBe(true);
  });
});
