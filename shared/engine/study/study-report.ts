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
    moves: stepMoves(def, out),
    units: { energy: 'meV', width: 'meV', lifetime: 'ps' },
  };
}

/**
 * How far the poles moved from one step to the next against the window's mean level
 * spacing δ = (E_max − E_min)/N at the earlier step (N its poles): a link that moves a pole
 * by more than δ/2 could as well have joined a neighbouring resonance, so many of them say
 * the steps are too coarse to follow resonances one by one (common practice, no source).
 * `spacing` is the smallest δ over the steps (null without poles).
 */
function stepMoves(def: StudyDefinition, out: StudyOutcome): { links: number; large: number; spacing: number | null } {
  const spacingAt = (step: number) => (def.window.emax - def.window.emin) / Math.max(1, out.steps[step].poles.length);
  let links = 0;
  let large = 0;
  for (const line of out.lines) {
    for (const t of line.trajectories) {
      for (let k = 1; k < t.points.length; k++) {
        const a = t.points[k - 1];
        const b = t.points[k];
        links++;
        const moved = Math.abs(out.steps[b.step].poles[b.pole].energy - out.steps[a.step].poles[a.pole].energy);
        if (moved > spacingAt(a.step) / 2) large++;
      }
    }
  }
  const withPoles = out.steps.filter((s) => s.poles.length > 0).map((s) => s.index);
  return { links, large, spacing: withPoles.length ? Math.min(...withPoles.map(spacingAt)) : null };
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
