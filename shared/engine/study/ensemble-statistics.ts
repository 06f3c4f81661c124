/**
 * Statistics of one resonance over an ensemble (docs/physics-model.md, "Tolerance
 * ensembles"): the nominal pole nearest the chosen energy is followed into each
 * realisation by mode overlap (mode-overlap.ts; at least MIN_OVERLAP, the largest
 * wins). A realisation where it cannot be followed (no pole with enough overlap, or
 * an invalid or failed model) is counted and listed, never dropped, and counts
 * against the yield. Distributions of E, Γ and Q (mean, sample standard deviation,
 * histogram), sensitivities to each jittered number (least-squares slopes of E and
 * Γ on the drawn deviations, and the spread they explain), and the yield: the
 * fraction of all N realisations whose followed pole meets every stated tolerance.
 */
import type { EnsembleDefinition, RealisationRecord } from './ensemble-definition';
import { modeOverlap } from './mode-overlap';
import type { StepSearch } from './study-step';
import { MIN_OVERLAP } from './trajectory-linking';

export interface EnsembleSample {
  realisation: number;
  seed: number;
  followed: boolean;
  /** Why it could not be followed. */
  reason: string | null;
  pole: number | null;
  overlap: number | null;
  energy: number | null;
  width: number | null;
  /** Q = E/Γ; null when bound or not followed. */
  quality: number | null;
  certified: boolean | null;
  withinTolerances: boolean;
  record: RealisationRecord;
}

export interface Distribution {
  count: number;
  mean: number | null;
  std: number | null;
  min: number | null;
  max: number | null;
  histogram: { edges: number[]; counts: number[] };
}

export interface Sensitivity {
  path: string;
  kind: string;
  /** dE/dx and dΓ/dx (meV per unit of x) from the least-squares fit over the followed realisations. */
  energySlope: number | null;
  widthSlope: number | null;
  /** |slope|·σ_x: the spread of E and Γ this imperfection alone would give. */
  energySpread: number | null;
  widthSpread: number | null;
}

export interface EnsembleStatistics {
  nominal: { pole: number; energy: number; width: number; quality: number | null } | null;
  samples: EnsembleSample[];
  followed: number;
  notFollowed: number;
  energy: Distribution;
  width: Distribution;
  quality: Distribution;
  sensitivities: Sensitivity[];
  /** Spread of E and Γ left after the jitter slopes (roughness, disorder, nonlinearity). */
  residualSpread: { energy: number | null; width: number | null };
  yield: { fraction: number; within: number; total: number } | null;
}

/** One realisation's outcome for the statistics: its search, or why it has none. */
export type RealisationOutcome = { record: RealisationRecord; search: StepSearch | null; error: string | null };

export function ensembleStatistics(def: EnsembleDefinition, nominal: StepSearch, outcomes: readonly RealisationOutcome[]): EnsembleStatistics {
  const target = nearestPole(nominal, def.follow.energy);
  const samples: EnsembleSample[] = outcomes.map((o) => followInto(def, nominal, target, o));
  const got = samples.filter((s) => s.followed);
  const bins = def.bins ?? Math.min(30, Math.max(5, Math.ceil(Math.sqrt(Math.max(1, got.length)))));
  const energy = distribution(
    got.map((s) => s.energy!),
    bins,
  );
  const width = distribution(
    got.map((s) => s.width!),
    bins,
  );
  const quality = distribution(
    got.flatMap((s) => (s.quality === null ? [] : [s.quality])),
    bins,
  );
  const { sensitivities, residual } = sensitivitiesOf(def, got);
  const tol = def.tolerances;
  const anyTolerance = !!tol && [tol.energy, tol.width, tol.quality].some((r) => r && (r.min !== undefined || r.max !== undefined));
  const within = samples.filter((s) => s.withinTolerances).length;
  return {
    nominal:
      target === null
        ? null
        : {
            pole: target,
            energy: nominal.poles[target].energy,
            width: nominal.poles[target].width,
            quality: qualityOf(nominal.poles[target].energy, nominal.poles[target].width),
          },
    samples,
    followed: got.length,
    notFollowed: samples.length - got.length,
    energy,
    width,
    quality,
    sensitivities,
    residualSpread: residual,
    yield: anyTolerance ? { fraction: samples.length ? within / samples.length : 0, within, total: samples.length } : null,
  };
}

function nearestPole(search: StepSearch, energy: number): number | null {
  let best: number | null = null;
  search.poles.forEach((p, k) => {
    if (best === null || Math.abs(p.energy - energy) < Math.abs(search.poles[best].energy - energy)) best = k;
  });
  return best;
}

function qualityOf(energy: number, width: number): number | null {
  return width > 0 ? energy / width : null;
}

function inRange(v: number | null, r: { min?: number; max?: number } | undefined): boolean {
  if (!r) return true;
  if (v === null) return false;
  return (r.min === undefined || v >= r.min) && (r.max === undefined || v <= r.max);
}

