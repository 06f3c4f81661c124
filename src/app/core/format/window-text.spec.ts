import { wavenumberSquared } from '../../../../shared/units/microwave';
import { frequencyWindowText, windowText } from './window-text';

describe('window text', () => {
  it('says a pole-search window in meV with its width bound', () => {
    expect(windowText({ emin: 8, emax: 10, gammaMax: 0.5 })).toBe('8–10 meV, Γ ≤ 0.5 meV');
  });

  it('says a microwave window in GHz, converting the stored k² with the filling ε_r', () => {
    const window = { emin: wavenumberSquared(12.5, 2.2), emax: wavenumberSquared(17, 2.2), gammaMax: 0.01 };
    expect(frequencyWindowText(window, 2.2)).toBe('12.50–17.00 GHz');
    // Without a usable ε_r it falls back to the stored figures rather than inventing a frequency.
    expect(frequencyWindowText(window, NaN)).toBe(windowText(window));
  });
});
