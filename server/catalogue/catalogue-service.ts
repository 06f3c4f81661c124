import type { CataloguePage as CatalogueAnswer, ResonanceDetail } from '../../shared/api/catalogue.js';
import { writeAudit } from '../audit/audit-log.js';
import { exportedModels } from '../fabrication/catalogue-import.js';
import type { Db, Queryable } from '../db/client.js';
import { insertFiledPole } from './filed-pole-repository.js';
import { FULL_SIDE, isOverlapping, THUMB_SIDE } from '../jobs/run-results.js';
import { geometryOf, type ModelColumns } from '../models/model-figures.js';
import { resonanceFigures, resonancePhysicsOfDocument } from '../../shared/model/resonance-validity.js';

import { ApiError } from '../http/error-handler.js';
import type { RowSource } from './catalogue-export.js';
import type { CatalogueFilter, CataloguePageRequest } from './catalogue-query.js';
import { CatalogueCounter, defaultCountPolicy, type CountPolicy } from './catalogue-count.js';
import { answerText, CatalogueAnswerCache, type AnswerCacheLimits, type KeptAnswer } from './catalogue-answer-cache.js';
import { decodeCursor, encodeCursor, searchFingerprint, type CursorPosition } from './catalogue-cursor.js';
import {
  catalogueGeneration,
  findModeImage,
  findResonance,
  findResonanceContext,
  otherPolesOfRun,
  pageOfResonances,
  streamResonances,
  updateResonanceLabels,
  type KeyedRecord,
} from './catalogue-repository.js';
import { toResonanceRow, type ResonanceRow } from './resonance-row.js';

;

/** Rows per keyset batch in an export: a few hundred kB of JSON at a time. */
const exportBatch = 1000;

/** Longest sides (pixels) of the two mode images of a filed pole, [thumb, full]: the same as a run's poles get. */
export const FILED_IMAGE_SIDES = [THUMB_SIDE, FULL_SIDE];

/** What `fileComputedPoles` files: the poles with their modes and images (thumb, full), the version they belong to, and where they came from. */
interface FiledPoles {
  groupId: string;
  model: { id: string; versionId: string; name: string; version: number; document: unknown; columns: ModelColumns };
  leadNames: string[];
  poles: {
    energy: number;
    width: number;
    petermann: number;
    partialWidths: number[];
    bound: boolean;
    residual: number;
    nearThreshold: { threshold: number; distanceInWidths: number } | null;
    mode: Float64Array;
  }[];
  /** PNGs per pole: [thumb, full]. */
  images: Uint8Array[][];
  provenance: Record<string, unknown>;
  tags: string[];
  notes: string;
}

export function resonanceNotFound(): ApiError {
  return new ApiError(404, 'not_found', 'No such resonance in this group.');
}

/**
 * The model document's leads as the detail view lists them. Unnamed leads get the same
 * fallback name (side + index) as the engine gives them in partial widths.
 */
function leadsOf(document: unknown): ResonanceDetail['leads'] {
  if (!Array.isArray(document)) return [];
  return document.flatMap((lead: unknown, k) => {
    if (typeof lead !== 'object' || lead === null) return [];
    const l = lead as { name?: unknown; side?: unknown; width?: unknown };
    const side = typeof l.side === 'string' ? l.side : 'unknown';
    const name = typeof l.name === 'string' && l.name.length > 0 ? l.name : `${side}${k}`;
    return [{ name, side, width: typeof l.width === 'number' ? l.width : 0 }];
  });
}

/** What names one page of one search (the filter, the order, the page by number or cursor), for callers without a query string. */
function searchKey(req: CataloguePageRequest): string {
  return `${searchFingerprint(req)} ${req.sort} ${req.dir} ${req.pageSize} ${req.cursor ?? `page ${req.page ?? 1}`}`;
}

/** Catalogue rules: searching, exporting, detail, labelling, mode images; everything scoped by group. */
export class CatalogueService {
  private readonly counter: CatalogueCounter;
  private readonly answers: CatalogueAnswerCache;

  /** `countPolicy`, `now` (the clock of count ages) and `answerLimits` are for tests; the defaults serve the app. */
  constructor(
    private readonly db: Db,
    private readonly countPolicy: CountPolicy = defaultCountPolicy,
    private readonly now: () => number = Date.now,
    answerLimits?: AnswerCacheLimits,
  ) {
    this.counter = new CatalogueCounter(db, countPolicy, now);
    this.answers = new CatalogueAnswerCache(answerLimits);
  }

  /** Resolves once background recounts are done (tests; shutdown). */
  settled(): Promise<void> {
    return this.counter.settled();
  }

