/**
 * A pool of worker threads that does the LUs of one pole search (PoleWork): each
 * thread builds its own copy of the operator and LU plan from the model document (with
 * the numerical leads' band edges the caller found already, so the threshold search runs
 * once per run), then evaluates contour nodes and Newton refinements as the search asks for them.
 * Work is handed out one panel (or one candidate) at a time to whichever thread is
 * free, and answers are put back in request order, so the search's result is the
 * same as on one thread.
 */
import { Worker } from 'node:worker_threads';
import { PANEL_ORDER, type ContourNode } from '../../shared/engine/contour.js';
import type { NodeRequest, PoleWork, PoleWorkSetup, RefineOutcome, RefineRequest } from '../../shared/engine/pole-work.js';
import type { BandEdge } from '../../shared/engine/numerical-lead-bands.js';

/** What a pool thread is started with. */
export interface PoolThreadData {
  document: unknown;
  setup: PoleWorkSetup;
  readyId: number;
  leadEdges?: (BandEdge[] | null)[];
}

export type PoolRequest = { id: number; kind: 'nodes'; requests: NodeRequest[] } | { id: number; kind: 'refine'; requests: RefineRequest[] };
export type PoolReply =
  | { id: number; kind: 'ready' }
  | { id: number; kind: 'nodes'; answers: ContourNode[] }
  | { id: number; kind: 'refine'; answers: RefineOutcome[] }
  | { id: number; kind: 'error'; message: string };

interface Lane {
  worker: Worker;
  busy: boolean;
}

export class PoleThreadPool implements PoleWork {
  private nextId = 1;
  private readonly waiting = new Map<number, { resolve: (r: PoolReply) => void; reject: (e: Error) => void }>();
  private failure: Error | null = null;

  private constructor(
    readonly setup: PoleWorkSetup,
    private readonly lanes: Lane[],
  ) {}

  /**
   * Starts `threads` workers for the model document; resolves once each has built its operator.
   * `leadEdges` (leadEdgesOf of the caller's system for the same document) spares each thread
   * its numerical leads' threshold search; without it every thread searches again.
   */
  static async start(document: unknown, setup: PoleWorkSetup, threads: number, leadEdges?: (BandEdge[] | null)[]): Promise<PoleThreadPool> {
    if (!(Number.isInteger(threads) && threads >= 1)) throw new RangeError(`PoleThreadPool: threads must be a positive integer, got ${threads}`);
    const lanes: Lane[] = [];
    for (let k = 0; k < threads; k++) {
      // ready replies carry the ids −1, −2, … (batches count up from 1)
      const workerData: PoolThreadData = { document, setup, readyId: -(k + 1), leadEdges };
      lanes.push({ worker: new Worker(new URL('./pole-pool-bootstrap.mjs', import.meta.url), { workerData }), busy: false });
    }
    const pool = new PoleThreadPool(setup, lanes);
    for (const lane of lanes) {
      lane.worker.on('message', (msg: PoolReply) => pool.settle(msg));
      lane.worker.on('error', (err) => pool.fail(err instanceof Error ? err : new Error(String(err))));
      lane.worker.on('exit', (code) => code !== 0 && pool.fail(new Error(`a pole-search thread stopped (exit code ${code})`)));
    }
    try {
      await Promise.all(lanes.map((lane, k) => pool.call(lane, -(k + 1))));
    } catch (e) {
      await pool.close();
      throw e;
    }
    return pool;
  }

  async evaluateNodes(requests: NodeRequest[]): Promise<ContourNode[]> {
    const chunks: NodeRequest[][] = [];
    for (let k = 0; k < requests.length; k += PANEL_ORDER) chunks.push(requests.slice(k, k + PANEL_ORDER));
    const answers = await this.spread(chunks, (id, chunk): PoolRequest => ({ id, kind: 'nodes', requests: chunk }));
    return answers.flatMap((a) => (a.kind === 'nodes' ? a.answers : []));
  }

  async refine(requests: RefineRequest[]): Promise<RefineOutcome[]> {
    const answers = await this.spread(
      requests.map((r) => [r]),
      (id, chunk): PoolRequest => ({ id, kind: 'refine', requests: chunk }),
    );
    return answers.flatMap((a) => (a.kind === 'refine' ? a.answers : []));
  }

  /** Stops every thread. */
  async close(): Promise<void> {
    this.failure ??= new Error('the pole-search pool was closed');
    await Promise.all(this.lanes.map((l) => l.worker.terminate()));
  }

  /** Runs the chunks on the free threads, one at a time each, and returns the replies in chunk order. */
  private async spread<T>(chunks: T[], message: (id: number, chunk: T) => PoolRequest): Promise<PoolReply[]> {
    const replies: PoolReply[] = new Array(chunks.length);
    let next = 0;
    const run = async (lane: Lane): Promise<void> => {
      while (next < chunks.length) {
        const k = next++;
        const id = this.nextId++;
        replies[k] = await this.call(lane, id, message(id, chunks[k]));
      }
    };
    await Promise.all(this.lanes.map((lane) => run(lane)));
    return replies;
  }

  private call(lane: Lane, id: number, request?: PoolRequest): Promise<PoolReply> {
    if (this.failure) return Promise.reject(this.failure);
    return new Promise((resolve, reject) => {
      this.waiting.set(id, {
        resolve: (r) => {
          lane.busy = false;
          if (r.kind === 'error') reject(new Error(r.message));
          else resolve(r);
        },
        reject,
      });
      lane.busy = true;
      if (request) lane.worker.postMessage(request);
    });
  }

  private settle(msg: PoolReply): void {
    const w = this.waiting.get(msg.id);
    if (!w) return;
    this.waiting.delete(msg.id);
    w.resolve(msg);
  }

  private fail(err: Error): void {
    this.failure ??= err;
    for (const w of this.waiting.values()) w.reject(err);
    this.waiting.clear();
  }
}
