import type { EChartsCoreOption } from 'echarts/core';
import type { ChartColours } from '../core/charts/chart-colours';
import { type ConductanceUnit, type SpectrumQuantity, conductanceUnitLabels, spectrumCurves } from './spectrum-curves';
import type { Spectrum } from '../../../shared/api/runs';

/** What else to draw: the conductance instead of T, the current-conservation residual on a second axis. */
export interface SpectrumView {
  quantity?: SpectrumQuantity;
  unit?: ConductanceUnit;
  residual?: boolean;
  /** R_ℓ(E) per lead, when the run stored it. */
  reflection?: { lead: string; values: number[] }[] | null;
  /** The x axis's name: 'E (meV)', or 'f (GHz)' for a microwave run (its energies given as frequencies). */
  xName?: string;
}

/**
 * echarts option for the transmission spectrum T(ℓ→ℓ′)(E) or the conductance G:
 * one line per lead pair (one for a pair equal both ways, see spectrum-curves.ts),
 * named by the leads' names where known, reflection per lead and the current
 * residual on request, pole energies as dotted vertical markers
 * (labelled with their index where there is room) and channel thresholds as dashed
 * ones, where steps in T are expected.
 */
export function transmissionOptions(
  spectrum: Spectrum,
  poles: readonly { energy: number }[],
  thresholds: readonly number[],
  colours: ChartColours,
  leadNames: readonly string[] = [],
  view: SpectrumView = {},
): EChartsCoreOption {
  const quantity = view.quantity ?? 'transmission';
  const { curves } = spectrumCurves(spectrum, leadNames, quantity, view.unit);
  const c = colours;
  const palette = [c.primary, c.tertiary, c.secondary, c.error, c.outline];
  const emin = spectrum.energies[0];
  const emax = spectrum.energies[spectrum.energies.length - 1];
  const inside = (e: number) => e >= emin && e <= emax;
  const axisText = { color: c.onSurfaceVariant };
  const labelled = labelledPoles(
    poles.map((p) => p.energy),
    emin,
    emax,
  );
  return {
    animation: false,
    color: palette,
    grid: { left: 64, right: view.residual ? 76 : 24, top: 56, bottom: 80 },
    legend: { top: 4, textStyle: { color: c.onSurface } },
    tooltip: { trigger: 'axis', valueFormatter: (v: number) => (typeof v === 'number' ? v.toFixed(4) : String(v)) },
    dataZoom: [{ type: 'inside' }, { type: 'slider', height: 18, bottom: 8 }],
    xAxis: {
      type: 'value',
      name: view.xName ?? 'E (meV)',
      nameLocation: 'middle',
      nameGap: 30,
      min: emin,
      max: emax,
      axisLabel: axisText,
      nameTextStyle: axisText,
    },
    yAxis: [
      {
        type: 'value',
        name: quantity === 'conductance' ? `conductance G (${conductanceUnitLabels[view.unit ?? '2e2/h']})` : 'transmission T',
        nameLocation: 'middle',
        nameGap: 40,
        min: 0,
        axisLabel: axisText,
        nameTextStyle: axisText,
        splitLine: { lineStyle: { color: c.outlineVariant } },
      },
      ...(view.residual
        ? [
            {
              type: 'log',
              name: 'current residual',
              nameLocation: 'middle',
              nameGap: 44,
              position: 'right',
              axisLabel: axisText,
              nameTextStyle: axisText,
              splitLine: { show: false },
            },
          ]
        : []),
    ],
    series: [
      ...curves.map((curve, k) => ({
        name: curve.name,
        type: 'line',
        showSymbol: false,
        lineStyle: { width: 1.5 },
        data: spectrum.energies.map((e, n) => [e, curve.values[n]]),
        ...(k === 0
          ? {
              markLine: {
                silent: true,
                symbol: 'none',
                data: [
                  ...poles
                    .map((p, n) => ({ p, n }))
                    .filter(({ p }) => inside(p.energy))
                    .map(({ p, n }) => ({
                      xAxis: p.energy,
                      label: labelled.has(n) ? { formatter: `${n + 1}`, color: c.error, fontSize: 10 } : { show: false },
                      lineStyle: { type: 'dotted', color: c.error },
                    })),
                  ...thresholds.filter(inside).map((x) => ({ xAxis: x, label: { show: false }, lineStyle: { type: 'dashed', color: c.outline } })),
                ],
              },
            }
          : {}),
      })),
      ...(view.reflection ?? []).map((r) => ({
        name: `R(${r.lead})`,
        type: 'line',
        showSymbol: false,
        lineStyle: { width: 1.2, type: 'dashed' },
        data: spectrum.energies.map((e, n) => [e, r.values[n] ?? null]),
      })),
      ...(view.residual
        ? [
            {
              name: 'current residual',
              type: 'line',
              yAxisIndex: 1,
              showSymbol: false,
              lineStyle: { width: 1, type: 'dotted', color: c.outline },
              itemStyle: { color: c.outline },
              // A log axis cannot show 0: exact conservation is drawn at 1e-16.
              data: spectrum.energies.map((e, n) => [e, Math.max(1e-16, spectrum.residual[n] ?? 1e-16)]),
            },
          ]
        : []),
    ],
  };
}

/**
 * Which pole markers get their index as a label: one at least 1/30 of the window
 * from the last labelled one, so dense spectra (dozens of poles) do not print their
 * indices on top of each other; the unlabelled ones keep their dotted line.
 */
export function labelledPoles(energies: readonly number[], emin: number, emax: number): Set<number> {
  const gap = (emax - emin) / 30;
  const out = new Set<number>();
  let last = -Infinity;
  energies
    .map((e, n) => ({ e, n }))
    .filter(({ e }) => e >= emin && e <= emax)
    .sort((a, b) => a.e - b.e)
    .forEach(({ e, n }) => {
      if (e - last >= gap) {
        out.add(n);
        last = e;
      }
    });
  return out;
}
