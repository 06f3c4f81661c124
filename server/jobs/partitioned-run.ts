import type { EngineTask, EngineTaskResult } from './engine-task.js';
import { runInThread } from './thread-runner.js';

/**
 * Runs a task on up to `threads` cores. A pole search stays one search over its
 * whole window, with one certificate: its engine thread starts a pool of `threads`
 * worker threads (pole-pool.ts) that factorise the contour nodes and Newton steps
 * in parallel, so the poles and certificate are those of a one-thread search. (Until
 * issue 9 the window was cut into separately certified parts, one per thread.)
 * A transmission run, or threads = 1, runs on one thread.
 */
export async function runPartitioned(
  task: EngineTask,
  threads: number,
  onProgress: (stage: string, fraction: number) => void,
  signal?: AbortSignal,
): Promise<EngineTaskResult> {
  if (task.kind !== 'pole-search' || threads <= 1) return runInThread(task, onProgress, signal);
  return runInThread({ ...task, threads }, onProgress, signal);
}
