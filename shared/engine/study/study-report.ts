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
    })),
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

export function ensembleStatisticsReport(stats: EnsembleStatistics) {
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
