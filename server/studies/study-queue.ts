/** Where study steps are queued: one pg-boss job per step on the study-step queue. */
import type PgBoss from 'pg-boss';
import { STUDY_STEP_QUEUE } from '../jobs/queues.js';

/** A step job; index −1 asks a worker to assemble the study's outcome (after a cancel). */
export interface StudyStepJobData {
  studyId: string;
  index: number;
}

export interface StudyQueue {
  send(studyId: string, indices: number[], options?: { db?: PgBoss.ConnectionOptions['db'] }): Promise<string[]>;
  cancel(jobIds: string[]): Promise<void>;
}

/** `expireInSeconds` overrides the queue's expiry (how long a dead worker's step takes to come back). */
export function studyQueue(boss: PgBoss, expireInSeconds: number = STUDY_STEP_QUEUE.expireInSeconds): StudyQueue {
  return {
    async send(studyId, indices, options = {}) {
      const ids: string[] = [];
      for (const index of indices) {
        const id = await boss.send(STUDY_STEP_QUEUE.name, { studyId, index } satisfies StudyStepJobData, {
          retryLimit: STUDY_STEP_QUEUE.retryLimit,
          retryDelay: STUDY_STEP_QUEUE.retryDelaySeconds,
          expireInSeconds,
          ...options,
        });
        if (!id) throw new Error(`the queue ${STUDY_STEP_QUEUE.name} refused a step job`);
        ids.push(id);
      }
      return ids;
    },
    async cancel(jobIds) {
      if (jobIds.length) await boss.cancel(STUDY_STEP_QUEUE.name, jobIds).catch(() => {});
    },
  };
}
