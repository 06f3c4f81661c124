import type { DerivedFiguresAnswer as DerivedFigures } from '../../../shared/api/models';
import { fillForm, modelForm, readForm, starterModel } from './model-form';
import { twoDimensionalLimitWarning } from './two-dimensional-limit';

// c = 299 792 458 m/s exactly (SI definition of the metre; CODATA) = 299.792458 mm/ns.
const C = 299.792458;
/** k² (mm⁻²) of a real frequency f (GHz) in a filling ε_r: k = 2π f √ε_r / c. */
const k2 = (fGhz: number, eps: number) => ((2 * Math.PI * fGhz * Math.sqrt(eps)) / C) ** 2;

const figures = (over: Partial<DerivedFigures>): DerivedFigures => ({
  siteCount: 1000,
  hopping: 4,
  massRatio: 1,
  energyCeiling: 2,
  wavelengthCeiling: 2,
  fluxPerPlaquette: 0,
  cyclotronEnergy: 0,
  magneticLength: Infinity,
  leads: [],
  physics: 'microwave',
  permittivity: 2.2,
  heightMm: 4,
  twoDimensionalLimitGhz: C / (2 * 4 * Math.sqrt(2.2)),
  ...over,
});

describe("the editor's 2D-limit warning (microwave mode)", () => {
  const limit = C / (2 * 4 * Math.sqrt(2.2)); // 25.26 GHz for h = 4 mm, ε_r = 2.2

  it('warns when the trusted lattice ceiling lies above c/(2h√ε_r)', () => {
    const w = twoDimensionalLimitWarning(figures({ energyCeiling: k2(30, 2.2), wavelengthCeiling: k2(31, 2.2) }));
    expect(w).toContain(`Above ${limit.toPrecision(4)} GHz`);
    expect(w).toContain('trusted up to 30.00 GHz');
  });

  it('counts lead thresholds above the limit and stays quiet below it', () => {
    const t = (f: number) => ({ channel: 1, transverse: 0, opens: k2(f, 2.2), closes: 0 });
    const below = figures({
      energyCeiling: k2(20, 2.2),
      wavelengthCeiling: k2(20, 2.2),
      leads: [{ name: 'P1', side: 'left', width: 10, offset: 0, thresholds: [t(5), t(12)] }],
    });
    expect(twoDimensionalLimitWarning(below)).toBeNull();
    const above = { ...below, leads: [{ ...below.leads[0], thresholds: [t(5), t(26), t(40)] }] };
    expect(twoDimensionalLimitWarning(above)).toContain('2 lead channel threshold(s) lie above it, from 26.00 GHz');
    expect(twoDimensionalLimitWarning({ ...above, physics: 'electrons' })).toBeNull();
  });
});

describe('the model form in the microwave mode', () => {
  it('writes physics with ε_r and h and leaves out what the schema refuses there', () => {
    const form = modelForm();
    fillForm(form, { ...starterModel, name: 'Cavity', potential: [{ kind: 'disorder', amplitude: 1, seed: 3 }] as never, field: 1.5 });
    form.patchValue({ physics: 'microwave', permittivity: 2.2, height: 4, spacing: 0.5 });
    form.controls.leads.at(0).patchValue({ offset: 3 });
    const { document } = readForm(form);
    const doc = document as unknown as Record<string, unknown>;
    expect(doc['physics']).toEqual({ kind: 'microwave', permittivity: 2.2, height: 4 });
    expect('material' in doc || 'field' in doc || 'potential' in doc).toBe(false);
    expect((doc['leads'] as { offset: number }[]).map((l) => l.offset)).toEqual([0, 0]);
  });

  it('reads a microwave document back into the form', () => {
    const form = modelForm();
    const { material: _m, field: _f, potential: _p, ...rest } = starterModel;
    fillForm(form, { ...rest, name: 'Q', physics: { kind: 'microwave', permittivity: 3.5, height: 1.2 } } as never);
    const v = form.getRawValue();
    expect([v.physics, v.permittivity, v.height]).toEqual(['microwave', 3.5, 1.2]);
    const { document } = readForm(form);
    expect((document as unknown as { physics: unknown }).physics).toEqual({ kind: 'microwave', permittivity: 3.5, height: 1.2 });
  });
});
