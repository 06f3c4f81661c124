import type { CavityModelInput } from '../../../shared/model/cavity-model';
import { validateCavityModel } from '../../../shared/model/model-validation';
import { grapheneStarter, switchLattice } from './lattice-switch';
import { starterModel } from './model-form';

describe('grapheneStarter', () => {
  it('is a valid graphene dot with a zigzag lead on each side, its mouths in the cavity', () => {
    const doc = grapheneStarter();
    const checked = validateCavityModel({ ...doc, name: 'dot' });
    expect(checked.ok ? [] : checked.issues).toEqual([]);
    expect(doc.lattice).toMatchObject({ kind: 'honeycomb', hopping: 2.7 });
    expect(doc.spacing).toBe(0.142);
    expect(doc.leads?.map((l) => l.side)).toEqual(['left', 'right']);
    // A disk of radius 4.5 nm holds about π·4.5²/((3√3/4)·a_CC²) ≈ 2430 atoms (two per hexagon of area (3√3/2)·a_CC²);
    // the stubs add a few hundred.
    if (checked.ok) {
      expect(checked.siteCount).toBeGreaterThan(2300);
      expect(checked.siteCount).toBeLessThan(3200);
    }
  });
});

describe('switchLattice', () => {
  it('starts an untouched new model over from the graphene dot, keeping its name', () => {
    const { document, note } = switchLattice({ ...starterModel, name: 'my dot' }, 'honeycomb', false);
    expect(document.name).toBe('my dot');
    expect(document.shape).toEqual(grapheneStarter().shape);
    expect(document.material).toBeUndefined();
    expect(note).toContain('graphene dot');
    // And back: the GaAs rectangle again.
    const back = switchLattice(document, 'square', false);
    expect(back.document.shape).toEqual(starterModel.shape);
    expect(back.document.lattice).toBeUndefined();
    expect(back.document.material).toBe('gaas');
  });

  it('keeps an edited model’s extent in nm by re-counting the grid and the lead mouths', () => {
    const edited: CavityModelInput = {
      ...starterModel,
      name: 'small dot',
      spacing: 1,
      grid: { nx: 30, ny: 21 },
      shape: { kind: 'disk', cx: 15, cy: 10, radius: 8 },
      leads: [{ side: 'left', start: 6, width: 9, offset: 0 }],
    };
    const { document, note } = switchLattice(edited, 'honeycomb', false);
    // 30 nm / ((√3/2)·0.142 nm) = 243.9 columns, 21 nm / (1.5·0.142 nm) = 98.6 rows.
    expect(document.grid).toEqual({ nx: 244, ny: 99 });
    // Rows 6..14 at 1 nm are y = 6..14 nm: at 0.213 nm per row, from row 28, 42 rows.
    expect(document.leads?.[0]).toMatchObject({ start: 28, width: 42 });
    expect(document.shape).toEqual(edited.shape);
    expect(note).toContain('244 × 99');
  });

  it('keeps the grid’s counts when its extent would pass the cap, and says so', () => {
    const big: CavityModelInput = { ...starterModel, name: 'big', shape: { kind: 'disk', cx: 150, cy: 100, radius: 90 } };
    const { document, note } = switchLattice(big, 'honeycomb', true);
    expect(document.grid).toEqual(big.grid);
    expect(document.spacing).toBe(0.142);
    expect(note).toMatch(/above the cap/);
  });
});
