/**
 * Worker-thread entry: computes one EngineTask and posts progress messages as it
 * goes. Cancellation is done by the parent terminating the thread (and with it any
 * pool threads it started), since the engine's loops are synchronous and would not
 * see a message before they end.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { InvalidModelError } from '../../shared/engine/effective-hamiltonian.js';
import { runEngineTaskWithPool, type EngineTask, type EngineTaskResult } from './engine-task.js';

export type ThreadMessage =
  | { type: 'progress'; stage: string; fraction: number }
  | { type: 'result'; result: EngineTaskResult }
  | { type: 'error'; message: string; invalidModel: boolean };

const port = parentPort!;
try {
  let last = 0;
  // a pole search with task.threads > 1 farms its LUs out to a pool of threads of its own
  const result = await runEngineTaskWithPool(workerData as EngineTask, {
    onProgress: (stage, fraction) => {
      const now = Date.now();
      if (now - last < 200 && fraction < 1) return;
      last = now;
      port.postMessage({ type: 'progress', stage, fraction } satisfies ThreadMessage);
    },
  });
  const transfer: ArrayBuffer[] = result.poles.map((p) => p.mode.buffer as ArrayBuffer);
  port.postMessage({ type: 'result', result } satisfies ThreadMessage, transfer);
} catch (err) {
  const message = err instanceof Error ? err.message : String(err);
  port.postMessage({ type: 'error', message, invalidModel: err instanceof InvalidModelError } satisfies ThreadMessage);
}
