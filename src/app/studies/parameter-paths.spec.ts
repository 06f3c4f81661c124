import { parameterLabel, parameterPaths } from './parameter-paths';

describe('parameterPaths', () => {
  it('lists every number of the document as a dotted path, in document order', () => {
    const doc = {
      name: 'Dot A',
      field: 0.5,
      shape: { kind: 'disk', radius: 120 },
      potential: [{ kind: 'gate', value: 2, x: 10 }],
      leads: [{ side: 'left', width: 40, offset: 0 }],
    };
    expect(parameterPaths(doc)).toEqual([
      { path: 'field', value: 0.5 },
      { path: 'shape.radius', value: 120 },
      { path: 'potential.0.value', value: 2 },
      { path: 'potential.0.x', value: 10 },
      { path: 'leads.0.width', value: 40 },
      { path: 'leads.0.offset', value: 0 },
    ]);
  });

  it('leaves out long per-site arrays and keys that are not plain names', () => {
    const doc = { spacing: 5, mask: Array.from({ length: 100 }, () => 1), 'odd-key': 3 };
    expect(parameterPaths(doc).map((p) => p.path)).toEqual(['spacing']);
  });
});

describe('parameterLabel', () => {
  it('gives the field its unit and leaves paths whose unit depends on the mode bare', () => {
    expect(parameterLabel('field')).toBe('field (T)');
    expect(parameterLabel('shape.of.0.radius')).toBe('shape.of.0.radius');
    expect(parameterLabel('fieldInLeads')).toBe('fieldInLeads');
  });
});
