import { describe, expect, it } from 'vitest';
import { coverageByArea } from '../../scripts/coverage-summary';

const counts = (total: number, covered: number) => ({
  lines: { total, covered },
  statements: { total, covered },
  functions: { total: 1, covered: covered > 0 ? 1 : 0 },
  branches: { total: 0, covered: 0 },
});

describe('coverage by area', () => {
  it('adds files up by folder, the engine apart from the rest of shared/, and leaves out the total and other folders', () => {
    const areas = coverageByArea(
      {
        total: counts(1000, 1000),
        '/repo/shared/engine/lattice.ts': counts(100, 80),
        '/repo/shared/engine/poles.ts': counts(50, 10),
        '/repo/shared/model/geometry.ts': counts(40, 40),
        '/repo/server/app.ts': counts(30, 0),
        '/repo/scripts/seed.ts': counts(20, 20),
      },
      '/repo',
    );
    expect([...areas.keys()]).toEqual(['engine', 'model and units', 'server']);
    expect(areas.get('engine')!.lines).toEqual({ total: 150, covered: 90 });
    expect(areas.get('model and units')!.lines).toEqual({ total: 40, covered: 40 });
    expect(areas.get('server')!.functions).toEqual({ total: 1, covered: 0 });
  });
});
