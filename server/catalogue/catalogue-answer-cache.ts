import type { CataloguePage } from '../../shared/api/catalogue.js';

/** A catalogue answer as kept: its rows already as JSON text, the rest as values. */
export interface KeptAnswer {
  /** JSON text of `items`. */
  itemsJson: string;
  rest: Omit<CataloguePage, 'items' | 'countAgeSeconds'>;
  /** When the total was counted (ms since the epoch); null for an estimate. */
  countedAtMs: number | null;
  /** Served until then (ms since the epoch) at most: a `cached` total is kept only until its recount is due… */
  keepUntilMs: number;
  /** …or until its count (named so, CatalogueCounter.keyOf) is exact again; null for an exact total. */
  staleCount: string | null;
}

export interface AnswerCacheLimits {
  /** Total size of the kept JSON text (UTF-16 code units, about bytes for this ASCII-mostly text). */
  maxChars: number;
  maxEntries: number;
}

const defaultAnswerCacheLimits: AnswerCacheLimits = { maxChars: 32_000_000, maxEntries: 4_000 };

/**
 * Catalogue answers kept by (group, catalogue generation, search and page), least recently
 * used dropped first. Many people of a group browse the same first pages; while the group's
 * generation (catalogue_generations, read with the caller's membership on every request)
 * stays the same, no row of the group has changed, so the kept answer is the answer. The
 * first request that reads a newer generation drops every answer of the group; one that
 * still read an older one (it raced the change) neither reads nor keeps answers.
 *
 * Answers whose total is exact for the generation are kept while it holds; one whose total
 * is an earlier generation's count (`cached`, with its age) only until that count is due
 * for a recount; one with an estimate is not kept. Each API process keeps
 * its own; nothing is shared between groups: the group is the first part of every key.
 */
export class CatalogueAnswerCache {
  private readonly entries = new Map<string, { answer: KeptAnswer; chars: number }>();
  private readonly newest = new Map<string, number>();
  private chars = 0;

  constructor(private readonly limits: AnswerCacheLimits = defaultAnswerCacheLimits) {}

  get(groupId: string, generation: number, search: string, nowMs: number): KeptAnswer | undefined {
    if (!this.observe(groupId, generation)) return undefined;
    const key = `${groupId} ${generation} ${search}`;
    const hit = this.entries.get(key);
    if (!hit) return undefined;
    if (hit.answer.keepUntilMs < nowMs) {
      this.drop(key);
      return undefined;
    }
    this.entries.delete(key); // most recently used last
    this.entries.set(key, hit);
    return hit.answer;
  }

  set(groupId: string, generation: number, search: string, answer: KeptAnswer): void {
    if (!this.observe(groupId, generation)) return;
    const chars = answer.itemsJson.length + search.length + 400;
    if (chars > this.limits.maxChars / 8) return;
    const key = `${groupId} ${generation} ${search}`;
    this.drop(key);
    this.entries.set(key, { answer, chars });
    this.chars += chars;
    while (this.chars > this.limits.maxChars || this.entries.size > this.limits.maxEntries) this.drop(this.entries.keys().next().value!);
  }

  /** Answers kept (tests). */
  get size(): number {
    return this.entries.size;
  }

  /** False when the request read an older generation than one already seen; drops the group's answers on a newer one. */
  private observe(groupId: string, generation: number): boolean {
    const known = this.newest.get(groupId);
    if (known === undefined || generation > known) {
      if (known !== undefined) for (const key of [...this.entries.keys()]) if (key.startsWith(`${groupId} `)) this.drop(key);
      this.newest.set(groupId, generation);
      return true;
    }
    return generation === known;
  }

  private drop(key: string): void {
    const entry = this.entries.get(key);
    if (!entry) return;
    this.entries.delete(key);
    this.chars -= entry.chars;
  }
}

/**
 * The answer's JSON text: the kept rows' text spliced in, the count's age computed now
 * (the only part of a kept answer that changes with time).
 */
export function answerText(answer: KeptAnswer, nowMs: number): string {
  const countAgeSeconds = answer.countedAtMs === null ? null : Math.max(0, Math.round((nowMs - answer.countedAtMs) / 1000));
  const rest = JSON.stringify({ ...answer.rest, countAgeSeconds });
  return `{"items":${answer.itemsJson},${rest.slice(1)}`;
}
