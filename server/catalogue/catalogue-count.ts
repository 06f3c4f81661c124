import type { Db } from '../db/client.js';
import { searchFingerprint } from './catalogue-cursor.js';
import type { CatalogueFilter } from './catalogue-query.js';
import { countResonances, estimateResonances } from './catalogue-repository.js';

/**
 * How the total of a catalogue answer was obtained:
 * - `exact`: counted for this answer;
 * - `cached`: counted exactly `ageSeconds` ago (rows added or retagged since are not in it);
 * - `estimated`: PostgreSQL's planner estimate from its table statistics, no rows counted.
 */
export type CountKind = 'exact' | 'cached' | 'estimated';

export interface CatalogueCount {
  total: number;
  kind: CountKind;
  /** When the exact count was taken; null for an estimate. */
  countedAt: Date | null;
}

export interface CountPolicy {
  /** A filter the planner expects to match at most this many rows is counted on the spot. */
  countBelow: number;
  /** …but that count stops after this many rows, so a wrong estimate costs a bounded scan. */
  countCap: number;
  /** A cached count is answered as it is this long… */
  freshMs: number;
  /** …and, while a recount runs in the background, up to this age. */
  staleMs: number;
  /** Cached counts kept (least recently used dropped first). */
  maxEntries: number;
  /** Background recounts waiting at most; more are dropped (the answer stays an estimate). */
  maxQueued: number;
}

export const defaultCountPolicy: CountPolicy = {
  countBelow: 2_000,
  countCap: 10_000,
  freshMs: 30_000,
  staleMs: 10 * 60_000,
  maxEntries: 1_000,
  maxQueued: 16,
};

/**
 * Totals of catalogue searches without a full count per request. Counting 100,000 index
 * entries takes tens of milliseconds and, under 20 concurrent searches on 2 cores, was
 * most of the time of every answer. So: a small set (by the planner's estimate) is counted
 * now; a large one answers a cached exact count with its age, or the planner's estimate
 * while one background recount at a time fills the cache; `count=exact` always counts.
 *
 * The cache lives in this API process; PATCH of tags or notes drops the group's entries,
 * new runs' resonances (written by the workers) show within `freshMs` or as a stated age.
 */
export class CatalogueCounter {
  private readonly cache = new Map<string, { total: number; countedAt: number }>();
  private readonly queued = new Map<string, { groupId: string; filter: CatalogueFilter }>();
  /** Searches whose capped count succeeded, and when: counted on the spot again without asking the planner. */
  private readonly small = new Map<string, number>();
  private running = false;

  constructor(
    private readonly db: Db,
    private readonly policy: CountPolicy = defaultCountPolicy,
    private readonly now: () => number = Date.now,
  ) {}

  async count(groupId: string, filter: CatalogueFilter, mode: 'estimate' | 'exact'): Promise<CatalogueCount> {
    const key = `${groupId}:${searchFingerprint(filter)}`;
    if (mode === 'exact') return this.countNow(key, groupId, filter);

    const hit = this.cache.get(key);
    const age = hit ? this.now() - hit.countedAt : Infinity;
    if (hit && age <= this.policy.staleMs) {
      if (age > this.policy.freshMs) this.recountLater(key, groupId, filter);
      this.remember(key, hit); // most recently used
      return { total: hit.total, kind: 'cached', countedAt: new Date(hit.countedAt) };
    }

    // A search known to be small skips the estimate: its capped count is the only query.
    const smallSince = this.small.get(key);
    const knownSmall = smallSince !== undefined && this.now() - smallSince <= this.policy.staleMs;
    let estimate = knownSmall ? 0 : await estimateResonances(this.db, groupId, filter);
    if (estimate <= this.policy.countBelow) {
      const counted = await countResonances(this.db, groupId, filter, this.policy.countCap);
      if (counted !== null) {
        if (!knownSmall) this.markSmall(key);
        return { total: counted, kind: 'exact', countedAt: new Date(this.now()) };
      }
      this.small.delete(key);
      // The planner (or an old mark) was wrong: at least this many.
      estimate = knownSmall ? await estimateResonances(this.db, groupId, filter) : estimate;
      estimate = Math.max(estimate, this.policy.countCap + 1);
    }
    this.recountLater(key, groupId, filter);
    return { total: estimate, kind: 'estimated', countedAt: null };
  }

  /** Forgets the group's counts (its rows changed in this process). */
  forgetGroup(groupId: string): void {
    for (const key of [...this.cache.keys()]) if (key.startsWith(`${groupId}:`)) this.cache.delete(key);
  }

  /** Resolves when no background recount is queued or running (for tests and orderly shutdown). */
  async settled(): Promise<void> {
    while (this.running || this.queued.size > 0) await new Promise((r) => setTimeout(r, 5));
  }

  private async countNow(key: string, groupId: string, filter: CatalogueFilter): Promise<CatalogueCount> {
    const countedAt = this.now();
    const total = (await countResonances(this.db, groupId, filter))!;
    this.remember(key, { total, countedAt });
    return { total, kind: 'exact', countedAt: new Date(countedAt) };
  }

  private markSmall(key: string): void {
    this.small.delete(key);
    this.small.set(key, this.now());
    while (this.small.size > this.policy.maxEntries) this.small.delete(this.small.keys().next().value!);
  }

  private remember(key: string, entry: { total: number; countedAt: number }): void {
    this.cache.delete(key);
    this.cache.set(key, entry);
    while (this.cache.size > this.policy.maxEntries) this.cache.delete(this.cache.keys().next().value!);
  }

  private recountLater(key: string, groupId: string, filter: CatalogueFilter): void {
    if (this.queued.has(key) || this.queued.size >= this.policy.maxQueued) return;
    this.queued.set(key, { groupId, filter });
    void this.pump();
  }

  /** One recount at a time, so background counting never takes more than one connection and one core. */
  private async pump(): Promise<void> {
    if (this.running) return;
    this.running = true;
    try {
      for (const [key, job] of this.queued) {
        try {
          await this.countNow(key, job.groupId, job.filter);
        } catch {
          // A failed recount (pool closed at shutdown, statement cancelled) leaves the estimate; the next search retries.
        }
        this.queued.delete(key);
      }
    } finally {
      this.running = false;
    }
  }
}
