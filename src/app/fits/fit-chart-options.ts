import type { EChartsCoreOption } from 'echarts/core';
import type { ChartColours } from '../core/charts/chart-colours';
import type { FitResult } from '../../../shared/api/fits';

/**
 * The fit workspace chart: the data (points), the fitted curve and each peak on the
 * background (lines) on top, the residuals underneath on the same energy axis. The range
 * to fit is chosen by dragging across the data (a lineX brush on the upper energy axis) or
 * with the slider under both; the view follows the range.
 */
export function fitChartOptions(
  data: { x: number[]; y: number[] },
  result: FitResult | null,
  range: { from: number; to: number } | null,
  c: ChartColours,
): EChartsCoreOption {
  const points = data.x.map((x, i) => [x, data.y[i]]);
  const series: Record<string, unknown>[] = [
    { name: 'data', type: 'scatter', symbolSize: 4, data: points, itemStyle: { color: c.onSurfaceVariant }, xAxisIndex: 0, yAxisIndex: 0 },
  ];
  if (result) {
    const { x, fit, background, components, residuals } = result.curve;
    series.push({
      name: 'fit',
      type: 'line',
      showSymbol: false,
      data: x.map((v, i) => [v, fit[i]]),
      lineStyle: { color: c.primary, width: 2 },
      itemStyle: { color: c.primary },
      xAxisIndex: 0,
      yAxisIndex: 0,
    });
    components.forEach((comp, k) =>
      series.push({
        name: `peak ${k + 1}`,
        type: 'line',
        showSymbol: false,
        data: x.map((v, i) => [v, background[i] + comp[i]]),
        lineStyle: { color: k % 2 ? c.secondary : c.tertiary, type: 'dashed', width: 1.5 },
        itemStyle: { color: k % 2 ? c.secondary : c.tertiary },
        xAxisIndex: 0,
        yAxisIndex: 0,
      }),
    );
    series.push({
      name: 'residuals',
      type: 'scatter',
      symbolSize: 3,
      data: x.map((v, i) => [v, residuals[i]]),
      itemStyle: { color: c.error },
      xAxisIndex: 1,
      yAxisIndex: 1,
    });
  }
  const xmin = data.x.length ? Math.min(...data.x) : 0;
  const xmax = data.x.length ? Math.max(...data.x) : 1;
  return {
    animation: false,
    legend: { top: 0, textStyle: { color: c.onSurface } },
    tooltip: { trigger: 'axis' },
    grid: [
      { left: 70, right: 24, top: 36, height: '52%' },
      { left: 70, right: 24, top: '70%', height: '14%' },
    ],
    xAxis: [
      { type: 'value', min: xmin, max: xmax, gridIndex: 0, axisLabel: { show: false }, axisLine: { lineStyle: { color: c.outline } } },
      {
        type: 'value',
        min: xmin,
        max: xmax,
        gridIndex: 1,
        name: 'energy E (meV)',
        nameLocation: 'middle',
        nameGap: 26,
        axisLine: { lineStyle: { color: c.outline } },
        axisLabel: { color: c.onSurfaceVariant },
      },
    ],
    yAxis: [
      {
        type: 'value',
        gridIndex: 0,
        scale: true,
        name: 'transmission T',
        nameLocation: 'middle',
        nameGap: 50,
        axisLabel: { color: c.onSurfaceVariant },
        splitLine: { lineStyle: { color: c.outlineVariant } },
      },
      {
        type: 'value',
        gridIndex: 1,
        scale: true,
        name: 'residual',
        nameLocation: 'middle',
        nameGap: 50,
        axisLabel: { color: c.onSurfaceVariant },
        splitLine: { show: false },
      },
    ],
    brush: {
      xAxisIndex: 0,
      brushType: 'lineX',
      brushMode: 'single',
      transformable: false,
      throttleType: 'debounce',
      brushStyle: { color: 'rgba(120,120,120,0.15)', borderColor: c.primary, borderWidth: 1 },
      outOfBrush: { colorAlpha: 1 },
    },
    dataZoom: [
      {
        type: 'slider',
        xAxisIndex: [0, 1],
        filterMode: 'none',
        bottom: 4,
        height: 22,
        startValue: range?.from ?? xmin,
        endValue: range?.to ?? xmax,
        labelFormatter: (v: number) => v.toPrecision(6),
      },
    ],
    series,
  };
}
