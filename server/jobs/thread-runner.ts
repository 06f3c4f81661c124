import { Worker } from 'node:worker_threads';
import type { EngineTask, EngineTaskResult } from './engine-task.js';
import type { ThreadMessage } from './engine-thread.js';

export class EngineTaskError extends Error {
  constructor(
    message: string,
    readonly invalidModel: boolean,
  ) {
    super(message);
    this.name = 'EngineTaskError';
  }
}

export class EngineTaskCancelled extends Error {
  constructor() {
    super('The run was cancelled.');
    this.name = 'EngineTaskCancelled';
  }
}

/**
 * Runs an engine task in a fresh worker thread (loaded through tsx by a small
 * bootstrap, so it works the same under npm start, vitest and plain node).
 * `signal` terminates the thread at once.
 */
export function runInThread(task: EngineTask, onProgress: (stage: string, fraction: number) => void, signal?: AbortSignal): Promise<EngineTaskResult> {
  return new Promise((resolve, reject) => {
    const worker = new Worker(new URL('./engine-thread-bootstrap.mjs', import.meta.url), { workerData: task });
    let settled = false;
    const finish = (fn: () => void) => {
      if (settled) return;
      settled = true;
      signal?.removeEventListener('abort', onAbort);
      fn();
    };
    const onAbort = () => {
      void worker.terminate();
      finish(() => reject(new EngineTaskCancelled()));
    };
    if (signal?.aborted) return onAbort();
    signal?.addEventListener('abort', onAbort);
    worker.on('message', (msg: ThreadMessage) => {
      if (msg.type === 'progress') onProgress(msg.stage, msg.fraction);
      else if (msg.type === 'result') finish(() => resolve(msg.result));
      else finish(() => reject(new EngineTaskError(msg.message, msg.invalidModel)));
    });
    worker.on('error', (err) => finish(() => reject(new EngineTaskError(err.message, false))));
    worker.on('exit', (code) => finish(() => reject(new EngineTaskError(`the engine thread stopped (exit code ${code})`, false))));
  });
}
