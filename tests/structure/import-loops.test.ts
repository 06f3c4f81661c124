import { describe, expect, it } from 'vitest';
import { importGraph, importLoops, sourceFiles } from './import-graph';

describe('import loops', () => {
  it('there are none in src/, server/ and shared/ (type-only and dynamic imports count)', () => {
    const graph = importGraph(sourceFiles(['src', 'server', 'shared']));
    expect(graph.size).toBeGreaterThan(100);
    // `./x.js` specifiers resolve to the .ts file, as tsc resolves them.
    expect(graph.get('server/backup/backup-sections.ts')).toContain('server/backup/fits-backup-sections.ts');
    expect(importLoops(graph)).toEqual([]);
  });

  it('finds a loop of three files, a file importing itself, and nothing in a tree', () => {
    const made = new Map([
      ['a.ts', ['b.ts']],
      ['b.ts', ['c.ts', 'd.ts']],
      ['c.ts', ['a.ts']],
      ['d.ts', ['e.ts']],
      ['e.ts', []],
      ['f.ts', ['f.ts']],
    ]);
    expect(importLoops(made)).toEqual([['a.ts', 'b.ts', 'c.ts'], ['f.ts']]);
  });
});
