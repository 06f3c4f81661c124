import type { ChartColours } from './chart-colours';
import { poleWidthOptions, widthAxisRange } from './pole-width-options';

const colours = new Proxy({}, { get: () => '#000' }) as ChartColours;

describe('log-width pole view', () => {
  it('spans from the decade below the narrowest width to Γmax', () => {
    const r = widthAxisRange(
      [
        { energy: 1, width: 3e-6 },
        { energy: 2, width: 0.02 },
        { energy: 3, width: 0, bound: true },
      ],
      0.5,
    );
    expect(r.min).toBeCloseTo(1e-6, 12);
    expect(r.max).toBeCloseTo(1, 9);
  });

  it('puts Γ on a log axis and draws the window edges and thresholds', () => {
    const o = poleWidthOptions({
      poles: [
        { energy: 7.6, width: 2e-5 },
        { energy: 8.2, width: 0.01 },
        { energy: 9, width: 0, bound: true },
      ],
      thresholds: [8],
      window: { emin: 7.5, emax: 10, gammaMax: 0.5 },
      colours,
    }) as { yAxis: { type: string; min: number }; series: { data: { value: number[] }[]; markLine?: { data: Record<string, unknown>[] } }[] };
    expect(o.yAxis.type).toBe('log');
    expect(o.yAxis.min).toBeLessThanOrEqual(2e-5);
    // The bound state (Γ = 0) cannot sit on a log axis.
    expect(o.series.flatMap((s) => s.data).map((d) => d.value[1])).toEqual([2e-5, 0.01]);
    const marks = o.series[0].markLine!.data;
    expect(marks.filter((m) => m['xAxis'] === 7.5 || m['xAxis'] === 10)).toHaveLength(2);
    expect(marks.some((m) => m['yAxis'] === 0.5)).toBe(true);
    expect(marks.some((m) => m['xAxis'] === 8)).toBe(true);
  });
});