  /**
   * One page of a search as the answer's JSON text: by offset (`page`, the first pages) or
   * by keyset cursor, with cursors to the next and previous pages either way, and the total
   * with its kind. `generation` is the group's catalogue generation read with the caller's
   * membership (before any query of this search). The page and the count run at once on
   * two pool connections. `asked` names the request as it came (its query string): the
   * answer is kept under it and the generation (CatalogueAnswerCache) when its total is
   * exact; `count=exact` answers are never kept.
   */
  async searchText(groupId: string, req: CataloguePageRequest, generation: number, asked = searchKey(req)): Promise<string> {
    const position = req.cursor !== undefined ? decodeCursor(req.cursor, req) : undefined;
    const [paged, count] = await Promise.all([this.page(groupId, req, position), this.counter.count(groupId, req, req.count, generation)]);
    const { rows, page, hasNext, hasPrev } = paged;
    const first = rows[0];
    const last = rows.at(-1);
    const kept: KeptAnswer = {
      itemsJson: JSON.stringify(rows.map((r) => toResonanceRow(r.record))),
      rest: {
        total: count.total,
        totalKind: count.kind,
        countedAt: count.countedAt?.toISOString() ?? null,
        page,
        pageSize: req.pageSize,
        nextCursor: hasNext && last ? encodeCursor(req, { toward: 'after', key: last.key, page: page + 1 }) : null,
        prevCursor: hasPrev && first ? encodeCursor(req, { toward: 'before', key: first.key, page: Math.max(1, page - 1) }) : null,
      },
      countedAtMs: count.countedAt?.getTime() ?? null,
      keepUntilMs: count.kind === 'cached' ? count.countedAt!.getTime() + this.countPolicy.freshMs : Infinity,
      staleCount: count.kind === 'cached' ? CatalogueCounter.keyOf(groupId, req) : null,
    };
    if (req.count === 'estimate' && count.kind !== 'estimated') this.answers.set(groupId, generation, asked, kept);
    return answerText(kept, this.now());
  }

  /**
   * The kept answer of a search asked exactly this way (`asked`: its query string) under the
   * group's current generation, or undefined. Checked before the query is even validated: a
   * query string that was answered once is valid, and means the same search, every time.
   */
  keptAnswer(groupId: string, generation: number, asked: string): string | undefined {
    const hit = this.answers.get(groupId, generation, asked, this.now());
    // An answer with an old count is not served once a recount (or count=exact) made it exact.
    if (!hit || (hit.staleCount !== null && this.counter.exactFor(hit.staleCount, generation))) return undefined;
    return answerText(hit, this.now());
  }

  /** searchText as a value (tests, scripts); reads the group's generation itself unless given. */
  async search(groupId: string, req: CataloguePageRequest, generation?: number): Promise<CatalogueAnswer> {
    const current = generation ?? (await catalogueGeneration(this.db, groupId));
    const asked = searchKey(req);
    const text = (req.count === 'estimate' ? this.keptAnswer(groupId, current, asked) : undefined) ?? (await this.searchText(groupId, req, current, asked));
    return JSON.parse(text) as CatalogueAnswer;
  }

  /** Reads one more row than the page holds to learn whether another page follows. */
  private async page(
    groupId: string,
    req: CataloguePageRequest,
    position: CursorPosition | undefined,
  ): Promise<{ rows: KeyedRecord[]; page: number; hasNext: boolean; hasPrev: boolean }> {
    const size = req.pageSize;
    if (position?.toward === 'after') {
      const rows = await pageOfResonances(this.db, groupId, req, { cursor: position }, size + 1);
      return { rows: rows.slice(0, size), page: position.page, hasNext: rows.length > size, hasPrev: rows.length > 0 };
    }
    if (position?.toward === 'before') {
      const rows = await pageOfResonances(this.db, groupId, req, { cursor: position }, size + 1);
      // The boundary row follows, so a next page exists; a full page plus one before it means this is not the first page.
      if (rows.length > size) return { rows: rows.slice(1), page: Math.max(2, position.page), hasNext: true, hasPrev: true };
      // Back at the start: answer the first page itself, full, rather than the few rows left before the boundary.
    }
    const pageNo = position ? 1 : (req.page ?? 1);
    const rows = await pageOfResonances(this.db, groupId, req, { offset: (pageNo - 1) * size }, size + 1);
    return { rows: rows.slice(0, size), page: pageNo, hasNext: rows.length > size, hasPrev: pageNo > 1 && rows.length > 0 };
  }

  /** Records the export (with its filter as asked), then answers its row source. */
  async exportFor(groupId: string, actorId: string, format: string, filter: CatalogueFilter, asked: Record<string, unknown>): Promise<RowSource> {
    await writeAudit(this.db, { groupId, actorId, accountId: actorId, action: 'catalogue.exported', subject: `catalogue.${format}`, details: { filter: asked } });
    return this.exportSource(groupId, filter);
  }

  /** The model versions exported rows came from (JSON export), so an import can rebuild them. */
  exportedModels(groupId: string, versionIds: string[]) {
    return exportedModels(this.db, groupId, versionIds);
  }

