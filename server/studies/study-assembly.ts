/**
 * The outcome of a study once every step has ended: the linked trajectories and
 * marks of a sweep, or the statistics of an ensemble, in the same JSON form as the
 * command line (shared/engine/study/study-report.ts). Failed or cancelled steps
 * take part as steps without poles, so trajectories break there and the kept steps
 * still count. Cost: O(P²·n) per step pair (mode overlaps).
 */
import { assembleStudy } from '../../shared/engine/study/study-run.js';
import { ensembleStatistics, type RealisationOutcome } from '../../shared/engine/study/ensemble-statistics.js';
import type { RealisationRecord } from '../../shared/engine/study/ensemble-definition.js';
import { poleReport, studyReport } from '../../shared/engine/study/study-report.js';
import type { StepResult, StepSearch } from '../../shared/engine/study/study-step.js';
import type { StepTransmission } from '../../shared/engine/study/study-transmission.js';
import { decodeContinuation, decodeSearch, type StoredContinuation, type StoredSearch } from './step-codec.js';
import type { StudyDefinitionStored } from './study-step-task.js';

export interface EndedStep {
  index: number;
  status: string;
  search: StoredSearch | null;
  continuation: StoredContinuation | null;
  /** The step's stored transmission-map row (any column count; only the study's own count is used). */
  transmission?: StepTransmission | null;
  record: Record<string, unknown> | null;
  error: string | null;
}

const EMPTY: StepSearch = {
  poles: [],
  sites: { i: new Int32Array(0), j: new Int32Array(0), nx: 1, ny: 1, flux: 0 },
  certified: false,
  summary: 'not computed',
  factorisations: 0,
  seconds: 0,
};

export function assembleOutcome(def: StudyDefinitionStored, steps: EndedStep[]): Record<string, unknown> {
  const byIndex = new Map(steps.map((s) => [s.index, s]));
  if (def.kind === 'sweep') {
    const count = def.study.parameters.reduce((n, p) => n * p.values.length, 1);
    const results: StepResult[] = [];
    for (let k = 0; k < count; k++) {
      const s = byIndex.get(k);
      const search = s?.search ? decodeSearch(s.search) : EMPTY;
      const c = s?.continuation ? decodeContinuation(s.continuation) : null;
      results.push({
        ...search,
        continued: c ? c.continued : null,
        continuationFailures: c?.failures ?? 0,
        continuationFactorisations: c?.factorisations ?? 0,
        transmission: s?.transmission && s.transmission.points === def.study.transmissionPoints ? s.transmission : null,
      });
    }
    const report = studyReport(def.study, assembleStudy(def.study, results));
    return { kind: 'sweep', ...report, steps: report.steps.map((s) => ({ ...s, status: byIndex.get(s.index)?.status ?? 'queued' })) };
  }
  const nominalStep = byIndex.get(0);
  if (!nominalStep?.search) return { kind: 'ensemble', error: 'the nominal model was not computed', statistics: null };
  const nominal = decodeSearch(nominalStep.search);
  const outcomes: RealisationOutcome[] = [];
  for (let r = 1; r <= def.ensemble.realisations; r++) {
    const s = byIndex.get(r);
    // The realised document stays on the step row (opened with the step), not in every sample.
    const { document: _document, ...drawn } = (s?.record ?? { realisation: r, seed: 0, jitter: [], roughness: null, disorderSeeds: [] }) as Record<
      string,
      unknown
    >;
    const record = drawn as unknown as RealisationRecord;
    outcomes.push({ record, search: s?.search ? decodeSearch(s.search) : null, error: s?.search ? null : (s?.error ?? `step ${s?.status ?? 'missing'}`) });
  }
  const statistics = ensembleStatistics(def.ensemble, nominal, outcomes);
  return {
    kind: 'ensemble',
    nominal: { certified: nominal.certified, poles: nominal.poles.map(poleReport) },
    statistics,
    units: { energy: 'meV', width: 'meV', roughness: 'nm' },
  };
}
