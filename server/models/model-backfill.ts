import { eq, isNull } from 'drizzle-orm';
import type { NodePgDatabase } from 'drizzle-orm/node-postgres';
import { modelVersions } from '../db/schema/models.js';
import { traceMaskOutline } from '../../shared/layout/outline-trace.js';
import { validateCavityModel } from '../../shared/model/model-validation.js';
import { figuresOfStored } from './model-figures.js';

/**
 * Stores the derived figures of model versions saved before they were stored with the
 * version (migration 0008 added the column). Runs after the migrations, at every start
 * (scripts/migrate.ts), and does nothing once every row has them. From the stored site
 * count, so nothing is rasterised: a few milliseconds per thousand versions. Answers how
 * many rows were filled and how many could not be (their document no longer validates;
 * reading them answers the same 500 as before).
 */
export async function backfillDerivedFigures(db: NodePgDatabase<Record<string, unknown>>, batch = 500): Promise<{ filled: number; skipped: number }> {
  let filled = 0;
  const skippedIds = new Set<string>();
  for (;;) {
    const rows = (
      await db
        .select({ id: modelVersions.id, document: modelVersions.document, siteCount: modelVersions.siteCount })
        .from(modelVersions)
        .where(isNull(modelVersions.derived))
        .limit(batch + skippedIds.size)
    ).filter((r) => !skippedIds.has(r.id));
    if (rows.length === 0) return { filled, skipped: skippedIds.size };
    for (const r of rows) {
      const figures = figuresOfStored(r.document, r.siteCount);
      if (!figures) {
        skippedIds.add(r.id);
        continue;
      }
      // Versions never change, so only an unfilled row is written.
      await db.update(modelVersions).set({ derived: figures }).where(eq(modelVersions.id, r.id));
      filled++;
    }
  }
}

/**
 * Traces and stores the cavity outline of model versions saved before it was stored with the
 * version (migration 0013_model_version_outline), and of restored versions (the archive leaves it out). Runs after the
 * migrations at every start (scripts/migrate.ts), in the migration process, never on a request;
 * unlike the figures it must rasterise each document (cost O(nx·ny) per version), and does
 * nothing once every row has its outline. Rows whose document no longer validates are skipped
 * (the fabrication layout then validates and traces as before, and answers its 422).
 */
export async function backfillOutlines(db: NodePgDatabase<Record<string, unknown>>, batch = 50): Promise<{ filled: number; skipped: number }> {
  let filled = 0;
  const skippedIds = new Set<string>();
  for (;;) {
    const rows = (
      await db
        .select({ id: modelVersions.id, document: modelVersions.document })
        .from(modelVersions)
        .where(isNull(modelVersions.outline))
        .limit(batch + skippedIds.size)
    ).filter((r) => !skippedIds.has(r.id));
    if (rows.length === 0) return { filled, skipped: skippedIds.size };
    for (const r of rows) {
      const checked = validateCavityModel(r.document);
      if (!checked.ok) {
        skippedIds.add(r.id);
        continue;
      }
      const { model, mask } = checked;
      const outline = traceMaskOutline(mask, model.grid.nx, model.grid.ny, model.spacing);
      await db.update(modelVersions).set({ outline }).where(eq(modelVersions.id, r.id));
      filled++;
    }
  }
}
