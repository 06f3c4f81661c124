import type { EChartsCoreOption } from 'echarts/core';
import type { PlaneInput, PlanePole } from './pole-plane-options';
import { poleAxisWords, validityOverlay } from './pole-plane-options';

/**
 * The range of the log-width axis (meV): from a little below the smallest width in
 * the window up to Γmax (or the largest width when the window had none). Bound
 * states (Γ = 0) have no place on a log axis and are left out (counted by the caller).
 */
export function widthAxisRange(poles: readonly PlanePole[], gammaMax: number | undefined): { min: number; max: number } {
  const widths = poles.filter((p) => !p.bound && p.width > 0).map((p) => p.width);
  const largest = Math.max(gammaMax ?? 0, ...widths, 0);
  const smallest = widths.length ? Math.min(...widths) : largest > 0 ? largest / 1e3 : 1e-6;
  const max = 10 ** Math.ceil(Math.log10(largest > 0 ? largest : 1) + 1e-9);
  const min = 10 ** Math.floor(Math.log10(smallest) - 1e-9);
  return { min: Math.min(min, max / 10), max };
}

/**
 * echarts option for the log-width view of the poles: E on x, Γ on a log axis,
 * so widths from neV to meV are all apart (in the complex plane the narrow ones sit
 * on the real axis). The window's edges (E_min, E_max, Γmax) are drawn, channel
 * thresholds marked as dashed lines.
 */
export function poleWidthOptions(input: PlaneInput): EChartsCoreOption {
  const c = input.colours;
  const u = input.unit ?? 'meV';
  const words = poleAxisWords(u);
  const w = input.window;
  const range = widthAxisRange(input.poles, w?.gammaMax);
  const shown = input.poles.filter((p) => !p.bound && p.width > 0);
  const point = (p: PlanePole) => ({ value: [p.energy, p.width], id: p.id });
  const axisText = { color: c.onSurfaceVariant };
  const edge = { type: 'solid' as const, color: c.primary, width: 1 };
  const lit = (p: PlanePole) => input.highlightId != null && p.id === input.highlightId;
  const highlighted = shown.filter(lit);
  const groups: { name: string; symbol: string; colour: string; poles: PlanePole[] }[] = [
    { name: 'Resonances', symbol: 'circle', colour: c.primary, poles: shown.filter((p) => !p.nearThreshold && !p.overlapping && !lit(p)) },
    { name: 'Near a threshold', symbol: 'triangle', colour: c.tertiary, poles: shown.filter((p) => p.nearThreshold && !lit(p)) },
    { name: 'Overlapping', symbol: 'rect', colour: c.secondary, poles: shown.filter((p) => !p.nearThreshold && p.overlapping && !lit(p)) },
  ];
  return {
    animation: false,
    grid: { left: 80, right: 24, top: 40, bottom: 56 },
    legend: { top: 4, textStyle: { color: c.onSurface } },
    tooltip: {
      trigger: 'item',
      formatter: (p: { value: [number, number]; seriesName: string }) =>
        `${p.seriesName}<br>${words.x} = ${p.value[0].toPrecision(6)} ${u}<br>${words.width} = ${p.value[1].toPrecision(3)} ${u}`,
    },
    xAxis: {
      type: 'value',
      name: `${words.x} (${u})`,
      nameLocation: 'middle',
      nameGap: 32,
      scale: true,
      min: w ? w.emin - 0.02 * (w.emax - w.emin) : undefined,
      max: w ? w.emax + 0.02 * (w.emax - w.emin) : undefined,
      axisLabel: axisText,
      nameTextStyle: axisText,
      splitLine: { lineStyle: { color: c.outlineVariant } },
    },
    yAxis: {
      type: 'log',
      logBase: 10,
      name: `${words.width} (${u}, log)`,
      nameLocation: 'middle',
      nameGap: 60,
      min: range.min,
      max: range.max,
      axisLabel: { ...axisText, formatter: (v: number) => v.toExponential(0) },
      nameTextStyle: axisText,
      splitLine: { lineStyle: { color: c.outlineVariant } },
    },
    series: [
      ...groups.map((g, k) => ({
        name: g.name,
        type: 'scatter',
        symbol: g.symbol,
        symbolSize: g.symbol === 'circle' ? 9 : 11,
        itemStyle: { color: g.colour },
        data: g.poles.map(point),
        ...(k === 0
          ? {
              markLine: {
                silent: true,
                symbol: 'none',
                data: [
                  ...input.thresholds.map((x) => ({
                    xAxis: x,
                    label: { formatter: 'threshold', color: c.onSurfaceVariant, fontSize: 10 },
                    lineStyle: { type: 'dashed', color: c.outline },
                  })),
                  ...(w
                    ? [
                        { xAxis: w.emin, label: { formatter: `${words.x} min`, color: c.primary, fontSize: 10, position: 'insideStartTop' }, lineStyle: edge },
                        { xAxis: w.emax, label: { formatter: `${words.x} max`, color: c.primary, fontSize: 10, position: 'insideStartTop' }, lineStyle: edge },
                      ]
                    : []),
                  ...(w?.gammaMax != null
                    ? [{ yAxis: w.gammaMax, label: { formatter: 'Γmax', color: c.primary, fontSize: 10, position: 'insideEndTop' }, lineStyle: edge }]
                    : []),
                ],
              },
            }
          : {}),
      })),
      {
        name: 'This resonance',
        type: 'scatter',
        symbolSize: 16,
        itemStyle: { color: c.error, borderColor: c.surface, borderWidth: 2 },
        data: highlighted.map(point),
      },
      ...validityOverlay(shown, input.validityLimit, point, c),
    ].filter((s) => s.name === 'Resonances' || s.name === 'Above the lattice limit' || (s['data'] as unknown[]).length > 0),
  };
}
