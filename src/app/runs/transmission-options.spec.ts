import type { ChartColours } from '../core/charts/chart-colours';
import { labelledPoles, transmissionOptions } from './transmission-options';

const colours = new Proxy({}, { get: () => '#000' }) as ChartColours;

describe('transmission chart options', () => {
  it('labels only pole markers with room for their index', () => {
    // Window 0..30 meV: labels need 1 meV between them.
    const labelled = labelledPoles([5, 5.2, 5.5, 6.1, 40, 12], 0, 30);
    expect([...labelled].sort((a, b) => a - b)).toEqual([0, 3, 5]);
  });

  it('names the curves by lead name, falling back to a 1-based lead number, one curve for a symmetric pair', () => {
    const spectrum = {
      energies: [1, 2],
      transmission: [
        [0.1, 0.2],
        [0.1, 0.2],
      ],
      pairs: [
        { from: 0, to: 1 },
        { from: 1, to: 0 },
      ],
      residual: [0, 0],
      reflection: null,
    };
    const named = transmissionOptions(spectrum, [], [], colours, ['source', 'drain']) as { series: { name: string }[] };
    expect(named.series.map((s) => s.name)).toEqual(['T(source ↔ drain)']);
    const bare = transmissionOptions(spectrum, [], [], colours) as { series: { name: string }[] };
    expect(bare.series[0].name).toBe('T(lead 1 ↔ lead 2)');
  });

  it('adds the residual on a second (log) axis on request and draws G in its unit', () => {
    const spectrum = { energies: [1, 2], transmission: [[0.1, 0.2]], pairs: [{ from: 0, to: 1 }], residual: [0, 3e-12], reflection: null };
    const o = transmissionOptions(spectrum, [], [], colours, ['s', 'd'], { quantity: 'conductance', unit: '2e2/h', residual: true }) as {
      yAxis: { name: string; type: string }[];
      series: { name: string; yAxisIndex?: number; data: number[][] }[];
    };
    expect(o.yAxis[0].name).toContain('2e²/h');
    expect(o.yAxis[1].type).toBe('log');
    const residual = o.series.find((s) => s.name === 'current residual')!;
    expect(residual.yAxisIndex).toBe(1);
    expect(residual.data[1][1]).toBeCloseTo(3e-12, 20);
    expect(o.series[0].name).toBe('G(s → d)');
  });
});
