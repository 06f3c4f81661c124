/**
 * A whole study on one thread (the command line, tests): every step in order, then
 * the trajectories and their marks. The server runs the same steps as separate
 * queue jobs (server/studies) and assembles the same answer with `assembleStudy`.
 */
import type { WorkControl } from '../operator';
import {
  checkStudyDefinition,
  studyStepCount,
  studyStepModel,
  studyStepPath,
  studyStepSpec,
  type StudyDefinition,
  type StudyStepSpec,
} from './study-definition';
import { computeStep, type StepResult } from './study-step';
import { stepTransmission } from './study-transmission';
import { linkTrajectories, type Trajectory } from './trajectory-linking';
import { trajectoryMarks, type TrajectoryMark } from './trajectory-marks';

export interface StudyLine {
  /** Value of the second parameter (null with one parameter). */
  value: number | null;
  /** Study step indices along the first parameter. */
  steps: number[];
  /** Trajectories; their points' `step` are study step indices. */
  trajectories: Trajectory[];
  marks: TrajectoryMark[];
}

export interface StudyOutcome {
  steps: (StudyStepSpec & StepResult & { coveredByContinuation: boolean })[];
  lines: StudyLine[];
  /** Steps (after each line's first) whose poles continuation alone did not account for. */
  fullSearchFraction: number;
}

export function runStudy(def: StudyDefinition, control?: WorkControl): StudyOutcome {
  checkStudyDefinition(def);
  const count = studyStepCount(def);
  const results: StepResult[] = [];
  for (let k = 0; k < count; k++) {
    const model = studyStepModel(def, k);
    const step = computeStep(model, def.window, def.search ?? {}, studyStepPath(def, k), control);
    if (def.transmissionPoints) step.transmission = stepTransmission(model, def.window, def.transmissionPoints, control, step.poles);
    results.push(step);
    control?.onProgress?.('steps', (k + 1) / count);
  }
  return assembleStudy(def, results);
}

/** Links and marks the steps of each line; `results[k]` is step k's result. */
export function assembleStudy(def: StudyDefinition, results: readonly StepResult[]): StudyOutcome {
  const n0 = def.parameters[0].values.length;
  const lines: StudyLine[] = [];
  const covered = results.map(() => false);
  const lineCount = results.length / n0;
  for (let line = 0; line < lineCount; line++) {
    const idx = Array.from({ length: n0 }, (_, k) => line * n0 + k);
    const linking = linkTrajectories(idx.map((k) => results[k]));
    linking.coveredByContinuation.forEach((c, k) => (covered[idx[k]] = c));
    const trajectories = linking.trajectories.map((t) => ({ ...t, points: t.points.map((p) => ({ ...p, step: idx[p.step] })) }));
    const marks = trajectoryMarks(
      linking.trajectories,
      idx.map((k) => results[k].poles),
    ).map((m) => ({ ...m, step: idx[m.step], from: idx[m.from], to: idx[m.to] }));
    lines.push({ value: def.parameters.length === 2 ? def.parameters[1].values[line] : null, steps: idx, trajectories, marks });
  }
  const later = results.length - lineCount;
  const needed = covered.filter((c, k) => k % n0 !== 0 && !c).length;
  return {
    steps: results.map((r, k) => ({ ...studyStepSpec(def, k), ...r, coveredByContinuation: covered[k] })),
    lines,
    fullSearchFraction: later > 0 ? needed / later : 0,
  };
}
