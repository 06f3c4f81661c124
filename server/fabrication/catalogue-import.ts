/**
 * Catalogue exchange: a group's admin imports a catalogue JSON export (with the model
 * versions it carries) into their group. The file is checked whole (form, every model
 * document through the compute pool, every row's model present, nothing imported twice)
 * before anything is written, and then written in one transaction: an invalid file changes
 * nothing. Imported resonances keep their figures exactly and record where they came from
 * in details.provenance; they have no run, fit or mode image in the new group.
 */
import { and, eq, inArray, sql } from 'drizzle-orm';
import type { RequestHandler } from 'express';
import { Router } from 'express';
import multer from 'multer';
import { catalogueExportFileSchema, importCatalogueRoute, type CatalogueExportFile, type CatalogueImportResult } from '../../shared/api/fabrication.js';
import { writeAudit } from '../audit/audit-log.js';
import type { Compute } from '../compute/compute-pool.js';
import type { Db, Queryable } from '../db/client.js';
import { resonances } from '../db/schema/catalogue.js';
import { cavityModels, modelVersions } from '../db/schema/models.js';
import { ApiError, type FieldIssue } from '../http/error-handler.js';
import { clientGone } from '../http/client-gone.js';
import { mountRoute } from '../http/mount-route.js';
import { insertModel, insertVersion } from '../models/model-repository.js';
import type { CheckedModel } from '../models/model-figures.js';

const IMPORT_MAX_BYTES = 20 * 1024 * 1024;

/** The model versions of an export: what an import needs to rebuild them. */
export async function exportedModels(q: Queryable, groupId: string, versionIds: string[]) {
  if (versionIds.length === 0) return [];
  const rows = await q
    .select({ modelId: modelVersions.modelId, name: cavityModels.name, version: modelVersions.version, document: modelVersions.document })
    .from(modelVersions)
    .innerJoin(cavityModels, eq(cavityModels.id, modelVersions.modelId))
    .where(and(eq(modelVersions.groupId, groupId), inArray(modelVersions.id, versionIds)));
  return rows.sort((a, b) => a.modelId.localeCompare(b.modelId) || a.version - b.version);
}

/** Line and column of a character offset, for the error message of a malformed file. */
function lineOf(text: string, offset: number): { line: number; column: number } {
  const before = text.slice(0, offset);
  const line = before.split('\n').length;
  return { line, column: offset - before.lastIndexOf('\n') };
}

function parseExportFile(bytes: Buffer): CatalogueExportFile {
  const text = bytes.toString('utf8');
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch (err) {
    const message = err instanceof Error ? err.message : String(err);
    const at = /position (\d+)/.exec(message);
    const where = at ? (({ line, column }) => ` at line ${line}, column ${column}`)(lineOf(text, Number(at[1]))) : '';
    throw new ApiError(400, 'invalid_file', `The file is not valid JSON${where}: ${message}. Nothing was imported.`, [
      { path: 'file', message: `not JSON${where}` },
    ]);
  }
  const parsed = catalogueExportFileSchema.safeParse(raw);
  if (!parsed.success) {
    const issues: FieldIssue[] = parsed.error.issues.slice(0, 20).map((i) => ({ path: ['file', ...i.path.map(String)].join('.'), message: i.message }));
    const named = issues.map((i) => `${i.path} (${i.message})`).join('; ');
    throw new ApiError(400, 'invalid_file', `The file is not a valid catalogue export: ${named}. Nothing was imported.`, issues);
  }
  return parsed.data;
}

export class CatalogueImport {
  constructor(
    private readonly db: Db,
    private readonly compute: Compute,
  ) {}