function followInto(def: EnsembleDefinition, nominal: StepSearch, target: number | null, o: RealisationOutcome): EnsembleSample {
  const base = { realisation: o.record.realisation, seed: o.record.seed, record: o.record };
  const fail = (reason: string): EnsembleSample => ({
    ...base,
    followed: false,
    reason,
    pole: null,
    overlap: null,
    energy: null,
    width: null,
    quality: null,
    certified: o.search?.certified ?? null,
    withinTolerances: false,
  });
  if (target === null) return fail('the nominal model has no pole in the window');
  if (o.error !== null || o.search === null) return fail(o.error ?? 'not computed');
  let best = -1;
  let bestOverlap = 0;
  o.search.poles.forEach((p, k) => {
    const ov = modeOverlap(nominal.poles[target].mode, nominal.sites, p.mode, o.search!.sites);
    if (ov > bestOverlap) {
      bestOverlap = ov;
      best = k;
    }
  });
  if (best < 0 || bestOverlap < MIN_OVERLAP) return fail(`no pole with mode overlap ≥ ${MIN_OVERLAP} (best ${bestOverlap.toFixed(2)})`);
  const p = o.search.poles[best];
  const quality = qualityOf(p.energy, p.width);
  const tol = def.tolerances;
  // A bound pole has Q = ∞: it meets a lower bound on Q and no upper one.
  const qualityOk = !tol?.quality || (quality === null ? tol.quality.max === undefined : inRange(quality, tol.quality));
  const withinTolerances = inRange(p.energy, tol?.energy) && inRange(p.width, tol?.width) && qualityOk;
  return {
    ...base,
    followed: true,
    reason: null,
    pole: best,
    overlap: bestOverlap,
    energy: p.energy,
    width: p.width,
    quality,
    certified: o.search.certified,
    withinTolerances,
  };
}

/** Mean, sample standard deviation, extremes and a histogram of `bins` equal bins over [min, max]. */
export function distribution(values: readonly number[], bins: number): Distribution {
  const n = values.length;
  if (n === 0) return { count: 0, mean: null, std: null, min: null, max: null, histogram: { edges: [], counts: [] } };
  const mean = values.reduce((a, b) => a + b, 0) / n;
  const std = n > 1 ? Math.sqrt(values.reduce((a, v) => a + (v - mean) ** 2, 0) / (n - 1)) : 0;
  const min = Math.min(...values);
  const max = Math.max(...values);
  if (max === min) return { count: n, mean, std, min, max, histogram: { edges: [min, max], counts: [n] } };
  const edges = Array.from({ length: bins + 1 }, (_, k) => (k === bins ? max : min + ((max - min) * k) / bins));
  const counts = new Array<number>(bins).fill(0);
  for (const v of values) counts[Math.min(bins - 1, Math.floor(((v - min) / (max - min)) * bins))]++;
  return { count: n, mean, std, min, max, histogram: { edges, counts } };
}

function sensitivitiesOf(
  def: EnsembleDefinition,
  got: EnsembleSample[],
): { sensitivities: Sensitivity[]; residual: { energy: number | null; width: number | null } } {
  const jit = def.jitter ?? [];
  const k = jit.length;
  const empty = { energySlope: null, widthSlope: null, energySpread: null, widthSpread: null };
  const spreadOf = (ys: number[]) => (ys.length > 1 ? distribution(ys, 1).std : null);
  if (k === 0 || got.length < k + 2) {
    return {
      sensitivities: jit.map((j) => ({ path: j.path, kind: j.kind, ...empty })),
      residual: { energy: spreadOf(got.map((s) => s.energy!)), width: spreadOf(got.map((s) => s.width!)) },
    };
  }
  const rows = got.map((s) => [1, ...jit.map((j) => s.record.jitter.find((x) => x.path === j.path)?.delta ?? 0)]);
  const fitE = leastSquares(
    rows,
    got.map((s) => s.energy!),
  );
  const fitG = leastSquares(
    rows,
    got.map((s) => s.width!),
  );
  const sensitivities = jit.map((j, c) => ({
    path: j.path,
    kind: j.kind,
    energySlope: fitE ? fitE.coef[c + 1] : null,
    widthSlope: fitG ? fitG.coef[c + 1] : null,
    energySpread: fitE ? Math.abs(fitE.coef[c + 1]) * j.sigma : null,
    widthSpread: fitG ? Math.abs(fitG.coef[c + 1]) * j.sigma : null,
  }));
  return { sensitivities, residual: { energy: fitE ? fitE.residualStd : null, width: fitG ? fitG.residualStd : null } };
}

/** Ordinary least squares by the normal equations (k + 1 ≤ a few unknowns); null when singular. */
function leastSquares(rows: number[][], y: number[]): { coef: number[]; residualStd: number } | null {
  const m = rows[0].length;
  const a = Array.from({ length: m }, () => new Array<number>(m + 1).fill(0));
  rows.forEach((r, n) => {
    for (let p = 0; p < m; p++) {
      for (let q = 0; q < m; q++) a[p][q] += r[p] * r[q];
      a[p][m] += r[p] * y[n];
    }
  });
  for (let c = 0; c < m; c++) {
    let piv = c;
    for (let r = c + 1; r < m; r++) if (Math.abs(a[r][c]) > Math.abs(a[piv][c])) piv = r;
    if (!(Math.abs(a[piv][c]) > 1e-300)) return null;
    [a[c], a[piv]] = [a[piv], a[c]];
    for (let r = 0; r < m; r++) {
      if (r === c) continue;
      const f = a[r][c] / a[c][c];
      for (let q = c; q <= m; q++) a[r][q] -= f * a[c][q];
    }
  }
  const coef = a.map((row, c) => row[m] / row[c]);
  if (coef.some((v) => !Number.isFinite(v))) return null;
  let ss = 0;
  rows.forEach((r, n) => {
    let fit = 0;
    for (let p = 0; p < m; p++) fit += coef[p] * r[p];
    ss += (y[n] - fit) ** 2;
  });
  return { coef, residualStd: rows.length > m ? Math.sqrt(ss / (rows.length - m)) : 0 };
}
