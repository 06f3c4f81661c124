import type { EChartsCoreOption } from 'echarts/core';
import type { ChartColours } from './chart-colours';

/** One pole z = E − iΓ/2 to draw (meV), with the flags that change how it is drawn. */
export interface PlanePole {
  energy: number;
  width: number;
  id?: string;
  bound?: boolean;
  nearThreshold?: boolean;
  overlapping?: boolean;
  /** Above the model's lattice-validity limit: drawn with a ring. */
  aboveLimit?: boolean;
}

export interface PlaneInput {
  poles: readonly PlanePole[];
  thresholds: readonly number[];
  window: { emin: number; emax: number; gammaMax?: number } | null;
  /** The pole to single out (the resonance detail page). */
  highlightId?: string | null;
  /** The model's lattice-validity limit in the poles' unit, drawn as a line; null: unknown. */
  validityLimit?: number | null;
  /** Unit of E and Γ on the axes: meV, or mm⁻² (k²) for a microwave model. */
  unit?: string;
  colours: ChartColours;
}

/** The axis words of a pole chart: energy (z = E − iΓ/2) or, in GHz, frequency (f − iΓ_f/2) for a microwave run. */
export function poleAxisWords(unit: string): { re: string; im: string; x: string; width: string; half: string } {
  return unit === 'GHz'
    ? { re: 'Re f', im: 'Im f = −Γ_f/2', x: 'f', width: 'width Γ_f', half: 'Γ_f/2' }
    : { re: 'Re z = E', im: 'Im z = −Γ/2', x: 'E', width: 'width Γ', half: 'Γ/2' };
}

/**
 * echarts option for the complex energy plane: Re z = E on x, Im z = −Γ/2 on y
 * (both meV), poles below the real axis, channel thresholds as vertical lines and
 * the searched window as a shaded box. Bound states sit on the real axis.
 */
export function polePlaneOptions(input: PlaneInput): EChartsCoreOption {
  const c = input.colours;
  const u = input.unit ?? 'meV';
  const words = poleAxisWords(u);
  const point = (p: PlanePole) => ({ value: [p.energy, -p.width / 2], id: p.id });
  const isolated = input.poles.filter((p) => !p.bound && !p.nearThreshold && !p.overlapping && p.id !== input.highlightId);
  const nearThreshold = input.poles.filter((p) => !p.bound && p.nearThreshold && p.id !== input.highlightId);
  const overlapping = input.poles.filter((p) => !p.bound && !p.nearThreshold && p.overlapping && p.id !== input.highlightId);
  const bound = input.poles.filter((p) => p.bound && p.id !== input.highlightId);
  const highlighted = input.poles.filter((p) => input.highlightId != null && p.id === input.highlightId);
  const w = input.window;
  const gammaMax = w?.gammaMax;
  const windowArea =
    w && gammaMax != null
      ? [
          [
            { xAxis: w.emin, yAxis: -gammaMax / 2 },
            { xAxis: w.emax, yAxis: 0 },
          ],
        ]
      : w
        ? [[{ xAxis: w.emin }, { xAxis: w.emax }]]
        : [];
  const axisText = { color: c.onSurfaceVariant };
  return {
    animation: false,
    grid: { left: 72, right: 24, top: 40, bottom: 56 },
    legend: { top: 4, textStyle: { color: c.onSurface } },
    tooltip: {
      trigger: 'item',
      formatter: (p: { value: [number, number]; seriesName: string }) =>
        `${p.seriesName}<br>${words.x} = ${p.value[0].toPrecision(6)} ${u}<br>${words.half} = ${(-p.value[1]).toPrecision(3)} ${u}`,
    },
    xAxis: {
      type: 'value',
      name: `${words.re} (${u})`,
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
      type: 'value',
      name: `${words.im} (${u})`,
      nameLocation: 'middle',
      nameGap: 52,
      max: 0,
      // The whole window shows, its lower edge Im z = −Γmax/2 included.
      min: gammaMax != null ? -(gammaMax / 2) * 1.08 : undefined,
      // The padded minimum is no round number: its label would crowd the one above it.
      axisLabel: { ...axisText, showMinLabel: gammaMax == null },
      nameTextStyle: axisText,
      splitLine: { lineStyle: { color: c.outlineVariant } },
    },
    series: [
      {
        name: 'Resonances',
        type: 'scatter',
        symbolSize: 9,
        itemStyle: { color: c.primary },
        data: isolated.map(point),
        markLine: {
          silent: true,
          symbol: 'none',
          label: { formatter: 'threshold', color: c.onSurfaceVariant, fontSize: 10 },
          lineStyle: { type: 'dashed', color: c.outline },
          data: [
            ...input.thresholds.map((x) => ({ xAxis: x })),
            ...(gammaMax != null
              ? [
                  {
                    yAxis: -gammaMax / 2,
                    label: { formatter: 'Γmax/2', color: c.primary, fontSize: 10, position: 'insideEndBottom' },
                    lineStyle: { type: 'solid', color: c.primary },
                  },
                ]
              : []),
          ],
        },
        markArea: {
          silent: true,
          itemStyle: { color: c.primary, opacity: 0.06, borderColor: c.primary, borderWidth: 1, borderType: 'dotted' },
          data: windowArea,
        },
      },
      { name: 'Near a threshold', type: 'scatter', symbol: 'triangle', symbolSize: 11, itemStyle: { color: c.tertiary }, data: nearThreshold.map(point) },
      { name: 'Overlapping', type: 'scatter', symbol: 'rect', symbolSize: 9, itemStyle: { color: c.secondary }, data: overlapping.map(point) },
      { name: 'Bound', type: 'scatter', symbol: 'diamond', symbolSize: 11, itemStyle: { color: c.onSurface }, data: bound.map(point) },
      {
        name: 'This resonance',
        type: 'scatter',
        symbol: 'circle',
        symbolSize: 16,
        itemStyle: { color: c.error, borderColor: c.surface, borderWidth: 2 },
        data: highlighted.map(point),
      },
      ...validityOverlay(input.poles, input.validityLimit, point, c),
    ].filter((s) => s.name === 'Resonances' || s.name === 'Above the lattice limit' || (s['data'] as unknown[]).length > 0),
  };
}

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