  async run(groupId: string, userId: string, fileName: string, file: CatalogueExportFile, signal?: AbortSignal): Promise<CatalogueImportResult> {
    // Every row's model version must be in the file, and every model document valid.
    const key = (modelId: string, version: number) => `${modelId}@${version}`;
    const models = new Map(file.models.map((m, k) => [key(m.modelId, m.version), { ...m, index: k }]));
    const issues: FieldIssue[] = [];
    file.items.forEach((r, k) => {
      if (!models.has(key(r.modelId, r.modelVersion)))
        issues.push({ path: `file.items.${k}.modelVersion`, message: `model ${r.modelId} version ${r.modelVersion} is not in the file's models` });
    });
    const checked = new Map<string, CheckedModel>();
    for (const [k, m] of models) {
      try {
        checked.set(k, await this.compute.run({ kind: 'check-model', document: m.document }, signal));
      } catch (err) {
        if (!(err instanceof ApiError) || err.status !== 400) throw err;
        for (const i of err.issues ?? []) issues.push({ path: `file.models.${m.index}.${i.path}`, message: i.message });
      }
    }
    if (issues.length) {
      const named = issues
        .slice(0, 10)
        .map((i) => `${i.path} (${i.message})`)
        .join('; ');
      throw new ApiError(
        400,
        'invalid_file',
        `The file cannot be imported: ${named}${issues.length > 10 ? '; …' : ''}. Nothing was imported.`,
        issues.slice(0, 50),
      );
    }

    return this.db.transaction(async (tx) => {
      const sourceIds = file.items.map((r) => r.id);
      const already = sourceIds.length
        ? await tx
            .select({ source: sql<string>`${resonances.details}->'provenance'->>'sourceResonanceId'` })
            .from(resonances)
            .where(and(eq(resonances.groupId, groupId), sql`${resonances.details}->'provenance'->>'sourceResonanceId' = any(${sql.param(sourceIds)}::text[])`))
        : [];
      if (already.length) {
        throw new ApiError(
          409,
          'already_imported',
          `${already.length} of these resonances were imported into this group before (e.g. ${already[0]!.source}). Nothing was imported.`,
        );
      }
      const importedAt = new Date();
      // One new model per source model, with the source's version numbers (ascending, so the last is the latest).
      const newModel = new Map<string, string>();
      const newVersion = new Map<string, { id: string; spacingNm: number }>();
      const ordered = [...models.entries()].sort(([, a], [, b]) => a.modelId.localeCompare(b.modelId) || a.version - b.version);
      for (const [k, m] of ordered) {
        const c = checked.get(k)!;
        let modelId = newModel.get(m.modelId);
        if (!modelId) {
          modelId = await insertModel(tx, groupId, userId, m.name, null);
          newModel.set(m.modelId, modelId);
        }
        await insertVersion(tx, groupId, modelId, m.version, userId, { ...c, model: m.document as typeof c.model });
        const [v] = await tx
          .select({ id: modelVersions.id })
          .from(modelVersions)
          .where(and(eq(modelVersions.modelId, modelId), eq(modelVersions.version, m.version)));
        newVersion.set(k, { id: v!.id, spacingNm: c.columns.spacingNm });
      }
      const ids: string[] = [];
      for (let start = 0; start < file.items.length; start += 500) {
        const rows = file.items.slice(start, start + 500).map((r) => {
          const v = newVersion.get(key(r.modelId, r.modelVersion))!;
          return {
            groupId,
            runId: null,
            source: r.source,
            fitId: null,
            modelId: newModel.get(r.modelId)!,
            modelVersionId: v.id,
            idx: null,
            energy: r.energy,
            width: r.width,
            lifetimePs: r.lifetimePs,
            quality: r.quality,
            partialWidths: r.partialWidths,
            petermann: r.petermann,
            residual: r.residual,
            bound: r.bound,
            nearThreshold: r.nearThreshold,
            overlapping: r.overlapping,
            details: {
              provenance: {
                importedAt: importedAt.toISOString(),
                importedBy: userId,
                fileName,
                exportedAt: file.exportedAt,
                sourceResonanceId: r.id,
                sourceRunId: r.runId,
                sourceModelId: r.modelId,
                sourceFitId: r.fitId,
                sourceCreatedAt: r.createdAt,
              },
            },
            tags: r.tags,
            notes: r.notes,
            modelName: r.modelName,
            modelVersion: r.modelVersion,
            family: r.family,
            material: r.material,
            fieldT: r.fieldT,
            spacingNm: v.spacingNm,
            widthNm: r.keyDimensions.width ?? null,
            heightNm: r.keyDimensions.height ?? null,
            radiusNm: r.keyDimensions.radius ?? null,
            lengthNm: r.keyDimensions.length ?? null,
          };
        });
        const inserted = await tx.insert(resonances).values(rows).returning({ id: resonances.id });
        ids.push(...inserted.map((x) => x.id));
      }
      await writeAudit(tx, {
        groupId,
        actorId: userId,
        action: 'catalogue.imported',
        subject: `${ids.length} resonances from ${fileName}`,
        details: { count: ids.length, models: newModel.size, exportedAt: file.exportedAt },
      });
      return { imported: ids.length, models: newModel.size, resonanceIds: ids };
    });
  }
}

const upload = multer({ storage: multer.memoryStorage(), limits: { fileSize: IMPORT_MAX_BYTES, files: 1, fields: 5, fieldSize: 1024 } });

function importUpload(): RequestHandler {
  const single = upload.single('file');
  return (req, res, next) => {
    single(req, res, (err: unknown) => {
      if (err instanceof multer.MulterError) {
        if (err.code === 'LIMIT_FILE_SIZE')
          return next(new ApiError(413, 'payload_too_large', `The file is larger than the limit of ${IMPORT_MAX_BYTES} bytes. Nothing was imported.`));
        return next(new ApiError(400, 'validation_failed', `The upload was refused: ${err.message}.`, [{ path: err.field ?? 'file', message: err.message }]));
      }
      if (err) return next(err);
      if (!req.file)
        return next(new ApiError(400, 'validation_failed', 'Attach the catalogue export (JSON) in the field "file".', [{ path: 'file', message: 'missing' }]));
      next();
    });
  };
}

/** POST /api/groups/:groupId/catalogue/import (admin). */
export function catalogueImportRoutes(service: CatalogueImport): Router {
  const router = Router();
  mountRoute(
    router,
    importCatalogueRoute,
    async (_input, req, res) => {
      const file = parseExportFile(req.file!.buffer);
      const name = (req.file!.originalname || 'catalogue.json').slice(0, 200);
      return service.run(req.membership!.groupId, req.auth!.user.id, name, file, clientGone(res));
    },
    { before: [importUpload()] },
  );
  return router;
}
