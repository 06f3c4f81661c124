import { describe, expect, it } from 'vitest';
import { crossFeatureImports, importGraph, sourceFiles } from './import-graph';

describe('client feature folders', () => {
  const graph = importGraph(sourceFiles(['src']));

  it('reads the real import graph (a feature page importing core/)', () => {
    expect(graph.get('src/app/runs/run-detail.ts')).toContain('src/app/core/group/design-permission.ts');
  });

  it('never import another feature folder, and core/ imports no feature', () => {
    expect(crossFeatureImports(graph)).toEqual([]);
  });

  it('the check reports a feature importing another feature, and core importing a feature', () => {
    const made = new Map([
      ['src/app/runs/run-list.ts', ['src/app/core/format/energy-format.ts', 'src/app/models/models-api.ts']],
      ['src/app/core/format/energy-format.ts', ['src/app/catalogue/catalogue-api.ts']],
      ['src/app/app.routes.ts', ['src/app/runs/run-list.ts']],
    ]);
    expect(crossFeatureImports(made)).toEqual([
      'src/app/runs/run-list.ts -> src/app/models/models-api.ts',
      'src/app/core/format/energy-format.ts -> src/app/catalogue/catalogue-api.ts',
    ]);
  });
});
