/**
 * The one owner of the `runs` table: every write to a run row and every run event
 * (`pg_notify('run_events', id)`, which the API's event streams follow) goes through
 * here. The routes' service, the worker's attempt, the result writer, the supervisor and
 * the group restore call these functions; tests/server/run-store.test.ts fails when
 * another file under server/ writes the table.
 *
 * Every status change is checked against RUN_TRANSITIONS. A change guarded by an
 * attempt only applies while that attempt owns the run (same attempt, status running):
 * a stale attempt gets `null` and changes nothing, so a lost worker that wakes up late
 * cannot overwrite the live attempt's work.
 */
import { and, eq, inArray, isNull, or, sql, type SQL } from 'drizzle-orm';
import type { PgUpdateSetSource } from 'drizzle-orm/pg-core';
import type { Queryable } from '../db/client.js';
import { runs, type RunStatus } from '../db/schema/runs.js';
import { canTransition, IllegalTransition, sourcesOf, type Transitions } from '../jobs/job-lifecycle.js';

/**
 * queued → running (an attempt claims it), cancelled (cancelled before a worker took it),
 * failed (it could not be queued, or its attempts were used up);
 * running → running (a new attempt takes over from one pg-boss gave up on), queued (a
 * failure that may pass, or a lost worker: it waits for a retry), completed, failed,
 * cancelled. The three ends are final.
 */
export const RUN_TRANSITIONS: Transitions<RunStatus> = {
  queued: ['running', 'cancelled', 'failed'],
  running: ['running', 'queued', 'completed', 'failed', 'cancelled'],
  completed: [],
  failed: [],
  cancelled: [],
};

export const RUN_STATUSES = Object.keys(RUN_TRANSITIONS) as RunStatus[];

export function isFinished(status: RunStatus): boolean {
  return RUN_TRANSITIONS[status].length === 0;
}

type RunRow = typeof runs.$inferSelect;
/** Columns a transition may set beside the status (never the identity of the run). */
type RunChanges = Omit<PgUpdateSetSource<typeof runs>, 'id' | 'groupId' | 'modelVersionId' | 'kind' | 'status' | 'createdBy' | 'createdAt'>;

interface TransitionGuard {
  /** Applies only while this attempt owns the run (its attempt, status running); otherwise null. */
  attempt?: number;
  /** A further condition (a stale heartbeat, say); when false the answer is null. */
  when?: SQL;
  set?: RunChanges;
}

/** Tells the API's event streams that the run changed (in the caller's transaction, so only after it commits). */
async function notify(q: Queryable, runId: string): Promise<void> {
  await q.execute(sql`select pg_notify('run_events', ${runId})`);
}

/**
 * Moves a run to `to`. Answers the changed row, or null when a guard did not hold (another
 * attempt owns the run, the run is gone, `when` is false). Throws IllegalTransition, writing
 * nothing, when the run's status may not become `to`.
 */
async function transition(q: Queryable, runId: string, to: RunStatus, guard: TransitionGuard = {}): Promise<RunRow | null> {
  const owned = guard.attempt !== undefined ? and(eq(runs.attempt, guard.attempt), eq(runs.status, 'running')) : undefined;
  const [row] = await q
    .update(runs)
    .set({ ...guard.set, status: to })
    .where(and(eq(runs.id, runId), inArray(runs.status, sourcesOf(RUN_TRANSITIONS, to)), owned, guard.when))
    .returning();
  if (row) {
    await notify(q, runId);
    return row;
  }
  const [now] = await q.select({ status: runs.status, attempt: runs.attempt }).from(runs).where(eq(runs.id, runId));
  if (!now) return null;
  if (guard.attempt !== undefined && (now.attempt !== guard.attempt || now.status !== 'running')) return null;
  if (!canTransition(RUN_TRANSITIONS, now.status, to)) throw new IllegalTransition('run', runId, now.status, to);
  return null;
}

