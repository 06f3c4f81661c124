/**
 * E-mails the owner of a long run when it has ended for good (completed, or failed after its
 * last try). Runs that end within LONG_RUN_SECONDS of their submission are watched on screen
 * and send nothing. Called by the worker after the run's end is committed; a failure to
 * queue the mail is logged and never touches the run.
 */
import { eq } from 'drizzle-orm';
import type { Db } from '../db/client.js';
import { researchGroups } from '../db/schema/groups.js';
import { cavityModels, modelVersions } from '../db/schema/models.js';
import { runs } from '../db/schema/runs.js';
import type { NotificationQueue } from './notification-queue.js';
import { recordNotifications, userById } from './notifications.js';

/** From submission to end; shorter runs send no e-mail. */
const LONG_RUN_SECONDS = 60;

export async function notifyRunEnded(
  db: Db,
  queue: NotificationQueue | null,
  publicUrl: string,
  runId: string,
  longAfterSeconds = LONG_RUN_SECONDS,
): Promise<string[]> {
  const [run] = await db
    .select({
      id: runs.id,
      groupId: runs.groupId,
      kind: runs.kind,
      status: runs.status,
      error: runs.error,
      createdBy: runs.createdBy,
      createdAt: runs.createdAt,
      finishedAt: runs.finishedAt,
      modelName: cavityModels.name,
      modelVersion: modelVersions.version,
      groupName: researchGroups.name,
      slug: researchGroups.slug,
    })
    .from(runs)
    .innerJoin(modelVersions, eq(modelVersions.id, runs.modelVersionId))
    .innerJoin(cavityModels, eq(cavityModels.id, modelVersions.modelId))
    .innerJoin(researchGroups, eq(researchGroups.id, runs.groupId))
    .where(eq(runs.id, runId));
  if (!run || !run.finishedAt || (run.status !== 'completed' && run.status !== 'failed')) return [];
  const seconds = (run.finishedAt.getTime() - run.createdAt.getTime()) / 1000;
  if (seconds < longAfterSeconds) return [];
  const owner = await userById(db, run.createdBy);
  if (!owner) return [];
  const what = `${run.kind === 'transmission' ? 'transmission sweep' : 'pole search'} of ${run.modelName} v${run.modelVersion}`;
  const took = seconds < 120 ? `${Math.round(seconds)} s` : `${Math.round(seconds / 60)} min`;
  return db.transaction((tx) =>
    recordNotifications(tx, queue, {
      groupId: run.groupId,
      kind: 'run_finished',
      recipients: [owner],
      actorId: null,
      subject: `[${run.groupName}] Your ${what} ${run.status === 'completed' ? 'finished' : 'failed'}`,
      lines: [run.status === 'completed' ? `Your ${what} finished after ${took}.` : `Your ${what} failed after ${took}: ${run.error ?? 'no reason recorded'}.`],
      link: `${publicUrl}/g/${run.slug}/runs/${run.id}`,
      linkLabel: 'Open the run',
    }),
  );
}

/** The worker's onEnded hook: queue the e-mail, log (never throw) when that fails. */
export function runEndedNotifier(db: Db, queue: NotificationQueue, publicUrl: string, log: (m: string) => void = (m) => console.error(m)) {
  return async (runId: string) => {
    await notifyRunEnded(db, queue, publicUrl, runId).catch((err: Error) =>
      log(`[worker] run ${runId}: the e-mail to its owner could not be queued: ${err.message}`),
    );
  };
}
