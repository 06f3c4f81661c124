import type { ChartColours } from './chart-colours';
import type { PlanePole } from './pole-plane-options';

/**
 * The lattice-validity marks of a pole chart: a ring around every pole above its model's
 * validity limit and a solid line at the limit (when it lies inside the axis range the
 * chart picks). Shared by the complex plane and the log-width view; `point` is the
 * chart's own placement of a pole.
 */
export function validityOverlay(
  poles: readonly PlanePole[],
  limit: number | null | undefined,
  point: (p: PlanePole) => { value: number[]; id?: string },
  c: ChartColours,
): Record<string, unknown>[] {
  const above = poles.filter((p) => p.aboveLimit);
  if (!above.length && limit == null) return [];
  return [
    {
      name: 'Above the lattice limit',
      type: 'scatter',
      symbol: 'emptyCircle',
      symbolSize: 18,
      z: 3,
      itemStyle: { color: c.error, borderColor: c.error, borderWidth: 2 },
      data: above.map(point),
      markLine:
        limit == null
          ? undefined
          : {
              silent: true,
              symbol: 'none',
              label: { formatter: 'lattice trusted below', color: c.error, fontSize: 10, position: 'insideEndTop' },
              lineStyle: { type: 'solid', color: c.error, width: 1 },
              data: [{ xAxis: limit }],
            },
    },
  ];
}
