/**
 * Worker-thread entry of a peak fit: the API and the fit worker never run the
 * Levenberg–Marquardt loop on their own event loop.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { fitPeaks, FitInputError, type FitOptions, type FitResult } from '../../shared/engine/fit.js';

export interface FitTask {
  x: number[];
  y: number[];
  options: Omit<FitOptions, 'onProgress'>;
}

export type FitThreadMessage =
  { type: 'progress'; fraction: number } | { type: 'result'; result: FitResult } | { type: 'error'; message: string; badInput: boolean };

const port = parentPort!;
try {
  const task = workerData as FitTask;
  let last = 0;
  const result = fitPeaks(task.x, task.y, {
    ...task.options,
    onProgress: (fraction) => {
      const now = Date.now();
      if (now - last < 200 && fraction < 1) return;
      last = now;
      port.postMessage({ type: 'progress', fraction } satisfies FitThreadMessage);
    },
  });
  port.postMessage({ type: 'result', result } satisfies FitThreadMessage);
} catch (err) {
  port.postMessage({
    type: 'error',
    message: err instanceof Error ? err.message : String(err),
    badInput: err instanceof FitInputError,
  } satisfies FitThreadMessage);
}
