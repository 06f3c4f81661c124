/**
 * The status changes of a peak fit, with the same rules as the run store
 * (server/runs/run-store.ts): one transition table, and a change guarded by an attempt
 * applies only while that attempt owns the fit (its attempt, status running), so a worker
 * that lost its fit to the supervisor and finishes or fails late writes nothing. Every
 * change tells the fit's event streams (fit-notify.ts) in the caller's transaction.
 */
import { and, eq, inArray, isNull, sql, type SQL } from 'drizzle-orm';
import type { PgUpdateSetSource } from 'drizzle-orm/pg-core';
import type { Queryable } from '../db/client.js';
import { peakFits, type FitStatus } from '../db/schema/fits.js';
import { canTransition, IllegalTransition, unlessEnded, sourcesOf, type Transitions } from '../jobs/job-lifecycle.js';
import { notifyFit } from './fit-notify.js';

/**
 * queued → running (a worker claims it), failed; running → running (a new attempt after
 * pg-boss gave the last one up), queued (a lost worker), completed, failed. The ends are final.
 */
export const FIT_TRANSITIONS: Transitions<FitStatus> = {
  queued: ['running', 'failed'],
  running: ['running', 'queued', 'completed', 'failed'],
  completed: [],
  failed: [],
};

type FitRow = typeof peakFits.$inferSelect;
type Changes = Omit<PgUpdateSetSource<typeof peakFits>, 'id' | 'groupId' | 'status'>;

async function transition(q: Queryable, id: string, to: FitStatus, guard: { attempt?: number; when?: SQL; set?: Changes } = {}): Promise<FitRow | null> {
  const owned = guard.attempt !== undefined ? and(eq(peakFits.attempt, guard.attempt), eq(peakFits.status, 'running')) : undefined;
  const [row] = await q
    .update(peakFits)
    .set({ ...guard.set, status: to })
    .where(and(eq(peakFits.id, id), inArray(peakFits.status, sourcesOf(FIT_TRANSITIONS, to)), owned, guard.when))
    .returning();
  if (row) {
    await notifyFit(q, id);
    return row;
  }
  const [now] = await q.select({ status: peakFits.status, attempt: peakFits.attempt }).from(peakFits).where(eq(peakFits.id, id));
  if (!now) return null;
  if (guard.attempt !== undefined && (now.attempt !== guard.attempt || now.status !== 'running')) return null;
  if (!canTransition(FIT_TRANSITIONS, now.status, to)) throw new IllegalTransition('fit', id, now.status, to);
  return null;
}

export const fitStore = {
  transition,

  /** A new fit: queued, or running under attempt 1 when the request computes it at once. */
  async create(q: Queryable, values: Omit<typeof peakFits.$inferInsert, 'id' | 'status' | 'attempt'>, computingNow: boolean): Promise<string> {
    const [row] = await q
      .insert(peakFits)
      .values({ ...values, status: computingNow ? 'running' : 'queued', attempt: computingNow ? 1 : 0, progressFraction: 0 })
      .returning({ id: peakFits.id });
    return row.id;
  },

  /** Records the fit's queue job: unless a worker already claimed it with one, or (replace) the job that replaces a lost one. */
  async attachJob(q: Queryable, id: string, jobId: string, replace = false): Promise<void> {
    await q
      .update(peakFits)
      .set({ jobId })
      .where(and(eq(peakFits.id, id), replace ? eq(peakFits.status, 'queued') : isNull(peakFits.jobId)));
  },

  /** An attempt claims the fit (attempt + 1); null when it ended. */
  async startAttempt(q: Queryable, id: string): Promise<FitRow | null> {
    return unlessEnded(
      transition(q, id, 'running', { set: { attempt: sql`${peakFits.attempt} + 1`, progressFraction: 0, error: null, heartbeatAt: new Date() } }),
    );
  },

  /** The heartbeat, with the progress when given; false when the attempt no longer owns the fit. */
  async beat(q: Queryable, id: string, attempt: number, fraction?: number): Promise<boolean> {
    const [row] = await q
      .update(peakFits)
      .set({ heartbeatAt: new Date(), ...(fraction !== undefined ? { progressFraction: fraction } : {}) })
      .where(and(eq(peakFits.id, id), eq(peakFits.attempt, attempt), eq(peakFits.status, 'running')))
      .returning({ id: peakFits.id });
    if (row && fraction !== undefined) await notifyFit(q, id);
    return !!row;
  },

  /** Locks the fit for the rest of `tx`; answers it while `attempt` still owns it. */
  async lockAttempt(tx: Queryable, id: string, attempt: number): Promise<FitRow | null> {
    const [fit] = await tx.select().from(peakFits).where(eq(peakFits.id, id)).for('update');
    return fit && fit.attempt === attempt && fit.status === 'running' ? fit : null;
  },

  async complete(q: Queryable, id: string, attempt: number, set: Pick<Changes, 'result' | 'comparison' | 'modelVersionId'>): Promise<boolean> {
    return !!(await unlessEnded(transition(q, id, 'completed', { attempt, set: { ...set, progressFraction: 1, finishedAt: new Date(), error: null } })));
  },

  /** Ends the fit as failed: by its attempt (guarded), or by the supervisor (any unfinished fit). */
  async fail(q: Queryable, id: string, error: string, attempt?: number): Promise<boolean> {
    return !!(await unlessEnded(transition(q, id, 'failed', { attempt, set: { error, finishedAt: new Date() } })));
  },

  /** A running fit whose heartbeat is older than `staleSeconds` lost its worker: back to the queue. */
  async requeueLost(q: Queryable, id: string, staleSeconds: number): Promise<FitRow | null> {
    return unlessEnded(
      transition(q, id, 'queued', {
        when: and(eq(peakFits.status, 'running'), sql`${peakFits.heartbeatAt} < now() - make_interval(secs => ${staleSeconds})`),
        set: { error: sql`'the worker of attempt ' || ${peakFits.attempt} || ' stopped answering; the fit was put back in the queue'` },
      }),
    );
  },
};
