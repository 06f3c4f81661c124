import { availableParallelism } from 'node:os';
import { Piscina } from 'piscina';
import { ApiError } from '../http/error-handler.js';
import { runComputeTask, type ComputeAnswers, type ComputeOutcome, type ComputeTask } from './compute-tasks.js';

/** Runs a request's geometry and engine work and answers its result, or throws the ApiError. */
export interface Compute {
  run<K extends ComputeTask['kind']>(task: Extract<ComputeTask, { kind: K }>, signal?: AbortSignal): Promise<ComputeAnswers[K]>;
  close(): Promise<void>;
}

interface ComputePoolOptions {
  /** Threads computing at once (default: cores − 1, at least 1). */
  threads?: number;
  /** Tasks waiting for a thread before new ones are refused with 503 (default 32 per thread). */
  maxQueue?: number;
  /** A task running longer is stopped (its thread ends) and answered 503 (default 60 s). */
  timeoutSeconds?: number;
}

function unwrap<T>(outcome: ComputeOutcome): T {
  if (outcome.ok) return outcome.value as T;
  const p = outcome.problem;
  throw new ApiError(p.status, p.code, p.message, p.issues);
}

/**
 * A pool of worker threads (piscina) for the geometry and engine work of requests:
 * checking a model document (rasterisation), turning a drawing into a mask, and the
 * run estimate. The API thread only parses, queues and answers, so health checks and
 * other requests are served while a heavy request computes. A task that overruns its
 * timeout or is abandoned by its client is stopped by ending its thread.
 */
export class ComputePool implements Compute {
  private readonly pool: Piscina;
  private readonly timeoutMs: number;

  constructor(options: ComputePoolOptions = {}) {
    const threads = options.threads ?? Math.max(1, availableParallelism() - 1);
    this.timeoutMs = (options.timeoutSeconds ?? 60) * 1000;
    this.pool = new Piscina({
      filename: new URL('./compute-thread.mjs', import.meta.url).href,
      minThreads: 1,
      maxThreads: threads,
      maxQueue: options.maxQueue ?? 32 * threads,
      // Starting a thread loads the engine through tsx (about a second): keep idle ones a while.
      idleTimeout: 120_000,
    });
  }

  async run<K extends ComputeTask['kind']>(task: Extract<ComputeTask, { kind: K }>, signal?: AbortSignal): Promise<ComputeAnswers[K]> {
    const timeout = AbortSignal.timeout(this.timeoutMs);
    const stop = signal ? AbortSignal.any([signal, timeout]) : timeout;
    try {
      return unwrap<ComputeAnswers[K]>(await this.pool.run(task, { signal: stop }));
    } catch (err) {
      if (err instanceof ApiError) throw err;
      if (timeout.aborted) {
        throw new ApiError(
          503,
          'computation_timeout',
          `The computation took longer than ${this.timeoutMs / 1000} s and was stopped; try a smaller model or window.`,
          undefined,
          30,
        );
      }
      if (signal?.aborted) throw new ApiError(499, 'client_closed', 'The request was abandoned by the client.');
      if (err instanceof Error && /queue is at limit/i.test(err.message)) {
        throw new ApiError(503, 'server_busy', 'The server is busy computing other requests; try again in 5 seconds.', undefined, 5);
      }
      throw err;
    }
  }

  /** Threads busy or waiting for: for tests and the health of the pool. */
  get queued(): number {
    return this.pool.queueSize;
  }

  async close(): Promise<void> {
    await this.pool.destroy();
  }
}

/**
 * Runs tasks on the calling thread: for command-line scripts (seed, bench) that have
 * no event loop to keep free. Never used by the API.
 */
export const inlineCompute: Compute = {
  async run(task) {
    return unwrap(await runComputeTask(task));
  },
  async close() {},
};
