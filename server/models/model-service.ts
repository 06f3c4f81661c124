import type { Db, Queryable } from '../db/client.js';
import { writeAudit } from '../audit/audit-log.js';
import { ApiError } from '../http/error-handler.js';
import type { Compute } from '../compute/compute-pool.js';
import * as repo from './model-repository.js';
import type { DerivedFigures } from '../../shared/model/derived-figures.js';
import type { CavityModel } from '../../shared/model/cavity-model.js';
import { figuresOfStored, type ModelColumns } from './model-figures.js';

export function modelNotFound(): ApiError {
  return new ApiError(404, 'not_found', 'No such cavity model in this group.');
}

type SummaryRow = NonNullable<Awaited<ReturnType<typeof repo.findModel>>>;

function toSummary(r: SummaryRow) {
  return {
    id: r.id,
    name: r.name,
    family: r.family,
    latestVersion: r.latestVersion,
    material: r.material,
    physics: r.physics === 'microwave' ? ('microwave' as const) : ('electrons' as const),
    spacingNm: r.spacingNm,
    fieldT: r.fieldT,
    siteCount: r.siteCount,
    leadCount: r.leadCount,
    keyDimensions: r.keyDimensions,
    updatedAt: r.updatedAt,
    createdBy: r.createdById ? { id: r.createdById, name: r.createdByName ?? '' } : null,
  };
}

/** Versioned cavity models: a version is never changed; an edit writes the next one. */
export class ModelService {
  /** `compute` checks documents off the API thread (the pool in the app, inline in scripts). */
  constructor(
    private readonly db: Db,
    private readonly compute: Compute,
  ) {}

  /** Validates and rasterises a document in the compute pool; throws the 400 naming each field. */
  check(document: unknown, signal?: AbortSignal) {
    return this.compute.run({ kind: 'check-model', document }, signal);
  }

  async list(groupId: string, f: repo.ModelListFilter) {
    const { rows, total } = await repo.listModels(this.db, groupId, f);
    return { items: rows.map(toSummary), total };
  }

  async detail(groupId: string, modelId: string) {
    const summary = await repo.findModel(this.db, groupId, modelId);
    if (!summary) throw modelNotFound();
    const version = await repo.findVersion(this.db, groupId, modelId);
    const versions = await repo.listVersions(this.db, groupId, modelId);
    return {
      ...toSummary(summary),
      // Stored documents passed the model rules when saved (versions never change).
      document: version!.document as CavityModel,
      derived: storedFigures(version!),
      versions: versions.map((v) => ({
        version: v.version,
        createdAt: v.createdAt,
        createdBy: v.createdById ? { id: v.createdById, name: v.createdByName ?? '' } : null,
        usedByRuns: v.usedByRuns,
      })),
    };
  }

  async version(groupId: string, modelId: string, version: number) {
    const v = await repo.findVersion(this.db, groupId, modelId, version);
    if (!v) throw new ApiError(404, 'not_found', `This model has no version ${version}.`);
    return { version: v.version, document: v.document as CavityModel, derived: storedFigures(v), createdAt: v.createdAt };
  }

  async create(groupId: string, userId: string, document: unknown, referenceKey: string | null = null, signal?: AbortSignal) {
    const checked = await this.check(document, signal);
    const id = await this.db.transaction(async (tx) => {
      const modelId = await repo.insertModel(tx, groupId, userId, checked.model.name, referenceKey);
      await repo.insertVersion(tx, groupId, modelId, 1, userId, checked);
      await writeAudit(tx, { groupId, actorId: userId, action: 'model.created', subject: checked.model.name, details: { modelId } });
      return modelId;
    });
    return this.detail(groupId, id);
  }

  /**
   * Writes the next version. `onSaved` runs last in the same transaction (a study files the
   * saved step's resonances there, so the version and its catalogue rows land together or not at all).
   */
  async update(
    groupId: string,
    userId: string,
    modelId: string,
    document: unknown,
    signal?: AbortSignal,
    onSaved?: (tx: Queryable, saved: SavedVersion) => Promise<void>,
  ) {
    const checked = await this.check(document, signal);
    await this.db.transaction(async (tx) => {
      const current = await repo.lockModel(tx, groupId, modelId);
      if (!current) throw modelNotFound();
      const version = current.latestVersion + 1;
      const versionId = await repo.insertVersion(tx, groupId, modelId, version, userId, checked);
      if (checked.model.name !== current.name) await repo.renameModel(tx, modelId, checked.model.name);
      await writeAudit(tx, {
        groupId,
        actorId: userId,
        action: 'model.version_created',
        subject: `${checked.model.name} v${version}`,
        details: { modelId, version },
      });
      await onSaved?.(tx, { modelId, versionId, version, name: checked.model.name, document: checked.model, columns: checked.columns });
    });
    return this.detail(groupId, modelId);
  }

  /** One version of a group's model (the latest when `version` is left out) with its stored columns; 404 when there is none. */
  async versionRecord(groupId: string, modelId: string, version?: number) {
    const v = await repo.findVersion(this.db, groupId, modelId, version);
    if (!v) throw version ? new ApiError(404, 'not_found', `This model has no version ${version}.`) : modelNotFound();
    return v;
  }
}

/** A version just written, as `update`'s onSaved hook sees it. */
interface SavedVersion {
  modelId: string;
  versionId: string;
  version: number;
  name: string;
  document: CavityModel;
  columns: ModelColumns;
}

/**
 * A version's derived figures as stored when it was saved (versions never change, so
 * they are computed once, in the compute pool). A version the back-fill has not reached
 * (written by an older server while this one started) gets them from its stored site
 * count, without rasterising.
 */
export function storedFigures(v: { derived: DerivedFigures | null; document: unknown; siteCount: number }): DerivedFigures {
  const figures = v.derived ?? figuresOfStored(v.document, v.siteCount);
  if (!figures) throw new ApiError(500, 'stored_model_invalid', 'A stored model version no longer validates; please report this.');
  return figures;
}
