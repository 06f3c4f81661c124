import PgBoss from 'pg-boss';
import { FIT_QUEUE, MODE_MAP_QUEUE, NOTIFICATION_QUEUE, RUN_QUEUES, STUDY_STEP_QUEUE, type RunKind } from './queues.js';

interface BossOptions {
  databaseUrl: string;
  /** How often pg-boss looks for expired jobs (its own backstop for lost workers). */
  maintenanceIntervalSeconds?: number;
}

/** Starts pg-boss on the application's database and declares every queue of queues.ts. */
export async function startBoss(opts: BossOptions): Promise<PgBoss> {
  const boss = new PgBoss({
    connectionString: opts.databaseUrl,
    max: 4,
    maintenanceIntervalSeconds: opts.maintenanceIntervalSeconds ?? 60,
  });
  boss.on('error', (err) => console.error('[poleward] queue error:', err.message));
  await boss.start();
  for (const spec of [...Object.values(RUN_QUEUES), MODE_MAP_QUEUE, FIT_QUEUE, NOTIFICATION_QUEUE, STUDY_STEP_QUEUE]) {
    await boss.createQueue(spec.name, {
      name: spec.name,
      retryLimit: spec.retryLimit,
      retryDelay: spec.retryDelaySeconds,
      expireInSeconds: spec.expireInSeconds,
    });
  }
  return boss;
}

/** What the API needs of the queue: enqueue a run, and let the supervisor retry a lost one. */
export interface RunQueue {
  enqueue(kind: RunKind, runId: string): Promise<string>;
  /** Drops a job that no worker has started yet. */
  cancel(kind: RunKind, jobId: string): Promise<void>;
}

/** Sends one run's job with its queue's policy; `options.db` sends it inside a transaction. */
export async function sendRunJob(boss: PgBoss, kind: RunKind, runId: string, options: PgBoss.ConnectionOptions = {}): Promise<string> {
  const spec = RUN_QUEUES[kind];
  const id = await boss.send(
    spec.name,
    { runId },
    { retryLimit: spec.retryLimit, retryDelay: spec.retryDelaySeconds, expireInSeconds: spec.expireInSeconds, ...options },
  );
  if (!id) throw new Error(`the queue ${spec.name} refused the job`);
  return id;
}

export function runQueue(boss: PgBoss): RunQueue {
  return {
    enqueue: (kind, runId) => sendRunJob(boss, kind, runId),
    async cancel(kind, jobId) {
      await boss.cancel(RUN_QUEUES[kind].name, jobId);
    },
  };
}