export const runStore = {
  transition,

  /** A new run, queued. Answers its id. */
  async create(
    q: Queryable,
    values: Pick<typeof runs.$inferInsert, 'groupId' | 'modelVersionId' | 'kind' | 'window' | 'note' | 'estimate' | 'createdBy'>,
  ): Promise<string> {
    const [row] = await q
      .insert(runs)
      .values({ ...values, status: 'queued', progressStage: 'queued', progressFraction: 0 })
      .returning({ id: runs.id });
    return row.id;
  },

  /**
   * Records the queue job of a run. Without `replace`, only when the run has none yet (a
   * worker may have claimed the run with this job already); with it, the job that replaces a
   * lost one, while the run waits in the queue.
   */
  async attachJob(q: Queryable, runId: string, jobId: string, replace = false): Promise<void> {
    const [row] = await q
      .update(runs)
      .set(replace ? { jobId, progressStage: 'queued again' } : { jobId })
      .where(and(eq(runs.id, runId), replace ? eq(runs.status, 'queued') : isNull(runs.jobId)))
      .returning({ id: runs.id });
    if (row && replace) await notify(q, runId);
  },

  /**
   * An attempt claims the run (attempt + 1). It takes over from an attempt that pg-boss or
   * the supervisor gave up on, but never from another live job of the same run (a
   * duplicate delivery): `jobId` must be the run's job or the run must have none.
   * Answers the new attempt, or null when the run ended or another job owns it.
   */
  async startAttempt(q: Queryable, runId: string, jobId?: string): Promise<number | null> {
    try {
      const row = await transition(q, runId, 'running', {
        when: jobId ? or(isNull(runs.jobId), eq(runs.jobId, jobId)) : undefined,
        set: {
          attempt: sql`${runs.attempt} + 1`,
          jobId: jobId ?? sql`${runs.jobId}`,
          startedAt: sql`coalesce(${runs.startedAt}, now())`,
          heartbeatAt: new Date(),
          progressStage: 'starting',
          progressFraction: 0,
          error: null,
        },
      });
      return row?.attempt ?? null;
    } catch (err) {
      if (err instanceof IllegalTransition) return null; // the run ended before this delivery
      throw err;
    }
  },

  /**
   * The attempt's heartbeat, with its progress when there is news (then an event is sent).
   * Answers whether a cancellation was asked, or null when the attempt no longer owns the run.
   */
  async beat(q: Queryable, runId: string, attempt: number, progress: { stage: string; fraction: number } | null): Promise<{ cancelRequested: boolean } | null> {
    const [row] = await q
      .update(runs)
      .set({ heartbeatAt: new Date(), ...(progress ? { progressStage: progress.stage, progressFraction: progress.fraction } : {}) })
      .where(and(eq(runs.id, runId), eq(runs.attempt, attempt), eq(runs.status, 'running')))
      .returning({ cancelRequested: runs.cancelRequested });
    if (row && progress) await notify(q, runId);
    return row ?? null;
  },

  /** Locks the run for the rest of `tx`; true while `attempt` still owns it (results may be written). */
  async lockAttempt(tx: Queryable, runId: string, attempt: number): Promise<boolean> {
    const [row] = await tx.select({ attempt: runs.attempt, status: runs.status }).from(runs).where(eq(runs.id, runId)).for('update');
    return !!row && row.attempt === attempt && row.status === 'running';
  },

  /** The attempt's results are written: the run completed. */
  async complete(
    q: Queryable,
    runId: string,
    attempt: number,
    results: Pick<RunChanges, 'engineVersion' | 'thresholds' | 'certificate' | 'stats' | 'resonanceCount'>,
  ): Promise<boolean> {
    const row = await transition(q, runId, 'completed', {
      attempt,
      set: { ...results, progressStage: 'done', progressFraction: 1, finishedAt: new Date(), error: null },
    });
    return !!row;
  },

  /** Ends the run as failed: by its attempt (guarded), or by the service or the supervisor (any unfinished run). */
  async fail(q: Queryable, runId: string, error: string, attempt?: number): Promise<boolean> {
    return !!(await transition(q, runId, 'failed', { attempt, set: { error, finishedAt: new Date() } }));
  },

  /** The attempt failed in a way that may pass: the run waits in the queue for pg-boss's retry. */
  async retry(q: Queryable, runId: string, attempt: number, error: string): Promise<boolean> {
    return !!(await transition(q, runId, 'queued', { attempt, set: { progressStage: 'waiting for a retry', error } }));
  },

  /**
   * A running run whose heartbeat is older than `staleSeconds` lost its worker: back to the
   * queue, its error the lost-worker text or `note` (a run interrupted by a shutdown). Null when
   * it is not (any more) such a run (another supervisor, or the attempt, got there first).
   */
  async requeueLost(q: Queryable, runId: string, staleSeconds: number, note?: string): Promise<RunRow | null> {
    return transition(q, runId, 'queued', {
      when: and(eq(runs.status, 'running'), sql`${runs.heartbeatAt} < now() - make_interval(secs => ${staleSeconds})`),
      set: {
        progressStage: note ? 'queued again' : 'waiting for another worker',
        error: note ?? sql`'the worker of attempt ' || ${runs.attempt} || ' stopped answering; the run was put back in the queue'`,
      },
    }).catch((err) => {
      if (err instanceof IllegalTransition) return null; // it ended meanwhile
      throw err;
    });
  },

  /** A worker found a cancellation asked: the run ends as cancelled (by its attempt when given). */
  async cancelled(q: Queryable, runId: string, attempt?: number): Promise<boolean> {
    const row = await transition(q, runId, 'cancelled', {
      attempt,
      when: attempt !== undefined ? eq(runs.cancelRequested, true) : undefined,
      set: { finishedAt: new Date(), progressStage: 'cancelled' },
    });
    return !!row;
  },

  /**
   * Someone asks to cancel: a queued run ends at once; a running one is flagged and its
   * attempt stops at its next heartbeat. Answers what happened; throws IllegalTransition
   * for a finished run.
   */
  async requestCancel(q: Queryable, runId: string): Promise<'cancelled' | 'requested' | null> {
    const queued = await transition(q, runId, 'cancelled', {
      when: eq(runs.status, 'queued'),
      set: { cancelRequested: true, finishedAt: new Date(), progressStage: 'cancelled' },
    });
    if (queued) return 'cancelled';
    const [flagged] = await q
      .update(runs)
      .set({ cancelRequested: true })
      .where(and(eq(runs.id, runId), eq(runs.status, 'running')))
      .returning({ id: runs.id });
    if (flagged) {
      await notify(q, runId);
      return 'requested';
    }
    const [now] = await q.select({ status: runs.status }).from(runs).where(eq(runs.id, runId));
    if (now && isFinished(now.status)) throw new IllegalTransition('run', runId, now.status, 'cancelled');
    return null;
  },

  /** Rows brought back by a group restore (server/backup/group-restore.ts), already finished. */
  async restore(tx: Queryable, rows: (typeof runs.$inferInsert)[]): Promise<void> {
    for (const r of rows) {
      if (!isFinished(r.status ?? 'queued')) throw new Error(`a restored run must be finished, not ${r.status}`);
    }
    if (rows.length) await tx.insert(runs).values(rows);
  },
};
