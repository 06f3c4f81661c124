import { validateCavityModel } from '../../../shared/model/model-validation';
import { fieldInWords, issueInWords } from './issue-words';

describe('issueInWords', () => {
  const doc = {
    name: 'x',
    spacing: 0,
    material: 'gaas',
    grid: { nx: 60, ny: 40 },
    shape: { kind: 'union', of: [{ kind: 'ellipse', cx: 1, cy: 2, rx: 3 }] },
    potential: [{ kind: 'gaussian', cx: 1, cy: 2, amplitude: 1 }],
    leads: [],
  };

  it('names the field and the missing key in words for every schema issue of a broken document', () => {
    const result = validateCavityModel(doc);
    if (result.ok) throw new Error('expected issues');
    const words = result.issues.map((i) => issueInWords(i.path, i.message, doc));
    expect(words).toContain('The lattice spacing a must be greater than 0.');
    expect(words).toContain('Shape, member 1 of the union, semi-axis y (ry) is missing: enter a number.');
    expect(words).toContain('Potential term 1 (Gaussian bump), the spread σ is missing: enter a number.');
    for (const w of words) expect(w).not.toMatch(/expected number, received/);
  });

  it('says empty for a cleared field and whole number for a fraction', () => {
    expect(issueInWords(['grid', 'ny'], 'Invalid input: expected number, received null')).toBe('The number of rows Ny is empty: enter a number.');
    expect(issueInWords(['grid', 'nx'], 'Invalid input: expected int, received number')).toBe('The number of columns Nx must be a whole number.');
  });

  it('keeps messages written for people behind the field name', () => {
    const m = 'mouth site (0, 3) of leads[0] (left) is outside the cavity';
    expect(issueInWords(['leads', 0, 'start'], m, { leads: [{ name: 'source' }] })).toBe(`Lead 1 ('source'), the first mouth site: ${m}`);
    expect(fieldInWords([])).toBe('the document');
  });
});
