/**
 * Runs one study step in a fresh worker thread, so the worker process's event loop
 * (queue polling, cancellation checks) stays free. Aborting terminates the thread.
 */
import { Worker } from 'node:worker_threads';
import type { StudyStepOutput, StudyStepTask } from './study-step-task.js';
import type { StudyThreadMessage } from './study-step-thread.js';

export class StudyStepError extends Error {
  constructor(
    message: string,
    readonly invalidModel: boolean,
  ) {
    super(message);
    this.name = 'StudyStepError';
  }
}

export function runStudyStepInThread(task: StudyStepTask, signal?: AbortSignal): Promise<StudyStepOutput> {
  return new Promise((resolve, reject) => {
    const worker = new Worker(new URL('./study-step-thread-bootstrap.mjs', import.meta.url), { workerData: task });
    let settled = false;
    const finish = (fn: () => void) => {
      if (settled) return;
      settled = true;
      signal?.removeEventListener('abort', onAbort);
      fn();
    };
    const onAbort = () => {
      void worker.terminate();
      finish(() => reject(new StudyStepError('the step was cancelled', false)));
    };
    if (signal?.aborted) return onAbort();
    signal?.addEventListener('abort', onAbort);
    worker.on('message', (msg: StudyThreadMessage) => {
      if (msg.type === 'result') finish(() => resolve(msg.output));
      else finish(() => reject(new StudyStepError(msg.message, msg.invalidModel)));
    });
    worker.on('error', (err) => finish(() => reject(new StudyStepError(err.message, false))));
    worker.on('exit', (code) => finish(() => reject(new StudyStepError(`the study thread stopped (exit code ${code})`, false))));
  });
}
