/** Worker-thread entry of a study step: computes the task and posts its output or error. */
import { parentPort, workerData } from 'node:worker_threads';
import { InvalidModelError } from '../../shared/engine/effective-hamiltonian.js';
import { runStudyStepTask, type StudyStepOutput, type StudyStepTask } from './study-step-task.js';

export type StudyThreadMessage = { type: 'result'; output: StudyStepOutput } | { type: 'error'; message: string; invalidModel: boolean };

const port = parentPort!;
try {
  port.postMessage({ type: 'result', output: runStudyStepTask(workerData as StudyStepTask) } satisfies StudyThreadMessage);
} catch (err) {
  port.postMessage({
    type: 'error',
    message: err instanceof Error ? err.message : String(err),
    invalidModel: err instanceof InvalidModelError,
  } satisfies StudyThreadMessage);
}
