import type { Response } from 'express';
import Papa from 'papaparse';
import type { ResonanceRecord } from './catalogue-repository.js';
import { toResonanceRow, type ResonanceRow } from './resonance-row.js';

export type ExportFormat = 'csv' | 'json';

/** Hands batches of matching rows to `onBatch` until it returns false; resolves to the number of rows read. */
export type RowSource = (onBatch: (rows: ResonanceRecord[]) => Promise<boolean>) => Promise<number>;

/**
 * CSV columns: the header names the unit of every dimensional quantity. Empty lifetime
 * and quality cells mean infinite (bound states). Lists (partial widths, tags) are
 * "; "-separated inside one cell so every resonance stays one line.
 */
const mw = (r: ResonanceRow) => r.physics === 'microwave';
/**
 * Electron rows fill the meV columns; microwave rows (physics = microwave) leave them empty
 * and fill the k², GHz, MHz and ns columns instead, so no column mixes two units.
 */
const csvColumns: [string, (r: ResonanceRow) => string | number | boolean | null][] = [
  ['energy_meV', (r) => (mw(r) ? null : r.energy)],
  ['width_meV', (r) => (mw(r) ? null : r.width)],
  ['lifetime_ps', (r) => r.lifetimePs],
  ['quality', (r) => r.quality],
  ['petermann', (r) => r.petermann],
  ['residual', (r) => r.residual],
  ['partial_widths_meV', (r) => (mw(r) ? null : r.partialWidths.map((p) => `${p.lead}=${p.width}`).join('; '))],
  ['bound', (r) => r.bound],
  ['near_threshold', (r) => r.nearThreshold],
  ['overlapping', (r) => r.overlapping],
  ['model_name', (r) => r.modelName],
  ['model_version', (r) => r.modelVersion],
  ['family', (r) => r.family],
  ['material', (r) => r.material],
  ['field_T', (r) => r.fieldT],
  ['width_nm', (r) => r.keyDimensions.width ?? null],
  ['height_nm', (r) => r.keyDimensions.height ?? null],
  ['radius_nm', (r) => r.keyDimensions.radius ?? null],
  ['length_nm', (r) => r.keyDimensions.length ?? null],
  // Added with the lattice validity, the per-family dimensions and the microwave mode
  // (between the dimensions and the tags; the first and last columns keep their places).
  ['physics', (r) => r.physics],
  ['frequency_GHz', (r) => r.microwave?.frequencyGhz ?? null],
  ['frequency_width_MHz', (r) => r.microwave?.widthMhz ?? null],
  ['lifetime_ns', (r) => r.microwave?.lifetimeNs ?? null],
  ['k2_per_mm2', (r) => (mw(r) ? r.energy : null)],
  ['k2_width_per_mm2', (r) => (mw(r) ? r.width : null)],
  ['validity_limit_meV', (r) => (mw(r) ? null : r.validity.limit)],
  ['validity_limit_GHz', (r) => r.microwave?.validityLimitGhz ?? null],
  ['wavelength_over_spacing', (r) => r.validity.wavelengthSpacings],
  ['above_validity_limit', (r) => r.validity.aboveLimit],
  ['rx_nm', (r) => r.keyDimensions.rx ?? null],
  ['ry_nm', (r) => r.keyDimensions.ry ?? null],
  ['inner_nm', (r) => r.keyDimensions.inner ?? null],
  ['outer_nm', (r) => r.keyDimensions.outer ?? null],
  ['area_nm2', (r) => r.keyDimensions.area ?? null],
  ['partial_widths_per_mm2', (r) => (mw(r) ? r.partialWidths.map((p) => `${p.lead}=${p.width}`).join('; ') : null)],
  ['tags', (r) => r.tags.join('; ')],
  ['notes', (r) => r.notes],
  ['created_at', (r) => r.createdAt],
  ['resonance_id', (r) => r.id],
  ['run_id', (r) => r.runId],
  ['model_id', (r) => r.modelId],
  ['source', (r) => r.source],
  ['fit_id', (r) => r.fitId],
];

export const csvHeader = csvColumns.map(([name]) => name);

