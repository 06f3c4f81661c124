import { spectrumWarnings } from './spectrum-warnings';

const spectrum = { energies: [1, 2], pairs: [], transmission: [], residual: [], reflection: null } as never;

describe('spectrumWarnings', () => {
  it('says nothing when the refinement finished within its budget', () => {
    expect(spectrumWarnings({ kind: 'pole-search', spectrum, stats: { spectrumBudgetExhausted: false, spectrumPoleSamples: 9 } })).toEqual([]);
  });

  it('tells a pole search whose poles were sampled that their peaks are drawn, and one without that narrow peaks may be missing', () => {
    const sampled = spectrumWarnings({ kind: 'pole-search', spectrum, stats: { spectrumBudgetExhausted: true, spectrumPoleSamples: 9 } });
    expect(sampled).toHaveLength(1);
    expect(sampled[0]).toContain('Every listed pole is sampled at E and E ± Γ/2');
    expect(sampled[0]).not.toContain('may be missing');
    // Runs computed before poles were sampled keep the stronger warning.
    const older = spectrumWarnings({ kind: 'pole-search', spectrum, stats: { spectrumBudgetExhausted: true } });
    expect(older[0]).toContain('narrow resonances may be missing');
    const sweep = spectrumWarnings({ kind: 'transmission', spectrum, stats: { spectrumBudgetExhausted: true } });
    expect(sweep[0]).toContain('Run a narrower window');
  });
});
