import { Worker } from 'node:worker_threads';
import type { ModeMapPayload, ModeMapTask } from './mode-map-task.js';
import type { MapThreadMessage } from './mode-map-thread.js';

/** Runs a mode-map task in a fresh worker thread; `signal` terminates it. */
export function runModeMapInThread(task: ModeMapTask, onProgress: (stage: string, fraction: number) => void, signal?: AbortSignal): Promise<ModeMapPayload> {
  return new Promise((resolve, reject) => {
    const worker = new Worker(new URL('./mode-map-thread-bootstrap.mjs', import.meta.url), { workerData: task });
    let settled = false;
    const finish = (fn: () => void) => {
      if (settled) return;
      settled = true;
      signal?.removeEventListener('abort', onAbort);
      fn();
    };
    const onAbort = () => {
      void worker.terminate();
      finish(() => reject(new Error('The map was cancelled.')));
    };
    if (signal?.aborted) return onAbort();
    signal?.addEventListener('abort', onAbort);
    worker.on('message', (msg: MapThreadMessage) => {
      if (msg.type === 'progress') onProgress(msg.stage, msg.fraction);
      else if (msg.type === 'result') finish(() => resolve(msg.result));
      else finish(() => reject(new ModeMapError(msg.message)));
    });
    worker.on('error', (err) => finish(() => reject(new Error(err.message))));
    worker.on('exit', (code) => finish(() => reject(new Error(`the map thread stopped (exit code ${code})`))));
  });
}

/** The engine refused the request (a closed channel, an energy below the potential…): not worth a retry. */
export class ModeMapError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'ModeMapError';
  }
}
