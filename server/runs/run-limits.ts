import { and, eq, inArray, sql } from 'drizzle-orm';
import type { Queryable } from '../db/client.js';
import { runs } from '../db/schema/runs.js';
import { ApiError } from '../http/error-handler.js';
import type { RunEstimate } from './run-estimate.js';
import type { RunRequest } from './run-window.js';

/** How much one group and one person may have computing at once, and how long one run may take. */
export interface RunLimits {
  /** A run estimated above this many seconds is refused (422). */
  maxSeconds: number;
  /** Queued + running runs of one group. */
  perGroup: number;
  /** Queued + running runs of one person (in one group). */
  perUser: number;
}

const formatDuration = (s: number) => (s < 90 ? `${Math.round(s)} s` : s < 5400 ? `${Math.round(s / 60)} min` : `${(s / 3600).toFixed(1)} h`);

/** 422 when the estimate is above the limit, saying what to shrink and by how much. */
export function checkRunSize(estimate: RunEstimate, req: RunRequest, limits: RunLimits): void {
  if (estimate.expectedSeconds <= limits.maxSeconds) return;
  const factor = estimate.expectedSeconds / limits.maxSeconds;
  const w = req.window;
  const width = `${(w.emax - w.emin).toPrecision(3)} meV`;
  const hints =
    req.kind === 'pole-search'
      ? [
          `a narrower window (now ${width} wide, ${estimate.expectedLevels} levels expected in it)`,
          `a smaller Γmax (now ${req.window.gammaMax} meV)`,
          `fewer sites (now ${estimate.sites}: a coarser spacing or a smaller cavity)`,
        ]
      : [`fewer energies (now ${req.window.points})`, `fewer sites (now ${estimate.sites}: a coarser spacing or a smaller cavity)`];
  throw new ApiError(
    422,
    'run_too_large',
    `This run is estimated at ${formatDuration(estimate.expectedSeconds)}, above this server's limit of ${formatDuration(limits.maxSeconds)} per run ` +
      `(about ${factor.toFixed(1)}× too long). Shrink it: ${hints.join('; ')}; or split the window into several runs.`,
    [{ path: 'window', message: `estimated ${formatDuration(estimate.expectedSeconds)}, limit ${formatDuration(limits.maxSeconds)}` }],
  );
}

/**
 * Seconds until a slot is likely to free up: the soonest expected end of the
 * scope's running runs (start + estimated time), at least 10 s; 60 s when none has
 * an estimate (all queued).
 */
async function retryAfter(q: Queryable, scope: ReturnType<typeof and>): Promise<number> {
  const rows = await q
    .select({ startedAt: runs.startedAt, expected: sql<number | null>`(${runs.estimate} ->> 'expectedSeconds')::float8` })
    .from(runs)
    .where(and(scope, eq(runs.status, 'running')));
  const now = Date.now();
  const ends = rows.filter((r) => r.startedAt && r.expected !== null).map((r) => (r.startedAt!.getTime() + 1000 * Number(r.expected) - now) / 1000);
  if (ends.length === 0) return 60;
  return Math.min(3600, Math.max(10, Math.ceil(Math.min(...ends))));
}

/**
 * Refuses a new run with 429 (and Retry-After) when its person or group already has
 * the allowed number of runs queued or running. Call inside the transaction that
 * inserts the run: the advisory lock on the group makes count-then-insert atomic,
 * so two simultaneous launches cannot both take the last slot.
 */
export async function checkRunSlots(tx: Queryable, groupId: string, userId: string, limits: RunLimits): Promise<void> {
  await tx.execute(sql`select pg_advisory_xact_lock(hashtext(${'runs:' + groupId}))`);
  const active = inArray(runs.status, ['queued', 'running']);
  const [{ mine, all }] = await tx
    .select({
      all: sql<number>`count(*)::int`,
      mine: sql<number>`(count(*) filter (where ${runs.createdBy} = ${userId}))::int`,
    })
    .from(runs)
    .where(and(eq(runs.groupId, groupId), active));
  const refuse = async (who: 'you' | 'group', limit: number, scope: ReturnType<typeof and>) => {
    const seconds = await retryAfter(tx, scope);
    const when = new Date(Date.now() + seconds * 1000).toISOString().slice(11, 19);
    const runsText = `${limit} run${limit === 1 ? '' : 's'}`;
    throw new ApiError(
      429,
      'too_many_runs',
      `${who === 'you' ? `You already have ${runsText}` : `This group already has ${runsText}`} queued or running, the limit. ` +
        `Try again in about ${formatDuration(seconds)} (after ${when} UTC), when one has finished, or cancel one.`,
      undefined,
      seconds,
    );
  };
  if (mine >= limits.perUser) await refuse('you', limits.perUser, and(eq(runs.groupId, groupId), eq(runs.createdBy, userId), active));
  if (all >= limits.perGroup) await refuse('group', limits.perGroup, and(eq(runs.groupId, groupId), active));
}
