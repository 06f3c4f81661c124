import { E2_OVER_H_US, conductanceFactor, spectrumCurves } from './spectrum-curves';

const base = { energies: [1, 2, 3], residual: [0, 0, 0], reflection: null };

describe('spectrumCurves', () => {
  it('draws a two-terminal pair that is equal both ways as one curve', () => {
    const s = {
      ...base,
      pairs: [
        { from: 0, to: 1 },
        { from: 1, to: 0 },
      ],
      transmission: [
        [0.1, 0.5, 0.9],
        [0.1, 0.5 + 1e-12, 0.9],
      ],
    };
    const { curves, merged } = spectrumCurves(s, ['source', 'drain']);
    expect(merged).toBe(1);
    expect(curves.map((c) => c.name)).toEqual(['T(source ↔ drain)']);
  });

  it('keeps both curves where the two directions differ', () => {
    const s = {
      ...base,
      pairs: [
        { from: 0, to: 1 },
        { from: 1, to: 0 },
      ],
      transmission: [
        [0.1, 0.5, 0.9],
        [0.1, 0.4, 0.9],
      ],
    };
    const { curves, merged } = spectrumCurves(s, ['a', 'b']);
    expect(merged).toBe(0);
    expect(curves.map((c) => c.name)).toEqual(['T(a → b)', 'T(b → a)']);
  });

  it('gives the conductance in the chosen unit', () => {
    const s = { ...base, pairs: [{ from: 0, to: 1 }], transmission: [[0.5, 1, 2]] };
    const g = spectrumCurves(s, ['a', 'b'], 'conductance', '2e2/h').curves[0];
    expect(g.name).toBe('G(a → b)');
    expect(g.values).toEqual([0.5, 1, 2]);
    // e²/h = 1/R_K, R_K = 25 812.807 45 Ω (CODATA 2018, exact in the 2019 SI): 38.740 µS.
    expect(E2_OVER_H_US).toBeCloseTo(38.7404585, 5);
    const us = spectrumCurves(s, ['a', 'b'], 'conductance', 'uS').curves[0];
    expect(us.values[1]!).toBeCloseTo(2 * 38.7404585, 4);
    expect(conductanceFactor('e2/h')).toBe(1);
  });
});
