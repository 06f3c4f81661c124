import { sampleSweepOutcome } from '../core/testing/sample-study';
import { chartColours } from '../core/charts/chart-colours';
import { histogramOptions, markPoint, trajectoryPlaneOptions, trajectoryValueOptions } from './trajectory-options';

type Series = { type: string; name: string; data: unknown[] };
const line = sampleSweepOutcome.lines[0]!;

describe('trajectory charts', () => {
  it('puts each pole at (E, −Γ/2) with the parameter as the visual map dimension', () => {
    const options = trajectoryPlaneOptions(line, 'field', chartColours()) as {
      series: Series[];
      visualMap: { min: number; max: number; dimension: number; seriesIndex: number };
    };
    const poles = options.series[options.visualMap.seriesIndex]!;
    expect(poles.name).toBe('Poles');
    expect(options.visualMap.dimension).toBe(2);
    expect(options.visualMap.min).toBe(0);
    expect(options.visualMap.max).toBe(1);
    expect(poles.data).toHaveLength(6);
    const last = poles.data[5] as number[];
    expect(last[0]).toBeCloseTo(3.2, 12);
    expect(last[1]).toBeCloseTo(-0.045, 12);
    expect(last[2]).toBe(1);
  });

  it('draws the avoided crossing at its trajectory point of its step', () => {
    const mark = line.marks[0]!;
    expect(markPoint(line, mark)).toMatchObject({ step: 1, value: 0.5 });
    const options = trajectoryValueOptions(line, 'field', 'energy', chartColours()) as { series: Series[] };
    const marks = options.series.find((s) => s.name === 'Marks')!;
    expect(marks.data).toEqual([{ value: [0.5, 3.2], name: 'Avoided crossing' }]);
  });

  it('uses a log axis for Γ(p) and leaves out Γ = 0', () => {
    const withBound = {
      ...line,
      trajectories: [{ ...line.trajectories[0]!, points: line.trajectories[0]!.points.map((p, i) => ({ ...p, width: i === 0 ? 0 : p.width })) }],
    };
    const options = trajectoryValueOptions(withBound, 'field', 'width', chartColours()) as { yAxis: { type: string }; series: Series[] };
    expect(options.yAxis.type).toBe('log');
    expect(options.series[0]!.data).toHaveLength(2);
  });

  it('labels histogram bars by their bin centres', () => {
    const options = histogramOptions({ edges: [0, 1, 2], counts: [3, 4] }, 'E (meV)', chartColours()) as {
      xAxis: { data: string[] };
      series: { data: number[] }[];
    };
    expect(options.xAxis.data).toEqual(['0.5', '1.5']);
    expect(options.series[0]!.data).toEqual([3, 4]);
  });
});
