import { documentDiff } from './document-diff';

describe('documentDiff', () => {
  it('marks the changed lines of two model documents and folds long unchanged runs', () => {
    const a = { name: 'Dot', spacing: 5, grid: { nx: 60, ny: 40 }, shape: { kind: 'ellipse', cx: 150, cy: 100, rx: 110, ry: 80 }, leads: [] };
    const b = { ...a, shape: { ...a.shape, ry: 70 } };
    const { lines, changed } = documentDiff(a, b, 1);
    expect(changed).toBe(2);
    expect(lines.filter((l) => l.kind === 'removed').map((l) => l.text.trim())).toEqual(['"ry": 80']);
    expect(lines.filter((l) => l.kind === 'added').map((l) => l.text.trim())).toEqual(['"ry": 70']);
    expect(lines.some((l) => l.kind === 'skipped')).toBe(true);
    expect(documentDiff(a, a).changed).toBe(0);
  });
});
