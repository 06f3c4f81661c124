/**
 * The engine work of one study step, run in a worker thread (study-step-thread.ts):
 * the certified search of the step's model (unless a stored identical one is given)
 * and, for a sweep, the Newton continuation of its poles into the next step.
 */
import { createHash } from 'node:crypto';
import { InvalidModelError } from '../../shared/engine/effective-hamiltonian.js';
import { realisationModel, type EnsembleDefinition } from '../../shared/engine/study/ensemble-definition.js';
import { studyStepModel, studyStepPath, type StudyDefinition } from '../../shared/engine/study/study-definition.js';
import { continuePoles, searchStep } from '../../shared/engine/study/study-step.js';
import { stepTransmission, type StepTransmission } from '../../shared/engine/study/study-transmission.js';
import { ENGINE_VERSION } from '../jobs/engine-task.js';
import { decodeSearch, encodeContinuation, encodeSearch, type StoredContinuation, type StoredSearch } from './step-codec.js';

export type StudyDefinitionStored = { kind: 'sweep'; study: StudyDefinition } | { kind: 'ensemble'; ensemble: EnsembleDefinition };

export interface StudyStepTask {
  definition: StudyDefinitionStored;
  index: number;
  /** The stored search of an identical step, when there is one. */
  reuse: StoredSearch | null;
  /** The stored transmission-map row of that step, when it has the column count this study asks for. */
  reuseTransmission?: StepTransmission | null;
}

export interface StudyStepOutput {
  search: StoredSearch | null;
  continuation: StoredContinuation | null;
  record: Record<string, unknown> | null;
  /** The step's row of the transmission map (a sweep asking for one); null when not asked for or without two leads. */
  transmission: StepTransmission | null;
  /** True when `transmission` was computed here (not taken from the stored identical step). */
  transmissionComputed: boolean;
  /** An invalid realised model (a jittered lead past the edge): the step ends, counted as not followed. */
  invalid: string | null;
  seconds: number;
}

/** The model document of a step, and what was drawn for it. */
export function stepDocument(def: StudyDefinitionStored, index: number): { model: unknown; record: Record<string, unknown> | null } {
  if (def.kind === 'sweep') return { model: studyStepModel(def.study, index), record: null };
  const { model, record } = realisationModel(def.ensemble, index);
  // The realised document is kept with the record: a step can be opened or saved as a version later.
  return { model, record: { ...record, ...(index > 0 ? { document: model } : {}) } as unknown as Record<string, unknown> };
}

/** Hash of (model, window, search options, engine version): identical steps share it. */
export function stepResultKey(def: StudyDefinitionStored, model: unknown): string {
  const inner = def.kind === 'sweep' ? def.study : def.ensemble;
  return createHash('sha256')
    .update(JSON.stringify({ model, window: inner.window, search: inner.search ?? {}, engine: ENGINE_VERSION }))
    .digest('hex');
}

export function runStudyStepTask(task: StudyStepTask, signal?: AbortSignal): StudyStepOutput {
  const started = performance.now();
  const { model, record } = stepDocument(task.definition, task.index);
  const inner = task.definition.kind === 'sweep' ? task.definition.study : task.definition.ensemble;
  let search;
  try {
    search = task.reuse ? decodeSearch(task.reuse) : searchStep(model, inner.window, inner.search ?? {}, { signal });
  } catch (err) {
    if (err instanceof InvalidModelError && task.definition.kind === 'ensemble') {
      return {
        search: null,
        continuation: null,
        transmission: null,
        transmissionComputed: false,
        record,
        invalid: err.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; '),
        seconds: (performance.now() - started) / 1000,
      };
    }
    throw err;
  }
  let continuation: StoredContinuation | null = null;
  let transmission: StepTransmission | null = null;
  let transmissionComputed = false;
  if (task.definition.kind === 'sweep') {
    const study = task.definition.study;
    const path = studyStepPath(study, task.index);
    if (path) continuation = encodeContinuation(continuePoles(search, path, { signal }));
    if (study.transmissionPoints) {
      if (task.reuseTransmission?.points === study.transmissionPoints) transmission = task.reuseTransmission;
      else {
        transmission = stepTransmission(model, study.window, study.transmissionPoints, { signal }, search.poles);
        transmissionComputed = true;
      }
    }
  }
  return {
    search: encodeSearch(search),
    continuation,
    transmission,
    transmissionComputed,
    record,
    invalid: null,
    seconds: (performance.now() - started) / 1000,
  };
}