  /** A row source for sendCatalogueExport: one snapshot, read in keyset batches. */
  exportSource(groupId: string, filter: CatalogueFilter): RowSource {
    return (onBatch) =>
      this.db.transaction((tx) => streamResonances(tx, groupId, filter, exportBatch, onBatch), {
        isolationLevel: 'repeatable read',
        accessMode: 'read only',
      });
  }

  async detail(groupId: string, id: string): Promise<ResonanceDetail> {
    const found = await findResonanceContext(this.db, groupId, id);
    if (!found) throw resonanceNotFound();
    const otherPoles = await otherPolesOfRun(this.db, groupId, found.row.runId, id);
    const { thresholds, ...run } = found.run ?? { thresholds: null };
    return {
      ...toResonanceRow(found.row),
      run: found.run ? (run as NonNullable<ResonanceDetail['run']>) : null,
      model: { id: found.row.modelId, name: found.row.modelName, version: found.row.modelVersion },
      otherPoles,
      thresholds: thresholds ?? [],
      leads: leadsOf(found.leads),
    };
  }

  /** Tags and notes of a resonance, with a "resonance.tagged" audit entry in the same transaction. */
  async label(groupId: string, actorId: string, id: string, change: { tags?: string[]; notes?: string }): Promise<ResonanceRow> {
    const result = await this.db.transaction(async (tx) => {
      const before = await findResonance(tx, groupId, id);
      if (!before) throw resonanceNotFound();
      const after = await updateResonanceLabels(tx, groupId, id, change);
      if (!after) throw resonanceNotFound();
      await writeAudit(tx, {
        groupId,
        actorId,
        action: 'resonance.tagged',
        subject: `${after.modelName} v${after.modelVersion}, pole at ${after.energy.toPrecision(6)} meV`,
        details: {
          resonanceId: id,
          ...(change.tags ? { tagsBefore: before.tags, tags: after.tags } : {}),
          ...(change.notes !== undefined ? { notesChanged: before.notes !== after.notes } : {}),
        },
      });
      return toResonanceRow(after);
    });
    // Kept answers and counts of the group are dropped by the next request: the trigger on
    // resonances raised the group's catalogue generation in this transaction.
    return result;
  }

  /**
   * Files computed poles that no run produced (a parameter-study step kept as a model
   * version) under that version, with their modes and mode images, inside the caller's
   * transaction: the version and its catalogue rows land together or not at all. Each row
   * carries `details.provenance` (where the poles were computed), the validity figures of
   * the version's document and the overlap flag a run's poles get. Returns the new ids;
   * call `forgetCounts` after the transaction commits.
   */
  async fileComputedPoles(tx: Queryable, input: FiledPoles): Promise<string[]> {
    const physics = resonancePhysicsOfDocument(input.model.document);
    const c = input.model.columns;
    const ids: string[] = [];
    for (let k = 0; k < input.poles.length; k++) {
      const p = input.poles[k];
      const figures = resonanceFigures(p.energy, p.width, physics);
      const id = await insertFiledPole(
        tx,
        {
          groupId: input.groupId,
          modelId: input.model.id,
          modelVersionId: input.model.versionId,
          energy: p.energy,
          width: p.width,
          lifetimePs: p.bound ? null : figures.lifetimePs,
          quality: p.bound ? null : figures.quality,
          partialWidths: p.partialWidths.map((w, l) => ({ lead: input.leadNames[l] ?? `lead ${l}`, width: w })),
          petermann: p.petermann,
          residual: p.residual,
          bound: p.bound,
          nearThreshold: p.nearThreshold !== null,
          overlapping: isOverlapping(input.poles, k),
          validityLimit: figures.validity.limit,
          wavelengthSpacings: figures.validity.wavelengthSpacings,
          aboveValidity: figures.validity.aboveLimit,
          physics: figures.physics,
          frequencyGhz: figures.frequencyGhz,
          details: { nearThreshold: p.nearThreshold, provenance: input.provenance },
          tags: input.tags,
          notes: input.notes,
          modelName: input.model.name,
          modelVersion: input.model.version,
          family: c.family,
          material: c.material,
          fieldT: c.fieldT,
          spacingNm: c.spacingNm,
          ...geometryOf(c),
        },
        p.mode,
        [
          { size: 'thumb', png: input.images[k][0] },
          { size: 'full', png: input.images[k][1] },
        ],
      );
      ids.push(id);
    }
    return ids;
  }

  /** The PNG (null when the caller's ETag is current) and its ETag; 404 when there is none. */
  async modeImage(groupId: string, id: string, size: 'thumb' | 'full', knownEtags: string[]): Promise<{ etag: string; png: Buffer | null }> {
    const image = await findModeImage(this.db, groupId, id, size, knownEtags);
    if (!image) throw new ApiError(404, 'not_found', `This resonance has no ${size} mode image.`);
    return image;
  }
}
