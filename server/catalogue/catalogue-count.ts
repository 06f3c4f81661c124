import type { Db } from '../db/client.js';
import { searchFingerprint } from './catalogue-cursor.js';
import type { CatalogueFilter } from './catalogue-query.js';
import { countResonances, estimateResonances } from './catalogue-repository.js';

/**
 * How the total of a catalogue answer was obtained:
 * - `exact`: the number of matches now: counted for this answer, or counted earlier while
 *   the group's catalogue generation was the one this request read (no row of the group
 *   has been added, changed or removed since, by any process);
 * - `cached`: counted exactly `ageSeconds` ago, before the group's rows last changed (rows
 *   added, retagged or removed since are not in it); a recount is on its way;
 * - `estimated`: PostgreSQL's planner estimate from its table statistics, no rows counted.
 */
type CountKind = 'exact' | 'cached' | 'estimated';

interface CatalogueCount {
  total: number;
  kind: CountKind;
  /** When the count was taken; null for an estimate. */
  countedAt: Date | null;
}

export interface CountPolicy {
  /** A filter the planner expects to match at most this many rows is counted on the spot. */
  countBelow: number;
  /** …but that count stops after this many rows, so a wrong estimate costs a bounded scan. */
  countCap: number;
  /** A large set's count of an earlier generation is answered (as `cached`, with its age) without a recount up to this age… */
  freshMs: number;
  /** …and up to this age while a recount runs. */
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

interface CachedCount {
  total: number;
  countedAt: number;
  /** The group's catalogue generation read before the count ran: the count holds while it is current. */
  generation: number;
}

/**
 * Totals of catalogue searches without a full count per request. Counting 100,000 index
 * entries takes tens of milliseconds and, under 20 concurrent searches on 2 cores, was
 * most of the time of every answer. So each count is kept with the group's catalogue
 * generation (catalogue_generations, raised by a trigger on every change of the group's
 * resonances, read with the caller's membership on every request): while the generation is
 * the same, the kept count is exact. After a change, a small set (by the last count or the
 * planner's estimate) is counted again on the spot; a large one answers its previous count
 * as `cached` with its age, and once that count is older than freshMs, one background
 * recount at a time brings it up to date. A
 * large set never counted answers the planner's estimate, and is counted in the background
 * once it is asked for a second time; `count=exact` always counts.
 *
 * Each API process keeps its own counts; the generation comes from the database, so a
 * change made anywhere (another API process, a worker, a restore) is seen by the next request.
 */
export class CatalogueCounter {
  private readonly cache = new Map<string, CachedCount>();
  private readonly queued = new Map<string, { groupId: string; filter: CatalogueFilter; generation: number }>();
  /** When each search last got an estimate (least recently asked dropped first). */
  private readonly asked = new Map<string, number>();
  private running = false;

  constructor(
    private readonly db: Db,
    private readonly policy: CountPolicy = defaultCountPolicy,
    private readonly now: () => number = Date.now,
  ) {}

  /** `generation`: the group's catalogue generation, read before this call (never after the count). */
  /** The name of a search's count (group and filter). */
  static keyOf(groupId: string, filter: CatalogueFilter): string {
    return `${groupId}:${searchFingerprint(filter)}`;
  }

  /** Whether the count named `key` is exact for `generation` (counted under it or later). */
  exactFor(key: string, generation: number): boolean {
    return (this.cache.get(key)?.generation ?? -1) >= generation;
  }

  async count(groupId: string, filter: CatalogueFilter, mode: 'estimate' | 'exact', generation: number): Promise<CatalogueCount> {
    const key = CatalogueCounter.keyOf(groupId, filter);
    if (mode === 'exact') return this.countNow(key, groupId, filter, generation);

    const hit = this.cache.get(key);
    if (hit && hit.generation >= generation) {
      this.remember(key, hit); // most recently used
      return { total: hit.total, kind: 'exact', countedAt: new Date(hit.countedAt) };
    }
    // A set last counted small is counted again on the spot: its capped count is the only query.
    const knownSmall = hit !== undefined && hit.total <= this.policy.countBelow;
    let estimate = knownSmall ? 0 : undefined;
    if (!knownSmall) {
      const age = hit ? this.now() - hit.countedAt : Infinity;
      if (hit && age <= this.policy.staleMs) {
        // Recounted at most every freshMs: a group whose rows change every second (results
        // arriving, tags set) would otherwise keep the database counting its large sets.
        if (age > this.policy.freshMs) this.recountLater(key, groupId, filter, generation);
        this.remember(key, hit);
        return { total: hit.total, kind: 'cached', countedAt: new Date(hit.countedAt) };
      }
      estimate = await estimateResonances(this.db, groupId, filter);
    }
    if (estimate! <= this.policy.countBelow) {
      const countedAt = this.now();
      const counted = await countResonances(this.db, groupId, filter, this.policy.countCap);
      if (counted !== null) {
        this.remember(key, { total: counted, countedAt, generation });
        return { total: counted, kind: 'exact', countedAt: new Date(countedAt) };
      }
      // The planner (or the last count) was wrong: at least this many.
      estimate = Math.max(knownSmall ? await estimateResonances(this.db, groupId, filter) : estimate!, this.policy.countCap + 1);
    }
    // Counted in the background only when asked again: a search made once (a window dragged
    // past, a word half typed) is not worth a full count, and many of them would keep the
    // database counting rows nobody looks at.
    if (this.askedBefore(key)) this.recountLater(key, groupId, filter, generation);
    return { total: estimate!, kind: 'estimated', countedAt: null };
  }

  /** Whether this search was asked for within staleMs before (and notes that it is now). */
  private askedBefore(key: string): boolean {
    const last = this.asked.get(key);
    this.asked.delete(key);
    this.asked.set(key, this.now());
    while (this.asked.size > this.policy.maxEntries) this.asked.delete(this.asked.keys().next().value!);
    return last !== undefined && this.now() - last <= this.policy.staleMs;
  }

  /** Resolves when no background recount is queued or running (for tests and orderly shutdown). */
  async settled(): Promise<void> {
    while (this.running || this.queued.size > 0) await new Promise((r) => setTimeout(r, 5));
  }

  private async countNow(key: string, groupId: string, filter: CatalogueFilter, generation: number): Promise<CatalogueCount> {
    const countedAt = this.now();
    const total = (await countResonances(this.db, groupId, filter))!;
    const kept = this.cache.get(key);
    if (!kept || kept.generation <= generation) this.remember(key, { total, countedAt, generation });
    return { total, kind: 'exact', countedAt: new Date(countedAt) };
  }

  private remember(key: string, entry: CachedCount): void {
    this.cache.delete(key);
    this.cache.set(key, entry);
    while (this.cache.size > this.policy.maxEntries) this.cache.delete(this.cache.keys().next().value!);
  }

  private recountLater(key: string, groupId: string, filter: CatalogueFilter, generation: number): void {
    if (this.queued.has(key) || this.queued.size >= this.policy.maxQueued) return;
    this.queued.set(key, { groupId, filter, generation });
    void this.pump();
  }

  /** One recount at a time, so background counting never takes more than one connection and one core. */
  private async pump(): Promise<void> {
    if (this.running) return;
    this.running = true;
    try {
      for (const [key, job] of this.queued) {
        try {
          await this.countNow(key, job.groupId, job.filter, job.generation);
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
