import { Worker } from 'node:worker_threads';
import type { FitResult } from '../../shared/engine/fit.js';
import type { FitTask, FitThreadMessage } from './fit-thread.js';

export class FitThreadError extends Error {
  constructor(
    message: string,
    readonly badInput: boolean,
  ) {
    super(message);
    this.name = 'FitThreadError';
  }
}

/** Computes one fit in a fresh worker thread; `timeoutMs` terminates it. */
export function runFitInThread(task: FitTask, onProgress: (fraction: number) => void = () => {}, timeoutMs = 10 * 60_000): Promise<FitResult> {
  return new Promise((resolve, reject) => {
    const worker = new Worker(new URL('./fit-thread-bootstrap.mjs', import.meta.url), { workerData: task });
    let settled = false;
    const finish = (fn: () => void) => {
      if (settled) return;
      settled = true;
      clearTimeout(timer);
      void worker.terminate();
      fn();
    };
    const timer = setTimeout(
      () => finish(() => reject(new FitThreadError(`the fit took longer than ${Math.round(timeoutMs / 1000)} s and was stopped`, false))),
      timeoutMs,
    );
    worker.on('message', (msg: FitThreadMessage) => {
      if (msg.type === 'progress') onProgress(msg.fraction);
      else if (msg.type === 'result') finish(() => resolve(msg.result));
      else finish(() => reject(new FitThreadError(msg.message, msg.badInput)));
    });
    worker.on('error', (err) => finish(() => reject(new FitThreadError(err.message, false))));
    worker.on('exit', (code) => finish(() => reject(new FitThreadError(`the fit thread stopped (exit code ${code})`, false))));
  });
}
