import { writeAudit } from '../audit/audit-log.js';
import type { Db } from '../db/client.js';
import { ApiError } from '../http/error-handler.js';
import type { RowSource } from './catalogue-export.js';
import type { CatalogueFilter, CataloguePageRequest } from './catalogue-query.js';
import {
  findModeImage,
  findResonance,
  findResonanceContext,
  otherPolesOfRun,
  searchResonances,
  streamResonances,
  updateResonanceLabels,
} from './catalogue-repository.js';
import { toResonanceRow, type ResonanceRow } from './resonance-row.js';

export interface ResonanceDetail extends ResonanceRow {
  /** Null for a fitted resonance of a measured trace. */
  run: { id: string; kind: string; window: Record<string, number>; certificate: unknown; status: string } | null;
  model: { id: string; name: string; version: number };
  otherPoles: { id: string; energy: number; width: number }[];
  thresholds: number[];
  leads: { name: string; side: string; width: number }[];
}

/** Rows per cursor fetch in an export: a few hundred kB of JSON at a time. */
const exportBatch = 1000;

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

/** Catalogue rules: searching, exporting, detail, labelling, mode images; everything scoped by group. */
export class CatalogueService {
  constructor(private readonly db: Db) {}

  async search(groupId: string, req: CataloguePageRequest): Promise<{ items: ResonanceRow[]; total: number; page: number; pageSize: number }> {
    const { rows, total } = await searchResonances(this.db, groupId, req);
    return { items: rows.map(toResonanceRow), total, page: req.page, pageSize: req.pageSize };
  }

  /** A row source for sendCatalogueExport: one snapshot, read through a cursor. */
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
    return this.db.transaction(async (tx) => {
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
  }

  /** The PNG (null when the caller's ETag is current) and its ETag; 404 when there is none. */
  async modeImage(groupId: string, id: string, size: 'thumb' | 'full', knownEtags: string[]): Promise<{ etag: string; png: Buffer | null }> {
    const image = await findModeImage(this.db, groupId, id, size, knownEtags);
    if (!image) throw new ApiError(404, 'not_found', `This resonance has no ${size} mode image.`);
    return image;
  }
}
