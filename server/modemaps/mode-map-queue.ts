import type PgBoss from 'pg-boss';
import { MODE_MAP_QUEUE } from '../jobs/queues.js';

/** The payload of a mode-map job: the row holds everything else. */
export interface ModeMapJobData {
  mapId: string;
}

/** What the API needs to queue a mode map. */
export interface ModeMapQueue {
  enqueue(mapId: string): Promise<string>;
}

export function modeMapQueue(boss: PgBoss): ModeMapQueue {
  return {
    async enqueue(mapId) {
      const q = MODE_MAP_QUEUE;
      const id = await boss.send(q.name, { mapId } satisfies ModeMapJobData, {
        retryLimit: q.retryLimit,
        retryDelay: q.retryDelaySeconds,
        expireInSeconds: q.expireInSeconds,
      });
      if (!id) throw new Error(`the queue ${q.name} refused the job`);
      return id;
    },
  };
}