/** Units of the JSON export's fields, written at its top so the file explains itself. */
const jsonUnits = {
  energy: 'meV',
  width: 'meV',
  lifetimePs: 'ps (null: infinite, bound state)',
  quality: 'E/Γ, or Re f/Γ_f for physics = microwave; no unit (null: infinite, bound state)',
  partialWidths: 'meV',
  physics: 'electrons, or microwave: then energy, width and partialWidths are k² in mm⁻², and `microwave` gives the frequencies',
  fieldT: 'T',
  keyDimensions: 'nm (area: nm²)',
  microwave: 'frequencyGhz GHz, widthMhz MHz (Γ_f = 2|Im f|), lifetimeNs ns, validityLimitGhz GHz',
  validity: 'limit in the unit of energy; wavelengthSpacings = λ/a at the resonance (null: infinite); aboveLimit: the lattice is not trusted there',
};

/**
 * RFC 4180 lines (CRLF). escapeFormulae prefixes text cells that start with =, +, -, @
 * so a spreadsheet does not run a note as a formula; numbers are left alone.
 */
function csvLines(rows: ResonanceRow[], header: boolean): string {
  const data = rows.map((r) => csvColumns.map(([, get]) => get(r)));
  const text = Papa.unparse({ fields: csvHeader, data }, { header, newline: '\r\n', escapeFormulae: true });
  if (text.length === 0) return '';
  return text.endsWith('\r\n') ? text : text + '\r\n';
}

/** Writes with back-pressure; false once the client has gone away. */
function write(res: Response, chunk: string): Promise<boolean> {
  if (res.destroyed || res.writableEnded) return Promise.resolve(false);
  if (res.write(chunk)) return Promise.resolve(true);
  return new Promise((resolve) => {
    const done = (ok: boolean) => {
      res.off('drain', onDrain);
      res.off('close', onClose);
      resolve(ok);
    };
    const onDrain = () => done(true);
    const onClose = () => done(false);
    res.on('drain', onDrain);
    res.on('close', onClose);
  });
}

function exportFileName(format: ExportFormat, now: Date): string {
  return `poleward-catalogue-${now.toISOString().slice(0, 10)}.${format}`;
}

/**
 * Streams the whole filtered catalogue as a download. Headers go out with the first
 * batch, so a failure before any row still answers a normal JSON error; a failure
 * after that cuts the connection, so a truncated file is never mistaken for a whole one.
 */
export async function sendCatalogueExport(
  res: Response,
  format: ExportFormat,
  source: RowSource,
  now = new Date(),
  /** The model versions the rows came from (JSON only), so an import can rebuild them. */
  models?: (modelVersionIds: string[]) => Promise<unknown[]>,
): Promise<void> {
  let started = false;
  const versionIds = new Set<string>();
  let first = true;
  const start = async (): Promise<boolean> => {
    if (started) return true;
    started = true;
    res.status(200);
    res.setHeader('Content-Type', format === 'csv' ? 'text/csv; charset=utf-8' : 'application/json; charset=utf-8');
    res.setHeader('Content-Disposition', `attachment; filename="${exportFileName(format, now)}"`);
    res.setHeader('Cache-Control', 'no-store');
    const opening =
      format === 'csv' ? csvLines([], true) : `{"exportedAt":${JSON.stringify(now.toISOString())},"units":${JSON.stringify(jsonUnits)},"items":[`;
    return write(res, opening);
  };
  try {
    await source(async (records) => {
      if (!(await start())) return false;
      for (const r of records) versionIds.add(r.modelVersionId);
      const rows = records.map(toResonanceRow);
      if (format === 'csv') return write(res, csvLines(rows, false));
      const body = rows.map((r) => JSON.stringify(r)).join(',\n');
      const chunk = (first ? '\n' : ',\n') + body;
      first = false;
      return write(res, chunk);
    });
    if (!(await start())) return;
    if (format === 'json') {
      const trailer = models ? `,"models":${JSON.stringify(await models([...versionIds]))}` : '';
      await write(res, `\n]${trailer}}\n`);
    }
    res.end();
  } catch (err) {
    if (!started) throw err;
    res.destroy(err instanceof Error ? err : new Error(String(err)));
  }
}
