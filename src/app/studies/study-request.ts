import type { EnsembleRequest, StudyRequest, SweepRequest } from '../../../shared/api/studies';
import { parseParameterValues } from './parameter-values';

/** What the study launcher's form holds (numbers are null while a field is empty). */
export interface StudyFormValue {
  kind: 'sweep' | 'ensemble';
  modelId: string;
  version: number | null;
  name: string;
  window: { emin: number | null; emax: number | null; gammaMax: number | null };
  sweep: { path: string; values: string };
  ensemble: {
    realisations: number | null;
    seed: number | null;
    rmsNm: number | null;
    correlationNm: number | null;
    disorder: boolean;
    follow: number | null;
    jitter: { kind: 'dimension' | 'lead-width' | 'gate-offset'; path: string; sigma: number | null }[];
    tolerances: {
      energyMin: number | null;
      energyMax: number | null;
      widthMin: number | null;
      widthMax: number | null;
      qualityMin: number | null;
      qualityMax: number | null;
    };
  };
}

/**
 * The request the launcher's form describes, or the first thing missing or wrong (with
 * the field path the form shows it on). The server checks it again with the same schema.
 */
export function studyRequest(v: StudyFormValue): { request: StudyRequest } | { error: string; path: string } {
  if (!v.modelId) return { error: 'Choose a model.', path: 'modelId' };
  const { emin, emax, gammaMax } = v.window;
  if (emin == null || emax == null || gammaMax == null) return { error: 'Give E min, E max and Γ max.', path: 'window' };
  if (!(emax > emin)) return { error: 'E max must be above E min.', path: 'window.emax' };
  if (!(gammaMax > 0)) return { error: 'Γ max must be above 0.', path: 'window.gammaMax' };
  const common = {
    modelId: v.modelId,
    ...(v.version != null ? { version: v.version } : {}),
    ...(v.name.trim() ? { name: v.name.trim() } : {}),
    window: { emin, emax, gammaMax },
  };
  if (v.kind === 'sweep') {
    if (!v.sweep.path) return { error: 'Choose the parameter to vary.', path: 'sweep.path' };
    const parsed = parseParameterValues(v.sweep.values);
    if ('error' in parsed) return { error: parsed.error, path: 'sweep.values' };
    const request: SweepRequest = { kind: 'sweep', ...common, parameters: [{ path: v.sweep.path, values: parsed.values }] };
    return { request };
  }
  const e = v.ensemble;
  if (e.realisations == null || !Number.isInteger(e.realisations) || e.realisations < 1 || e.realisations > 1000)
    return { error: 'N must be a whole number from 1 to 1000.', path: 'ensemble.realisations' };
  if (e.seed == null || !Number.isInteger(e.seed) || e.seed < 0) return { error: 'The seed must be a whole number ≥ 0.', path: 'ensemble.seed' };
  if (e.follow == null) return { error: 'Give the energy of the resonance to follow.', path: 'ensemble.follow' };
  if ((e.rmsNm == null) !== (e.correlationNm == null))
    return { error: 'Give both the roughness rms and its correlation length, or neither.', path: 'ensemble.rmsNm' };
  const jitter: NonNullable<EnsembleRequest['jitter']> = [];
  for (const [i, j] of e.jitter.entries()) {
    if (!j.path || j.sigma == null) return { error: `Jitter ${i + 1}: choose a dimension and give σ.`, path: `ensemble.jitter.${i}` };
    jitter.push({ kind: j.kind, path: j.path, sigma: j.sigma });
  }
  const range = (min: number | null, max: number | null) =>
    min == null && max == null ? undefined : { ...(min != null ? { min } : {}), ...(max != null ? { max } : {}) };
  const t = e.tolerances;
  const tolerances = { energy: range(t.energyMin, t.energyMax), width: range(t.widthMin, t.widthMax), quality: range(t.qualityMin, t.qualityMax) };
  const anyTolerance = Object.values(tolerances).some(Boolean);
  const request: EnsembleRequest = {
    kind: 'ensemble',
    ...common,
    realisations: e.realisations,
    seed: e.seed,
    roughness: e.rmsNm != null && e.correlationNm != null ? { rmsNm: e.rmsNm, correlationNm: e.correlationNm } : null,
    ...(jitter.length ? { jitter } : {}),
    ...(e.disorder ? { disorder: true } : {}),
    follow: { energy: e.follow },
    ...(anyTolerance ? { tolerances: JSON.parse(JSON.stringify(tolerances)) as EnsembleRequest['tolerances'] } : {}),
  };
  return { request };
}
