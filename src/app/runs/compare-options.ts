import type { EChartsCoreOption } from 'echarts/core';
import type { ChartColours } from '../core/charts/chart-colours';
import { type PlanePole, poleAxisWords } from '../core/charts/pole-plane-options';
import { widthAxisRange } from '../core/charts/pole-width-options';
import { type SpectrumQuantity, spectrumCurves } from './spectrum-curves';
import type { Spectrum } from '../../../shared/api/runs';

export interface ComparedRun {
  label: string;
  poles: readonly PlanePole[];
  spectrum: Spectrum | null;
  leadNames: readonly string[];
  /** Unit of the poles and the spectrum's axis: meV, or GHz for a microwave run (poles as Re f and Γ_f). */
  unit?: string;
}

/** Two runs' poles in one log-width view (E, Γ on a log axis): A as circles, B as diamonds. */
export function overlayPolesOptions(a: ComparedRun, b: ComparedRun, colours: ChartColours, view: 'width' | 'plane' = 'width'): EChartsCoreOption {
  const c = colours;
  const axisText = { color: c.onSurfaceVariant };
  const all = [...a.poles, ...b.poles];
  const range = widthAxisRange(all, undefined);
  const y = (p: PlanePole) => (view === 'width' ? p.width : -p.width / 2);
  const keep = (p: PlanePole) => view === 'plane' || (p.width > 0 && !p.bound);
  const u = a.unit ?? 'meV';
  const words = poleAxisWords(u);
  return {
    animation: false,
    grid: { left: 80, right: 24, top: 40, bottom: 56 },
    legend: { top: 4, textStyle: { color: c.onSurface } },
    tooltip: {
      trigger: 'item',
      formatter: (p: { seriesName: string; value: number[] }) =>
        `${p.seriesName}<br>${words.x} = ${p.value[0].toPrecision(6)} ${u}<br>${view === 'width' ? words.width : words.im} = ${p.value[1].toPrecision(3)} ${u}`,
    },
    xAxis: { type: 'value', name: `${words.x} (${u})`, nameLocation: 'middle', nameGap: 32, scale: true, axisLabel: axisText, nameTextStyle: axisText },
    yAxis:
      view === 'width'
        ? {
            type: 'log',
            name: `${words.width} (${u}, log)`,
            nameLocation: 'middle',
            nameGap: 60,
            min: range.min,
            max: range.max,
            axisLabel: { ...axisText, formatter: (v: number) => v.toExponential(0) },
            nameTextStyle: axisText,
          }
        : { type: 'value', name: `${words.im} (${u})`, nameLocation: 'middle', nameGap: 60, max: 0, axisLabel: axisText, nameTextStyle: axisText },
    series: [
      {
        name: a.label,
        type: 'scatter',
        symbol: 'circle',
        symbolSize: 10,
        itemStyle: { color: c.primary, opacity: 0.8 },
        data: a.poles.filter(keep).map((p) => [p.energy, y(p)]),
      },
      {
        name: b.label,
        type: 'scatter',
        symbol: 'diamond',
        symbolSize: 11,
        itemStyle: { color: c.tertiary, opacity: 0.8 },
        data: b.poles.filter(keep).map((p) => [p.energy, y(p)]),
      },
    ],
  };
}

/** Two runs' spectra on one axis: A solid, B dashed, each pair as spectrum-curves.ts draws it. */
export function overlaySpectraOptions(a: ComparedRun, b: ComparedRun, colours: ChartColours, quantity: SpectrumQuantity = 'transmission'): EChartsCoreOption {
  const c = colours;
  const axisText = { color: c.onSurfaceVariant };
  const series = [a, b].flatMap((run, k) =>
    run.spectrum
      ? spectrumCurves(run.spectrum, run.leadNames, quantity).curves.map((curve) => ({
          name: `${run.label}: ${curve.name}`,
          type: 'line',
          showSymbol: false,
          // A in the primary colour, B in the tertiary one, as in the pole overlay.
          lineStyle: { width: 1.5, type: k === 0 ? 'solid' : 'dashed', color: k === 0 ? c.primary : c.tertiary },
          itemStyle: { color: k === 0 ? c.primary : c.tertiary },
          data: run.spectrum!.energies.map((e, n) => [e, curve.values[n]]),
        }))
      : [],
  );
  return {
    animation: false,
    color: [c.primary, c.secondary, c.tertiary, c.error],
    grid: { left: 64, right: 24, top: 56, bottom: 56 },
    legend: { top: 4, type: 'scroll', textStyle: { color: c.onSurface } },
    tooltip: { trigger: 'axis' },
    dataZoom: [{ type: 'inside' }],
    xAxis: {
      type: 'value',
      name: a.unit === 'GHz' ? 'f (GHz)' : 'E (meV)',
      nameLocation: 'middle',
      nameGap: 30,
      scale: true,
      axisLabel: axisText,
      nameTextStyle: axisText,
    },
    yAxis: {
      type: 'value',
      name: quantity === 'conductance' ? 'G (2e²/h)' : 'transmission T',
      nameLocation: 'middle',
      nameGap: 40,
      min: 0,
      axisLabel: axisText,
      nameTextStyle: axisText,
    },
    series,
  };
}
