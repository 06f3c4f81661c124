/**
 * The columns of a resonance file (CSV) and the units of its JSON twin, one table for
 * the catalogue export (server/catalogue/catalogue-export.ts) and a run page's pole
 * download (src/app/runs/run-export.ts), so the two files have the same shape.
 * The unit is in every dimensional column's name. Electron rows fill the meV columns;
 * microwave rows (physics = microwave) leave them empty and fill the k², GHz, MHz and ns
 * columns instead, so no column mixes two units. Empty lifetime and quality cells mean
 * infinite (bound states); lists are "; "-separated inside one cell.
 */

/** What the columns read of a resonance: the API's ResonanceRow (shared/api/resonance-row.ts) and the client's copy both fit. */
interface ResonanceColumnRow {
  id: string;
  runId: string | null;
  source: string;
  fitId: string | null;
  modelId: string;
  modelName: string;
  modelVersion: number;
  family: string;
  keyDimensions: { [name: string]: number | undefined };
  material: string;
  fieldT: number;
  energy: number;
  width: number;
  lifetimePs: number | null;
  quality: number | null;
  partialWidths: { lead: string; width: number }[];
  petermann: number | null;
  residual: number | null;
  bound: boolean;
  nearThreshold: boolean;
  overlapping: boolean;
  tags: string[];
  notes: string;
  createdAt: string;
  physics?: 'electrons' | 'microwave';
  microwave?: { frequencyGhz: number; widthMhz: number; lifetimeNs: number | null; validityLimitGhz: number | null } | null;
  validity?: { limit: number | null; wavelengthSpacings: number | null; aboveLimit: boolean | null };
}

type Cell = string | number | boolean | null;
const mw = (r: ResonanceColumnRow) => r.physics === 'microwave';

export const resonanceCsvColumns: [string, (r: ResonanceColumnRow) => Cell][] = [
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
  ['width_nm', (r) => r.keyDimensions['width'] ?? null],
  ['height_nm', (r) => r.keyDimensions['height'] ?? null],
  ['radius_nm', (r) => r.keyDimensions['radius'] ?? null],
  ['length_nm', (r) => r.keyDimensions['length'] ?? null],
  // Added with the lattice validity, the per-family dimensions and the microwave mode
  // (between the dimensions and the tags; the first and last columns keep their places).
  ['physics', (r) => r.physics ?? 'electrons'],
  ['frequency_GHz', (r) => r.microwave?.frequencyGhz ?? null],
  ['frequency_width_MHz', (r) => r.microwave?.widthMhz ?? null],
  ['lifetime_ns', (r) => r.microwave?.lifetimeNs ?? null],
  ['k2_per_mm2', (r) => (mw(r) ? r.energy : null)],
  ['k2_width_per_mm2', (r) => (mw(r) ? r.width : null)],
  ['validity_limit_meV', (r) => (mw(r) ? null : (r.validity?.limit ?? null))],
  ['validity_limit_GHz', (r) => r.microwave?.validityLimitGhz ?? null],
  ['wavelength_over_spacing', (r) => r.validity?.wavelengthSpacings ?? null],
  ['above_validity_limit', (r) => r.validity?.aboveLimit ?? null],
  ['rx_nm', (r) => r.keyDimensions['rx'] ?? null],
  ['ry_nm', (r) => r.keyDimensions['ry'] ?? null],
  ['inner_nm', (r) => r.keyDimensions['inner'] ?? null],
  ['outer_nm', (r) => r.keyDimensions['outer'] ?? null],
  ['area_nm2', (r) => r.keyDimensions['area'] ?? null],
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

export const resonanceCsvHeader = resonanceCsvColumns.map(([name]) => name);

/** Units of a JSON resonance file's fields, written at its top so the file explains itself. */
export const resonanceJsonUnits = {
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
