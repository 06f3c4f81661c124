import { ageText, countLabel } from './count-label';

describe('catalogue count label', () => {
  it('says how the total was obtained', () => {
    expect(countLabel({ total: 41213, totalKind: 'exact', countAgeSeconds: 0 })).toBe('41,213 resonances');
    expect(countLabel({ total: 1, totalKind: 'exact', countAgeSeconds: 0 })).toBe('1 resonance');
    expect(countLabel({ total: 41213, totalKind: 'cached', countAgeSeconds: 20 })).toBe('41,213 resonances (counted 20 s ago)');
    expect(countLabel({ total: 41213, totalKind: 'estimated', countAgeSeconds: null })).toBe('about 41,200 resonances (estimated)');
    expect(countLabel({ total: 987, totalKind: 'estimated', countAgeSeconds: null })).toBe('about 987 resonances (estimated)');
    expect(countLabel({ total: 1_234_567, totalKind: 'estimated', countAgeSeconds: null })).toBe('about 1,230,000 resonances (estimated)');
  });

  it('gives ages in the coarsest unit that fits', () => {
    expect(ageText(20)).toBe('20 s');
    expect(ageText(150)).toBe('3 min');
    expect(ageText(7200)).toBe('2 h');
  });
});
