/**
 * What a parameter study is: a nominal model document, one or two parameters
 * (paths into the document and their values), and the pole-search window every
 * step uses. Step k is the nominal model with the parameters set to its values;
 * steps are numbered with the first parameter running fastest, and trajectories
 * are followed along the first parameter (one set of trajectories per value of the
 * second).
 */
import type { PoleWindow } from '../pole-types';
import { withNumberAtPath, numberAtPath } from './model-path';
import { MAX_STUDY_STEPS } from './parameter-values';
import type { StepSearchOptions } from './study-step';
import { MAX_MAP_POINTS } from './study-transmission';

export interface StudyParameter {
  /** Dotted path into the model document, e.g. `field` or `potential.0.value`. */
  path: string;
  values: number[];
}

export interface StudyDefinition {
  model: unknown;
  parameters: StudyParameter[];
  window: PoleWindow;
  search?: StepSearchOptions;
  /** Columns of the transmission map T(E, p) computed at every step (study-transmission.ts); 0 or left out: no map. */
  transmissionPoints?: number;
}

export interface StudyStepSpec {
  index: number;
  /** Parameter values of the step, in the order of `parameters`. */
  values: number[];
  /** Which set of trajectories (value index of the second parameter; 0 with one parameter). */
  line: number;
  /** Position along the first parameter. */
  position: number;
}

/** Checks the paths and sizes; throws RangeError naming the bad field. */
export function checkStudyDefinition(def: StudyDefinition): void {
  if (def.parameters.length < 1 || def.parameters.length > 2) throw new RangeError('parameters: give one or two parameters');
  def.parameters.forEach((p, k) => {
    try {
      numberAtPath(def.model, p.path);
    } catch (err) {
      throw new RangeError(`parameters[${k}].path: ${(err as Error).message}`, { cause: err });
    }
    if (p.values.length < 1) throw new RangeError(`parameters[${k}].values: no values`);
    if (p.values.some((v) => !Number.isFinite(v))) throw new RangeError(`parameters[${k}].values: every value must be a finite number`);
  });
  if (def.parameters.length === 2 && def.parameters[0].path === def.parameters[1].path) throw new RangeError('parameters[1].path: the same path twice');
  const count = studyStepCount(def);
  if (count > MAX_STUDY_STEPS) throw new RangeError(`parameters: ${count} steps, above the limit of ${MAX_STUDY_STEPS}`);
  const w = def.window;
  if (!(w.emax > w.emin)) throw new RangeError('window.emax must be above window.emin');
  if (!(w.gammaMax > 0)) throw new RangeError('window.gammaMax must be positive');
  const m = def.transmissionPoints ?? 0;
  if (m !== 0 && (!Number.isInteger(m) || m < 2 || m > MAX_MAP_POINTS))
    throw new RangeError(`transmissionPoints: 0 (no map) or an integer from 2 to ${MAX_MAP_POINTS}`);
}

export function studyStepCount(def: StudyDefinition): number {
  return def.parameters.reduce((n, p) => n * p.values.length, 1);
}

export function studyStepSpec(def: StudyDefinition, index: number): StudyStepSpec {
  const n0 = def.parameters[0].values.length;
  const position = index % n0;
  const line = Math.floor(index / n0);
  const values = [def.parameters[0].values[position]];
  if (def.parameters.length === 2) values.push(def.parameters[1].values[line]);
  return { index, values, line, position };
}

export function studyStepModel(def: StudyDefinition, index: number): unknown {
  const spec = studyStepSpec(def, index);
  let doc = def.model;
  def.parameters.forEach((p, k) => {
    doc = withNumberAtPath(doc, p.path, spec.values[k]);
  });
  return doc;
}

/**
 * The models between step `index` and the next one along the first parameter
 * (fraction f of the way; f = 1 is the next step's model), or null at the end of a line.
 */
export function studyStepPath(def: StudyDefinition, index: number): ((fraction: number) => unknown) | null {
  const next = nextStudyStep(def, index);
  if (next === null) return null;
  const v0 = studyStepSpec(def, index).values[0];
  const v1 = studyStepSpec(def, next).values[0];
  const base = studyStepModel(def, index);
  return (f) => (f === 1 ? studyStepModel(def, next) : withNumberAtPath(base, def.parameters[0].path, v0 + f * (v1 - v0)));
}

/** The step the poles of `index` are continued into (the next along the first parameter), or null. */
function nextStudyStep(def: StudyDefinition, index: number): number | null {
  const spec = studyStepSpec(def, index);
  return spec.position + 1 < def.parameters[0].values.length ? index + 1 : null;
}
