import type { EChartsCoreOption } from 'echarts/core';
import type { Trajectory, TrajectoryMark } from '../../../shared/api/studies';
import type { ChartColours } from '../core/charts/chart-colours';

interface TrajectoryLine {
  trajectories: Trajectory[];
  marks: TrajectoryMark[];
}

export const markLabels: Record<TrajectoryMark['kind'], string> = {
  crossing: 'Crossing',
  'avoided-crossing': 'Avoided crossing',
  'width-exchange': 'Width exchange',
};

/** Where a mark sits: the point of its first trajectory at the mark's step (null if that trajectory has no point there). */
export function markPoint(line: TrajectoryLine, mark: TrajectoryMark): Trajectory['points'][number] | null {
  for (const id of mark.trajectories) {
    const t = line.trajectories.find((x) => x.id === id);
    const p = t?.points.find((q) => q.step === mark.step);
    if (p) return p;
  }
  return null;
}

function valueRange(line: TrajectoryLine): [number, number] {
  const values = line.trajectories.flatMap((t) => t.points.map((p) => p.value));
  if (!values.length) return [0, 1];
  const lo = Math.min(...values);
  const hi = Math.max(...values);
  return lo === hi ? [lo - 1, hi + 1] : [lo, hi];
}

/**
 * The trajectories in the complex energy plane (Re z = E, Im z = −Γ/2), each point
 * coloured by the parameter through a continuous visual map; thin lines join the
 * points of one trajectory; marks (crossings, avoided crossings, width exchanges) are
 * drawn as labelled diamonds.
 */
export function trajectoryPlaneOptions(line: TrajectoryLine, parameter: string, colours: ChartColours): EChartsCoreOption {
  const [lo, hi] = valueRange(line);
  const marks = line.marks.flatMap((m) => {
    const p = markPoint(line, m);
    return p ? [{ value: [p.energy, -p.width / 2], name: markLabels[m.kind] }] : [];
  });
  return {
    animation: false,
    grid: { left: 72, right: 110, top: 24, bottom: 56 },
    tooltip: { trigger: 'item' },
    xAxis: { type: 'value', name: 'Re z = E (meV)', nameLocation: 'middle', nameGap: 32, scale: true },
    yAxis: { type: 'value', name: 'Im z = −Γ/2 (meV)', nameLocation: 'middle', nameGap: 56, scale: true },
    visualMap: {
      type: 'continuous',
      min: lo,
      max: hi,
      dimension: 2,
      seriesIndex: line.trajectories.length,
      right: 8,
      top: 'middle',
      text: [`${parameter} ${fmt(hi)}`, fmt(lo)],
      calculable: false,
      inRange: { color: ['#2c3e91', '#1f8a8a', '#9ccf3c', '#f2c12e'] },
      textStyle: { color: colours.onSurfaceVariant },
    },
    series: [
      ...line.trajectories.map((t) => ({
        type: 'line',
        name: `Trajectory ${t.id}`,
        data: t.points.map((p) => [p.energy, -p.width / 2]),
        showSymbol: false,
        lineStyle: { width: 1, color: colours.outlineVariant },
        silent: true,
        z: 1,
      })),
      {
        type: 'scatter',
        name: 'Poles',
        symbolSize: 8,
        data: line.trajectories.flatMap((t) => t.points.map((p) => [p.energy, -p.width / 2, p.value, t.id, p.step])),
        tooltip: {
          formatter: (item: { value: number[] }) => {
            const [e, im, v, id, step] = item.value as [number, number, number, number, number];
            return `Trajectory ${id}, step ${step}<br>${parameter} = ${fmt(v)}<br>E = ${fmt(e)} meV, Γ = ${fmt(-2 * im)} meV`;
          },
        },
        z: 2,
      },
      {
        type: 'scatter',
        name: 'Marks',
        symbol: 'diamond',
        symbolSize: 16,
        itemStyle: { color: 'transparent', borderColor: colours.error, borderWidth: 2 },
        label: { show: true, position: 'top', formatter: '{b}', color: colours.error, fontSize: 11 },
        data: marks,
        z: 3,
      },
    ],
  };
}

/**
 * E(p) (quantity 'energy', linear axis) or Γ(p) (quantity 'width', log axis): one line
 * per trajectory against the parameter, marks as diamonds.
 */
export function trajectoryValueOptions(line: TrajectoryLine, parameter: string, quantity: 'energy' | 'width', colours: ChartColours): EChartsCoreOption {
  const y = (p: { energy: number; width: number }) => (quantity === 'energy' ? p.energy : p.width);
  // A log axis cannot show Γ = 0 (bound states): those points are left out of Γ(p) and said so in the legend note.
  const keep = (p: { width: number }) => quantity === 'energy' || p.width > 0;
  const marks = line.marks.flatMap((m) => {
    const p = markPoint(line, m);
    return p && keep(p) ? [{ value: [p.value, y(p)], name: markLabels[m.kind] }] : [];
  });
  return {
    animation: false,
    grid: { left: 72, right: 24, top: 24, bottom: 56 },
    tooltip: { trigger: 'item' },
    xAxis: { type: 'value', name: parameter, nameLocation: 'middle', nameGap: 32, scale: true },
    yAxis:
      quantity === 'energy'
        ? { type: 'value', name: 'E (meV)', nameLocation: 'middle', nameGap: 56, scale: true }
        : { type: 'log', name: 'Γ (meV, log)', nameLocation: 'middle', nameGap: 56 },
    series: [
      ...line.trajectories.map((t) => ({
        type: 'line',
        name: `Trajectory ${t.id}`,
        data: t.points.filter(keep).map((p) => [p.value, y(p)]),
        symbolSize: 5,
        lineStyle: { width: 1.5 },
      })),
      {
        type: 'scatter',
        name: 'Marks',
        symbol: 'diamond',
        symbolSize: 14,
        itemStyle: { color: 'transparent', borderColor: colours.error, borderWidth: 2 },
        label: { show: true, position: 'top', formatter: '{b}', color: colours.error, fontSize: 11 },
        data: marks,
        z: 3,
      },
    ],
  };
}

/** A histogram (bin edges and counts) as bars over the bins (the nominal value is stated beside the chart). */
export function histogramOptions(histogram: { edges: number[]; counts: number[] }, label: string, colours: ChartColours): EChartsCoreOption {
  const bins = histogram.counts.map((_, i) => {
    const a = histogram.edges[i] ?? 0;
    return fmt(a + ((histogram.edges[i + 1] ?? a) - a) / 2);
  });
  return {
    animation: false,
    grid: { left: 56, right: 16, top: 16, bottom: 56 },
    tooltip: {
      trigger: 'item',
      formatter: (item: { dataIndex: number; value: number }) =>
        `${fmt(histogram.edges[item.dataIndex] ?? 0)} – ${fmt(histogram.edges[item.dataIndex + 1] ?? 0)}: ${item.value}`,
    },
    xAxis: { type: 'category', data: bins, name: label, nameLocation: 'middle', nameGap: 32 },
    yAxis: { type: 'value', name: 'Realisations', minInterval: 1 },
    series: [{ type: 'bar', data: histogram.counts, barCategoryGap: '8%', itemStyle: { color: colours.primary } }],
  };
}

function fmt(x: number): string {
  return Number.isFinite(x) ? Number(x.toPrecision(4)).toString() : String(x);
}
