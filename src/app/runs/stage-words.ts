import type { RunStatus } from '../../../shared/api/enums';

/**
 * Plain words for the stage names a run reports: the engine's own (shared/engine/
 * poles.ts, transmission.ts, closed-cavity.ts) and the worker's and queue's
 * (server/jobs/run-job.ts, supervisor.ts, server/runs/run-service.ts). Kept in one
 * place so the run list and the run page say the same thing.
 */
const stageWords: Readonly<Record<string, string>> = {
  queued: 'waiting in the queue',
  'waiting for another worker': 'waiting for another worker (the previous one stopped answering)',
  starting: 'starting',
  contour: 'searching the contour',
  refine: 'refining poles',
  modes: 'describing the poles (partial widths, modes)',
  transmission: 'transmission spectrum',
  'closed cavity': 'bound states of the closed cavity',
  done: 'done',
  cancelled: 'cancelled',
};

/**
 * The stage of a run in words. A stage this table does not know (a newer engine)
 * is shown as the engine named it; with no stage at all the status speaks.
 */
export function stageInWords(stage: string | null | undefined, status: RunStatus): string {
  const name = stage?.trim();
  if (name) return stageWords[name] ?? name;
  return status === 'queued' ? stageWords['queued'] : stageWords['starting'];
}
