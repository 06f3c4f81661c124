/**
 * A whole ensemble on one thread (the command line, tests): the nominal model and
 * every realisation searched over the same window, then the statistics of the
 * followed resonance. The server runs the same realisations as separate queue jobs
 * (server/studies) and calls ensembleStatistics on their stored results.
 */
import { InvalidModelError } from '../effective-hamiltonian';
import type { WorkControl } from '../operator';
import { checkEnsembleDefinition, realisationModel, type EnsembleDefinition } from './ensemble-definition';
import { ensembleStatistics, type EnsembleStatistics, type RealisationOutcome } from './ensemble-statistics';
import { searchStep, type StepSearch } from './study-step';

export interface EnsembleOutcome {
  nominal: StepSearch;
  realisations: RealisationOutcome[];
  statistics: EnsembleStatistics;
}

export function runEnsemble(def: EnsembleDefinition, control?: WorkControl): EnsembleOutcome {
  checkEnsembleDefinition(def);
  const nominal = searchStep(def.model, def.window, def.search ?? {}, control);
  const realisations: RealisationOutcome[] = [];
  for (let r = 1; r <= def.realisations; r++) {
    realisations.push(computeRealisation(def, r, control));
    control?.onProgress?.('realisations', r / def.realisations);
  }
  return { nominal, realisations, statistics: ensembleStatistics(def, nominal, realisations) };
}

/** Realisation r's search; an invalid realised model is an outcome with its error, not a throw. */
function computeRealisation(def: EnsembleDefinition, r: number, control?: WorkControl): RealisationOutcome {
  const { model, record } = realisationModel(def, r);
  try {
    return { record, search: searchStep(model, def.window, def.search ?? {}, control), error: null };
  } catch (err) {
    if (err instanceof InvalidModelError)
      return { record, search: null, error: `invalid realisation: ${err.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; ')}` };
    throw err;
  }
}
