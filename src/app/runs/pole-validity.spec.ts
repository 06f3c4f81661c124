import type { ChartColours } from '../core/charts/chart-colours';
import { polePlaneOptions } from '../core/charts/pole-plane-options';
import { microwaveCells, validitySummary } from './pole-validity';
import type { ResonanceRow } from '../../../shared/api/resonance-row';

const colours = new Proxy({}, { get: () => '#000' }) as ChartColours;
const row = (over: Partial<ResonanceRow>) => ({ energy: 8, width: 0.01, bound: false, ...over }) as ResonanceRow;

describe('lattice validity on the run page', () => {
  it('counts the poles above the trusted energy in meV', () => {
    const v = { limit: 8.69, wavelengthSpacings: 9.2 };
    const poles = [
      row({ validity: { ...v, aboveLimit: false } }),
      row({ validity: { ...v, aboveLimit: true } }),
      row({ validity: { ...v, aboveLimit: true } }),
    ];
    expect(validitySummary(poles)).toBe('2 of 3 poles lie above the energy where the lattice is trusted (8.690 meV).');
  });

  it('states a microwave limit in GHz, and says nothing for rows without validity figures', () => {
    const mw = row({
      physics: 'microwave',
      validity: { limit: 1.2, wavelengthSpacings: 14, aboveLimit: false },
      microwave: { frequencyGhz: 4, widthMhz: 2, lifetimeNs: 0.08, quality: 2000, validityLimitGhz: 12.345 },
    });
    expect(validitySummary([mw])).toBe('0 of 1 pole lie above the frequency where the lattice is trusted (12.35 GHz).');
    expect(validitySummary([row({})])).toBeNull();
  });

  it('shows a microwave pole from its stored figures, a bound mode as infinite', () => {
    const c = microwaveCells(row({ microwave: { frequencyGhz: 5.1234567, widthMhz: 1.23456, lifetimeNs: 0.12891, quality: 4150.2, validityLimitGhz: 20 } }))!;
    expect(c).toEqual({ frequency: '5.123457 GHz', width: '1.235 MHz', lifetime: '0.1289 ns', quality: '4150' });
    const b = microwaveCells(row({ microwave: { frequencyGhz: 3, widthMhz: 0, lifetimeNs: null, quality: null, validityLimitGhz: 20 } }))!;
    expect(b.lifetime).toContain('∞');
    expect(b.quality).toBe('∞');
    expect(microwaveCells(row({ microwave: null }))).toBeNull();
  });

  it('rings the poles above the limit in the complex plane and draws the limit', () => {
    const o = polePlaneOptions({
      poles: [
        { energy: 8, width: 0.01 },
        { energy: 9.5, width: 0.02, aboveLimit: true },
      ],
      thresholds: [],
      window: { emin: 7.5, emax: 10, gammaMax: 0.5 },
      validityLimit: 8.69,
      colours,
    }) as { series: { name: string; data: { value: number[] }[]; markLine?: { data: Record<string, unknown>[] } }[] };
    const ring = o.series.find((s) => s.name === 'Above the lattice limit')!;
    expect(ring.data.map((d) => d.value[0])).toEqual([9.5]);
    expect(ring.markLine!.data[0]['xAxis']).toBe(8.69);
  });

  it('names the axes in k² for a microwave model, meV otherwise', () => {
    const name = (unit?: string) => (polePlaneOptions({ poles: [], thresholds: [], window: null, unit, colours }) as { xAxis: { name: string } }).xAxis.name;
    expect(name('mm⁻² (k²)')).toBe('Re z = E (mm⁻² (k²))');
    expect(name()).toBe('Re z = E (meV)');
  });
});
