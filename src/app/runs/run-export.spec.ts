import Papa from 'papaparse';
import { exportFileName, polesCsv, polesJson, spectrumCsv, spectrumJson } from './run-export';
import type { ResonanceRow } from '../../../shared/api/resonance-row';
import type { RunDetail } from '../../../shared/api/runs';
import { resonanceCsvHeader } from '../../../shared/api/resonance-columns';
import { fixtureId, sampleResonance, sampleRunDetail } from '../core/testing/answer-fixtures';

const pole = (energy: number, width: number, extra: Partial<ResonanceRow> = {}): ResonanceRow =>
  sampleResonance({
    id: fixtureId(Math.round(energy * 10)),
    family: 'ellipse',
    keyDimensions: {},
    material: 'gaas',
    energy,
    width,
    lifetimePs: width > 0 ? 0.658 / width : null,
    quality: width > 0 ? energy / width : null,
    partialWidths: [
      { lead: 'source', width: width / 2 },
      { lead: 'drain', width: width / 2 },
    ],
    bound: width === 0,
    notes: '=cmd',
    createdAt: '2026-12-02T10:00:00Z',
    ...extra,
  });

const run: RunDetail = sampleRunDetail({
  status: 'completed',
  progress: null,
  window: { emin: 1, emax: 3, gammaMax: 0.5 },
  startedAt: null,
  finishedAt: '2026-12-02T10:01:00Z',
  engineVersion: 'e1',
  resonanceCount: 2,
  certificate: { pieces: [], certified: true, summary: '' },
  poles: [pole(1.5, 0.01), pole(2.5, 0)],
  spectrum: {
    energies: [1, 2],
    pairs: [
      { from: 0, to: 1 },
      { from: 1, to: 0 },
    ],
    transmission: [
      [0.1, 0.2],
      [0.1, 0.2],
    ],
    residual: [1e-13, 2e-13],
    reflection: null,
  },
  leads: [
    { name: 'source', side: 'left', width: 10 },
    { name: 'drain', side: 'right', width: 10 },
  ],
  stats: { spectrumBudgetExhausted: true },
});

describe('run downloads', () => {
  it('writes the poles as CSV with units in the column names, bound states with empty lifetime and Q', () => {
    const rows = Papa.parse<Record<string, string>>(polesCsv(run), { header: true, skipEmptyLines: true });
    expect(rows.meta.fields!.slice(0, 4)).toEqual(['energy_meV', 'width_meV', 'lifetime_ps', 'quality']);
    expect(rows.data).toHaveLength(2);
    expect(Number(rows.data[0]['energy_meV'])).toBeCloseTo(1.5, 12);
    expect(rows.data[0]['partial_widths_meV']).toBe('source=0.005; drain=0.005');
    expect(rows.data[1]['lifetime_ps']).toBe('');
    expect(rows.data[1]['bound']).toBe('true');
    expect(polesCsv(run)).toContain('\r\n');
  });

  it('writes the spectrum as CSV, one column per lead pair, and says in JSON when the refinement ran out', () => {
    const rows = Papa.parse<Record<string, string>>(spectrumCsv(run), { header: true, skipEmptyLines: true });
    expect(rows.meta.fields).toEqual(['energy_meV', 'T_source_to_drain', 'T_drain_to_source', 'current_residual']);
    expect(Number(rows.data[1]['T_source_to_drain'])).toBeCloseTo(0.2, 12);
    const json = JSON.parse(spectrumJson(run));
    expect(json.units.energies).toBe('meV');
    expect(json.warnings[0]).toContain('refinement budget');
    const poles = JSON.parse(polesJson(run));
    expect(poles.count).toBe(2);
    expect(poles.units.width).toBe('meV');
    expect(poles.items[0].thumbnailUrl).toBeUndefined();
    expect(exportFileName(run, 'poles', 'csv')).toBe('dot-a-v2-poles.csv');
  });

  it('has the columns of the catalogue export for the poles, validity included', () => {
    const withValidity = {
      ...run,
      poles: [pole(1.5, 0.01, { validity: { limit: 1.2, wavelengthSpacings: 8.5, aboveLimit: true }, keyDimensions: { rx: 40, ry: 20, area: 2500 } })],
    } as RunDetail;
    const rows = Papa.parse<Record<string, string>>(polesCsv(withValidity), { header: true, skipEmptyLines: true });
    expect(rows.meta.fields).toEqual(resonanceCsvHeader);
    expect(rows.data[0]['above_validity_limit']).toBe('true');
    expect(rows.data[0]['validity_limit_meV']).toBe('1.2');
    expect(rows.data[0]['rx_nm']).toBe('40');
  });

  it('writes R per lead beside T, and the residual, when the run stored reflection', () => {
    const withR = {
      ...run,
      spectrum: {
        ...run.spectrum!,
        reflection: [
          [0.9, 0.8],
          [0.85, 0.75],
        ],
      },
    } as RunDetail;
    const rows = Papa.parse<Record<string, string>>(spectrumCsv(withR), { header: true, skipEmptyLines: true });
    expect(rows.meta.fields).toEqual(['energy_meV', 'T_source_to_drain', 'T_drain_to_source', 'R_source', 'R_drain', 'current_residual']);
    expect(Number(rows.data[1]['R_drain'])).toBeCloseTo(0.75, 12);
    expect(Number(rows.data[0]['current_residual'])).toBeCloseTo(1e-13, 20);
    const json = JSON.parse(spectrumJson(withR));
    expect(json.reflection).toEqual([
      [0.9, 0.8],
      [0.85, 0.75],
    ]);
  });

  it('gives the spectrum of a microwave run in GHz beside the raw k²', () => {
    // f = c·√k²/(2π√ε_r), c = 299.792458 mm/ns (SI); k² for 10 GHz in vacuum.
    const k2 = ((2 * Math.PI * 10) / 299.792458) ** 2;
    const mw = {
      ...run,
      microwave: { permittivity: 1, heightMm: 5, twoDimensionalLimitGhz: 30 },
      spectrum: { ...run.spectrum!, energies: [k2, 4 * k2] },
    } as RunDetail;
    const rows = Papa.parse<Record<string, string>>(spectrumCsv(mw), { header: true, skipEmptyLines: true });
    expect(rows.meta.fields!.slice(0, 2)).toEqual(['frequency_GHz', 'k2_per_mm2']);
    expect(Number(rows.data[0]['frequency_GHz'])).toBeCloseTo(10, 9);
    expect(Number(rows.data[1]['frequency_GHz'])).toBeCloseTo(20, 9);
    const json = JSON.parse(spectrumJson(mw));
    expect(json.frequenciesGhz[1]).toBeCloseTo(20, 9);
    expect(json.units.energies).toContain('k²');
  });
});
