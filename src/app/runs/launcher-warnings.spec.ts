import { launcherWarnings } from './launcher-warnings';

describe('launcherWarnings', () => {
  it('says a validity warning once even when the estimate repeats it with other numbers', () => {
    const validity = ['E = 9.500 meV is above t/2 = 8.690 meV: the lattice dispersion is off the parabola by 4.2 %'];
    const estimate = [
      'E = 10.00 meV is above t/2 = 8.690 meV: the lattice dispersion is off the parabola by 4.6 %',
      'This run is expected to take more than ten minutes.',
    ];
    const out = launcherWarnings(estimate, validity);
    expect(out.map((w) => w.text)).toEqual([`Model validity at E max: ${validity[0]}`, 'This run is expected to take more than ten minutes.']);
  });
});
