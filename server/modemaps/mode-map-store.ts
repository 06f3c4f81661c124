/**
 * The status changes of a map computed on demand, with the same rules as the run store
 * (server/runs/run-store.ts): one transition table, and a change guarded by an attempt
 * applies only while that attempt owns the map (its attempt, status running), so a worker
 * that lost its map to the supervisor and finishes late writes nothing.
 */
import { and, eq, inArray, isNull, or, sql, type SQL } from 'drizzle-orm';
import type { PgUpdateSetSource } from 'drizzle-orm/pg-core';
import type { Queryable } from '../db/client.js';
import { modeMaps, type ModeMapStatus } from '../db/schema/mode-maps.js';
import { canTransition, IllegalTransition, unlessEnded, sourcesOf, type Transitions } from '../jobs/job-lifecycle.js';

/**
 * queued → running (a worker claims it), failed (it could not be queued);
 * running → running (a new attempt after pg-boss gave the last one up), queued (a failure
 * that may pass, or a lost worker), completed, failed; failed → queued (asked again).
 */
const MODE_MAP_TRANSITIONS: Transitions<ModeMapStatus> = {
  queued: ['running', 'failed'],
  running: ['running', 'queued', 'completed', 'failed'],
  completed: [],
  failed: ['queued'],
};

export type ModeMapRow = typeof modeMaps.$inferSelect;
type Changes = Omit<PgUpdateSetSource<typeof modeMaps>, 'id' | 'groupId' | 'status'>;

async function transition(
  q: Queryable,
  id: string,
  to: ModeMapStatus,
  guard: { attempt?: number; when?: SQL; set?: Changes } = {},
): Promise<ModeMapRow | null> {
  const owned = guard.attempt !== undefined ? and(eq(modeMaps.attempt, guard.attempt), eq(modeMaps.status, 'running')) : undefined;
  const [row] = await q
    .update(modeMaps)
    .set({ ...guard.set, status: to })
    .where(and(eq(modeMaps.id, id), inArray(modeMaps.status, sourcesOf(MODE_MAP_TRANSITIONS, to)), owned, guard.when))
    .returning();
  if (row) return row;
  const [now] = await q.select({ status: modeMaps.status, attempt: modeMaps.attempt }).from(modeMaps).where(eq(modeMaps.id, id));
  if (!now) return null;
  if (guard.attempt !== undefined && (now.attempt !== guard.attempt || now.status !== 'running')) return null;
  if (!canTransition(MODE_MAP_TRANSITIONS, now.status, to)) throw new IllegalTransition('map', id, now.status, to);
  return null;
}

export const modeMapStore = {
  transition,

  /** A new queued map; null when one with the same cache key exists. */
  async create(
    q: Queryable,
    values: Pick<typeof modeMaps.$inferInsert, 'groupId' | 'modelVersionId' | 'resonanceId' | 'params' | 'cacheKey' | 'createdBy'>,
  ): Promise<ModeMapRow | null> {
    const [row] = await q
      .insert(modeMaps)
      .values({ ...values, status: 'queued', progressStage: 'queued', progressFraction: 0 })
      .onConflictDoNothing()
      .returning();
    return row ?? null;
  },

  /** A failed map asked for again goes back to the queue, without a job until the new one is attached. */
  async askAgain(q: Queryable, id: string): Promise<ModeMapRow | null> {
    return unlessEnded(
      transition(q, id, 'queued', {
        when: eq(modeMaps.status, 'failed'),
        set: { error: null, progressStage: 'queued', progressFraction: 0, finishedAt: null, jobId: null, heartbeatAt: null },
      }),
    );
  },

  /** Records the map's queue job, unless a worker already claimed the map with it. */
  async attachJob(q: Queryable, id: string, jobId: string, replace = false): Promise<void> {
    await q
      .update(modeMaps)
      .set({ jobId })
      .where(and(eq(modeMaps.id, id), replace ? eq(modeMaps.status, 'queued') : isNull(modeMaps.jobId)));
  },

  /** An attempt claims the map (attempt + 1), unless it ended or another job of it is live. */
  async startAttempt(q: Queryable, id: string, jobId?: string): Promise<number | null> {
    const row = await unlessEnded(
      transition(q, id, 'running', {
        when: jobId ? or(isNull(modeMaps.jobId), eq(modeMaps.jobId, jobId)) : undefined,
        set: {
          attempt: sql`${modeMaps.attempt} + 1`,
          jobId: jobId ?? sql`${modeMaps.jobId}`,
          heartbeatAt: new Date(),
          progressStage: 'starting',
          progressFraction: 0,
          error: null,
        },
      }),
    );
    return row?.attempt ?? null;
  },

  /** The heartbeat, with the progress when there is news; false when the attempt no longer owns the map. */
  async beat(q: Queryable, id: string, attempt: number, progress: { stage: string; fraction: number } | null): Promise<boolean> {
    const [row] = await q
      .update(modeMaps)
      .set({ heartbeatAt: new Date(), ...(progress ? { progressStage: progress.stage, progressFraction: progress.fraction } : {}) })
      .where(and(eq(modeMaps.id, id), eq(modeMaps.attempt, attempt), eq(modeMaps.status, 'running')))
      .returning({ id: modeMaps.id });
    return !!row;
  },

  async complete(q: Queryable, id: string, attempt: number, result: NonNullable<typeof modeMaps.$inferInsert.result>, engineVersion: string): Promise<boolean> {
    return !!(await unlessEnded(
      transition(q, id, 'completed', { attempt, set: { result, engineVersion, progressStage: 'done', progressFraction: 1, finishedAt: new Date() } }),
    ));
  },

  async fail(q: Queryable, id: string, error: string, attempt?: number): Promise<boolean> {
    return !!(await unlessEnded(transition(q, id, 'failed', { attempt, set: { error, finishedAt: new Date() } })));
  },

  /** The attempt failed in a way that may pass: the map waits for pg-boss's retry. */
  async retry(q: Queryable, id: string, attempt: number, error: string): Promise<boolean> {
    return !!(await unlessEnded(transition(q, id, 'queued', { attempt, set: { error } })));
  },

  /** A running map whose heartbeat is older than `staleSeconds` lost its worker: back to the queue. */
  async requeueLost(q: Queryable, id: string, staleSeconds: number): Promise<ModeMapRow | null> {
    return unlessEnded(
      transition(q, id, 'queued', {
        when: and(eq(modeMaps.status, 'running'), sql`${modeMaps.heartbeatAt} < now() - make_interval(secs => ${staleSeconds})`),
        set: {
          progressStage: 'waiting for another worker',
          error: sql`'the worker of attempt ' || ${modeMaps.attempt} || ' stopped answering; the map was put back in the queue'`,
        },
      }),
    );
  },
};
