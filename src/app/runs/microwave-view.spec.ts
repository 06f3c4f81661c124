import { frequencyPole, frequencySpectrum } from './microwave-view';
import { frequencyWindow, frequencyWindowText } from '../core/format/window-text';

// f = c·√k²/(2π√ε_r) with c = 299.792458 mm/ns exactly (SI definition of the metre).
const c = 299.792458;
const k2Of = (fGhz: number, eps: number) => ((2 * Math.PI * fGhz * Math.sqrt(eps)) / c) ** 2;

describe('microwave view of a run', () => {
  it('puts a pole at its complex frequency: Re f in GHz, Γ_f = 2|Im f| in GHz', () => {
    // A pole at f = 10 − 0.001i GHz in vacuum: z = k², k = 2π f/c.
    const kRe = (2 * Math.PI * 10) / c;
    const kIm = (2 * Math.PI * -0.001) / c;
    const z = { re: kRe * kRe - kIm * kIm, im: 2 * kRe * kIm };
    const p = frequencyPole({ energy: z.re, width: -2 * z.im, id: 'x' }, 1);
    expect(p.energy).toBeCloseTo(10, 9);
    expect(p.width).toBeCloseTo(0.002, 9);
    expect(p.id).toBe('x');
  });

  it('draws the window edges as frequencies; Γ_f max is the width inside the window at its top', () => {
    const eps = 2.25;
    const w = { emin: k2Of(12.5, eps), emax: k2Of(17, eps), gammaMax: 0.002 };
    const f = frequencyWindow(w, eps);
    expect(f.emin).toBeCloseTo(12.5, 9);
    expect(f.emax).toBeCloseTo(17, 9);
    // A pole with Γ = Γmax at E_max has exactly this Γ_f; at E_min the same Γ is a wider Γ_f.
    expect(f.gammaMax).toBeCloseTo(frequencyPole({ energy: w.emax, width: w.gammaMax }, eps).width, 12);
    expect(frequencyPole({ energy: w.emin, width: w.gammaMax }, eps).width).toBeGreaterThan(f.gammaMax!);
    expect(frequencyWindowText(w, eps)).toMatch(/^12\.500–17\.000 GHz, Γ_f ≤ [\d.]+ MHz \(k² /);
    expect(frequencyWindowText({ emin: w.emin, emax: w.emax, points: 200 }, eps)).toContain('200 frequencies');
  });

  it('samples the spectrum at frequencies, leaving the curves as they are', () => {
    const s = frequencySpectrum(
      { energies: [k2Of(1, 1), k2Of(2, 1)], transmission: [[0.1, 0.9]], pairs: [{ from: 0, to: 1 }], residual: [0, 0], reflection: null },
      1,
    );
    expect(s.energies[0]).toBeCloseTo(1, 9);
    expect(s.energies[1]).toBeCloseTo(2, 9);
    expect(s.transmission).toEqual([[0.1, 0.9]]);
  });
});
