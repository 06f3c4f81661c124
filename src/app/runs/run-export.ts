import Papa from 'papaparse';
import { spectrumWarnings } from './spectrum-warnings';
import type { ResonanceRow } from '../../../shared/api/resonance-row';
import type { RunDetail } from '../../../shared/api/runs';

/**
 * A run's poles and spectrum as files, with the catalogue export's conventions
 * (server/catalogue/catalogue-export.ts): the unit in every dimensional column's
 * name, RFC 4180 lines (CRLF), empty lifetime and quality cells for bound states
 * (infinite), lists "; "-separated in one cell, text cells that start like a
 * formula escaped. JSON files say their units and warnings at the top.
 */
const poleColumns: [string, (r: ResonanceRow) => string | number | boolean | null][] = [
  ['energy_meV', (r) => r.energy],
  ['width_meV', (r) => r.width],
  ['lifetime_ps', (r) => r.lifetimePs],
  ['quality', (r) => r.quality],
  ['petermann', (r) => r.petermann],
  ['residual', (r) => r.residual],
  ['partial_widths_meV', (r) => r.partialWidths.map((p) => `${p.lead}=${p.width}`).join('; ')],
  ['bound', (r) => r.bound],
  ['near_threshold', (r) => r.nearThreshold],
  ['overlapping', (r) => r.overlapping],
  ['model_name', (r) => r.modelName],
  ['model_version', (r) => r.modelVersion],
  ['field_T', (r) => r.fieldT],
  ['resonance_id', (r) => r.id],
  ['run_id', (r) => r.runId],
];

const poleUnits = {
  energy: 'meV',
  width: 'meV',
  lifetimePs: 'ps (null: infinite, bound state)',
  quality: 'E/Γ, no unit (null: infinite, bound state)',
  partialWidths: 'meV',
  fieldT: 'T',
};

function csv(fields: string[], data: unknown[][]): string {
  const text = Papa.unparse({ fields, data }, { newline: '\r\n', escapeFormulae: true });
  return text.endsWith('\r\n') ? text : `${text}\r\n`;
}

export function polesCsv(run: RunDetail): string {
  return csv(
    poleColumns.map(([name]) => name),
    run.poles.map((p) => poleColumns.map(([, get]) => get(p))),
  );
}

export function polesJson(run: RunDetail): string {
  const items = run.poles.map(({ thumbnailUrl: _t, imageUrl: _i, ...rest }) => rest);
  return `${JSON.stringify({ run: runHead(run), units: poleUnits, count: items.length, items }, null, 2)}\n`;
}

/** Column name of one spectrum curve: T_source_to_drain (no unit: T counts channels). */
export function spectrumColumn(run: RunDetail, k: number): string {
  const pair = run.spectrum!.pairs[k];
  const name = (lead: number | string) => {
    const n = typeof lead === 'number' ? (run.leads?.[lead]?.name ?? `lead${lead + 1}`) : lead;
    return n.replace(/[^A-Za-z0-9]+/g, '_');
  };
  return `T_${name(pair.from)}_to_${name(pair.to)}`;
}

/** One row per energy: energy_meV, every T column, the current-conservation residual. */
export function spectrumCsv(run: RunDetail): string {
  const s = run.spectrum;
  if (!s) return csv(['energy_meV'], []);
  const fields = ['energy_meV', ...s.pairs.map((_, k) => spectrumColumn(run, k)), 'current_residual'];
  const data = s.energies.map((e, n) => [e, ...s.transmission.map((row) => row[n] ?? null), s.residual[n] ?? null]);
  return csv(fields, data);
}

export function spectrumJson(run: RunDetail): string {
  const s = run.spectrum;
  const body = {
    run: runHead(run),
    units: { energies: 'meV', transmission: 'no unit (T summed over channels)', residual: 'relative, no unit' },
    warnings: spectrumWarnings(run),
    leads: run.leads?.map((l) => l.name) ?? [],
    energies: s?.energies ?? [],
    pairs: s?.pairs ?? [],
    transmission: s?.transmission ?? [],
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
