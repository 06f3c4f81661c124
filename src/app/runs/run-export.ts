import Papa from 'papaparse';
import { resonanceCsvColumns, resonanceCsvHeader, resonanceJsonUnits } from '../../../shared/api/resonance-columns';
import { frequencyOfWavenumberSquared } from '../../../shared/units/microwave';
import { spectrumWarnings } from './spectrum-warnings';
import type { RunDetail } from '../../../shared/api/runs';

/**
 * A run's poles and spectrum as files, with the catalogue export's conventions
 * (server/catalogue/catalogue-export.ts): the poles with the very columns of the
 * catalogue export (shared/api/resonance-columns.ts: validity, microwave frequencies,
 * every dimension), the unit in every dimensional column's name, RFC 4180 lines
 * (CRLF), empty lifetime and quality cells for bound states (infinite), lists
 * "; "-separated in one cell, text cells that start like a formula escaped. JSON
 * files say their units and warnings at the top.
 */
function csv(fields: string[], data: unknown[][]): string {
  const text = Papa.unparse({ fields, data }, { newline: '\r\n', escapeFormulae: true });
  return text.endsWith('\r\n') ? text : `${text}\r\n`;
}

export function polesCsv(run: RunDetail): string {
  return csv(
    resonanceCsvHeader,
    run.poles.map((p) => resonanceCsvColumns.map(([, get]) => get(p))),
  );
}

export function polesJson(run: RunDetail): string {
  const items = run.poles.map(({ thumbnailUrl: _t, imageUrl: _i, ...rest }) => rest);
  return `${JSON.stringify({ run: runHead(run), units: resonanceJsonUnits, count: items.length, items }, null, 2)}\n`;
}

const safe = (name: string) => name.replace(/[^A-Za-z0-9]+/g, '_');
const leadName = (run: RunDetail, lead: number | string) => safe(typeof lead === 'number' ? (run.leads?.[lead]?.name ?? `lead${lead + 1}`) : lead);

/** Column name of one spectrum curve: T_source_to_drain (no unit: T counts channels). */
function spectrumColumn(run: RunDetail, k: number): string {
  const pair = run.spectrum!.pairs[k];
  return `T_${leadName(run, pair.from)}_to_${leadName(run, pair.to)}`;
}

/** Column name of one lead's reflection: R_source (no unit). */
function reflectionColumn(run: RunDetail, lead: number): string {
  return `R_${leadName(run, lead)}`;
}

/**
 * One row per sample point: the energy (energy_meV; for a microwave run frequency_GHz and
 * the raw k2_per_mm2), every T column, R per lead where the run stored it, and the
 * current-conservation residual.
 */
export function spectrumCsv(run: RunDetail): string {
  const s = run.spectrum;
  const eps = run.microwave?.permittivity;
  const head = eps ? ['frequency_GHz', 'k2_per_mm2'] : ['energy_meV'];
  if (!s) return csv(head, []);
  const reflection = s.reflection ?? [];
  const fields = [...head, ...s.pairs.map((_, k) => spectrumColumn(run, k)), ...reflection.map((_, l) => reflectionColumn(run, l)), 'current_residual'];
  const data = s.energies.map((e, n) => [
    ...(eps ? [frequencyOfWavenumberSquared(e, eps), e] : [e]),
    ...s.transmission.map((row) => row[n] ?? null),
    ...reflection.map((row) => row[n] ?? null),
    s.residual[n] ?? null,
  ]);
  return csv(fields, data);
}

export function spectrumJson(run: RunDetail): string {
  const s = run.spectrum;
  const eps = run.microwave?.permittivity;
  const body = {
    run: runHead(run),
    units: {
      energies: eps ? 'k² in mm⁻² (the lattice eigenvalue); frequenciesGhz gives f = c·√k²/(2π√ε_r)' : 'meV',
      ...(eps ? { frequenciesGhz: 'GHz' } : {}),
      transmission: 'no unit (T summed over channels)',
      reflection: 'no unit (R per lead in `leads` order, summed over its open channels)',
      residual: 'relative, no unit',
    },
    warnings: spectrumWarnings(run),
    leads: run.leads?.map((l) => l.name) ?? [],
    ...(eps ? { permittivity: eps, frequenciesGhz: (s?.energies ?? []).map((e) => frequencyOfWavenumberSquared(e, eps)) } : {}),
    energies: s?.energies ?? [],
    pairs: s?.pairs ?? [],
    transmission: s?.transmission ?? [],
    reflection: s?.reflection ?? null,
    residual: s?.residual ?? [],
  };
  return `${JSON.stringify(body, null, 2)}\n`;
}

function runHead(run: RunDetail) {
  return {
    id: run.id,
    kind: run.kind,
    model: { id: run.modelId, name: run.modelName, version: run.modelVersion },
    window: run.window,
    engineVersion: run.engineVersion,
    certified: run.certificate?.certified ?? null,
    finishedAt: run.finishedAt,
  };
}

/** A file name from the model's name: "dot-a-v2-poles.csv". */
export function exportFileName(run: RunDetail, what: 'poles' | 'spectrum', ext: 'csv' | 'json'): string {
  const base = `${run.modelName}-v${run.modelVersion}`
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-|-$/g, '');
  return `${base || 'run'}-${what}.${ext}`;
}

/** Hands a text to the browser as a download. */
export function saveText(text: string, name: string, type: string): void {
  const url = URL.createObjectURL(new Blob([text], { type }));
  const a = document.createElement('a');
  a.href = url;
  a.download = name;
  a.click();
  setTimeout(() => URL.revokeObjectURL(url), 1000);
}
