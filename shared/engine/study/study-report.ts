/**
 * The JSON form of a study and an ensemble, shared by the command line
 * (`npm run engine -- study`) and the API, so both print the same fields.
 * Modes are left out (they are large); energies and widths in meV, lifetimes in ps.
 */
import { lifetimeFromWidth } from '../../units/constants';
import type { EnsembleOutcome } from './ensemble-run';
import type { EnsembleStatistics } from './ensemble-statistics';
import type { StudyDefinition } from './study-definition';
import type { StudyOutcome } from './study-run';
import type { StepPole } from './study-step';
import { mapEnergies, type StepTransmission } from './study-transmission';

export function poleReport(p: StepPole) {
  return {
    energy: p.energy,
    width: p.width,
    lifetimePs: p.bound || p.width <= 0 ? null : lifetimeFromWidth(p.width),
    quality: p.bound || p.width <= 0 ? null : p.energy / p.width,
    petermann: p.petermann,
    partialWidths: p.partialWidths,
    bound: p.bound,
    nearThreshold: p.nearThreshold,
  };
}

export function studyReport(def: StudyDefinition, out: StudyOutcome) {
  return {
    parameters: def.parameters.map((p) => ({ path: p.path, values: p.values })),
    window: def.window,
    steps: out.steps.map((s) => ({
      index: s.index,
      values: s.values,
      certified: s.certified,
      summary: s.summary,
      factorisations: s.factorisations + s.continuationFactorisations,
      coveredByContinuation: s.coveredByContinuation,
      poles: s.poles.map(poleReport),
      transmission: s.transmission?.values ?? null,
    })),
    transmission: transmissionMapReport(def, out),
    lines: out.lines.map((l) => ({
      value: l.value,
      trajectories: l.trajectories.map((t) => ({
        id: t.id,
        entered: t.entered,
        left: t.left,
        points: t.points.map((p) => {
          const pole = out.steps[p.step].poles[p.pole];
          return { step: p.step, value: out.steps[p.step].values[0], pole: p.pole, energy: pole.energy, width: pole.width, link: p.link, overlap: p.overlap };
        }),
      })),
      marks: l.marks,
    })),
    fullSearchFraction: out.fullSearchFraction,
    units: { energy: 'meV', width: 'meV', lifetime: 'ps' },
  };
}

/**
 * The columns and leads of the transmission map T(E, p) (each step's row is in its
 * `transmission`), or null when the study asked for no map.
 */
function transmissionMapReport(def: StudyDefinition, out: StudyOutcome) {
  if (!def.transmissionPoints) return null;
  const rows = out.steps.map((s) => s.transmission).filter((t): t is StepTransmission => !!t);
  return {
    energies: mapEnergies(def.window, def.transmissionPoints),
    /** The first lead and the leads it transmits into; null when the model has fewer than two leads. */
    from: rows[0]?.from ?? null,
    into: rows[0]?.into ?? [],
    worstCurrentResidual: rows.reduce((w, r) => Math.max(w, r.worstCurrentResidual), 0),
    budgetExhaustedSteps: out.steps.filter((s) => s.transmission?.budgetExhausted).map((s) => s.index),
    poleSampledSteps: out.steps.filter((s) => (s.transmission?.poleSamples ?? 0) > 0).map((s) => s.index),
  };
}

function ensembleStatisticsReport(stats: EnsembleStatistics) {
  return { ...stats, samples: stats.samples.map((s) => ({ ...s })) };
}

export function ensembleReport(out: EnsembleOutcome) {
  return {
    nominal: { certified: out.nominal.certified, poles: out.nominal.poles.map(poleReport) },
    realisations: out.realisations.map((r) => ({
      ...r.record,
      certified: r.search?.certified ?? null,
      error: r.error,
      poles: r.search ? r.search.poles.map(poleReport) : [],
    })),
    statistics: ensembleStatisticsReport(out.statistics),
    units: { energy: 'meV', width: 'meV', roughness: 'nm' },
  };
}
