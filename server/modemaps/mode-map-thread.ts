/**
 * Worker-thread entry of a mode-map job: computes one ModeMapTask and posts progress
 * as it goes (the parent terminates the thread to cancel it).
 */
import { parentPort, workerData } from 'node:worker_threads';
import { runModeMapTask, type ModeMapPayload, type ModeMapTask } from './mode-map-task.js';

export type MapThreadMessage =
  { type: 'progress'; stage: string; fraction: number } | { type: 'result'; result: ModeMapPayload } | { type: 'error'; message: string };

const port = parentPort!;
try {
  let last = 0;
  const result = runModeMapTask(workerData as ModeMapTask, (stage, fraction) => {
    const now = Date.now();
    if (now - last < 200 && fraction < 1) return;
    last = now;
    port.postMessage({ type: 'progress', stage, fraction } satisfies MapThreadMessage);
  });
  port.postMessage({ type: 'result', result } satisfies MapThreadMessage);
} catch (err) {
  port.postMessage({ type: 'error', message: err instanceof Error ? err.message : String(err) } satisfies MapThreadMessage);
}
