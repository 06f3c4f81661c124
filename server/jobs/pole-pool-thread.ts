/**
 * One thread of a PoleThreadPool: builds the operator and its LU plan from the model
 * document once (numerical leads from the band edges the pool was given, when it was),
 * says 'ready' (with the id the pool gave it), then answers node and refinement batches
 * with the same SerialPoleWork that a one-thread search uses.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian.js';
import { SerialPoleWork } from '../../shared/engine/pole-work.js';
import { SparseLuPlan } from '../../shared/engine/sparse-lu.js';
import type { PoolReply, PoolRequest, PoolThreadData } from './pole-pool.js';

const port = parentPort!;
const { document, setup, readyId, leadEdges } = workerData as PoolThreadData;
let work: SerialPoleWork;
try {
  const op = new EffectiveHamiltonian(buildCavitySystem(document, { leadEdges }));
  const plan = SparseLuPlan.analyse(op.n, op.colPtr, op.rowIdx, { sites: op.sites });
  work = new SerialPoleWork(op, plan, setup);
  port.postMessage({ id: readyId, kind: 'ready' } satisfies PoolReply);
} catch (err) {
  port.postMessage({ id: readyId, kind: 'error', message: err instanceof Error ? err.message : String(err) } satisfies PoolReply);
}

port.on('message', (msg: PoolRequest) => {
  try {
    if (msg.kind === 'nodes') {
      const answers = work.nodesSync(msg.requests);
      port.postMessage(
        { id: msg.id, kind: 'nodes', answers } satisfies PoolReply,
        answers.map((a) => a.probed.buffer as ArrayBuffer),
      );
    } else {
      const answers = work.refineSync(msg.requests);
      const transfer: ArrayBuffer[] = [];
      for (const a of answers) if (a.pole) transfer.push(a.pole.right.buffer as ArrayBuffer, a.pole.left.buffer as ArrayBuffer);
      port.postMessage({ id: msg.id, kind: 'refine', answers } satisfies PoolReply, transfer);
    }
  } catch (err) {
    port.postMessage({ id: msg.id, kind: 'error', message: err instanceof Error ? err.message : String(err) } satisfies PoolReply);
  }
});
