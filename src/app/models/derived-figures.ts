/**
 * The figures the API derives from a model version (POST /models/validate, GET
 * /models/:id): site count, hopping energy t, channel thresholds per lead and the
 * model-validity warnings. The shared type was not yet exported by
 * shared/model/cavity-model.ts when this client was written, so the client reads
 * the fields it shows defensively, by the names below.
 */
export interface DerivedFigures {
  siteCount: number;
  /** Hopping energy t (meV). */
  hoppingMeV: number;
  /** Channel thresholds ε_m ± 2t (meV) of each lead, sorted. */
  thresholds?: { lead: string; values: number[] }[];
  /** Model-validity warnings (energies approaching t, spacing against the Fermi wavelength). */
  warnings?: string[];
  [extra: string]: unknown;
}
