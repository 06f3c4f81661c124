import { eq, isNull, or } from 'drizzle-orm';
import type { Db } from '../db/client.js';
import { resonances } from '../db/schema/catalogue.js';
import { modelVersions } from '../db/schema/models.js';
import { validateCavityModel } from '../../shared/model/model-validation.js';
import { resonanceFigures, resonancePhysicsOf, type ResonancePhysics } from '../../shared/model/resonance-validity.js';
import { geometryColumns, geometryOf, keyDimensionsOf, type GeometryColumns } from '../models/model-figures.js';

/**
 * Fills the columns added with the per-family dimensions, the physics mode and the
 * lattice validity on rows written before them (migration 0007): model versions get
 * every dimension of their family (an ellipse's rx, ry instead of radius = max(rx, ry)),
 * resonances copy them and get their validity figures. Only rows still lacking them are
 * read (area or validity null), so after one pass it is a pair of empty queries.
 * Idempotent; a stored document that no longer validates is left as it was and counted.
 */
export async function backfillDerivedColumns(db: Db, log: (line: string) => void = () => {}): Promise<{ versions: number; resonances: number; skipped: number }> {
  let skipped = 0;
  const figures = new Map<string, { geometry: GeometryColumns; physics: ResonancePhysics } | null>();
  const versionFigures = (id: string, document: unknown) => {
    if (figures.has(id)) return figures.get(id)!;
    const checked = validateCavityModel(document);
    const value = checked.ok ? { geometry: geometryColumns(checked.model, checked.mask, checked.siteCount), physics: resonancePhysicsOf(checked.model) } : null;
    figures.set(id, value);
    return value;
  };

  const versions = await db.select({ id: modelVersions.id, document: modelVersions.document }).from(modelVersions).where(isNull(modelVersions.areaNm2));
  for (const v of versions) {
    const f = versionFigures(v.id, v.document);
    if (!f) {
      skipped++;
      continue;
    }
    await db
      .update(modelVersions)
      .set({ ...f.geometry, physics: f.physics.physics, keyDimensions: keyDimensionsOf(f.geometry) })
      .where(eq(modelVersions.id, v.id));
  }

  const rows = await db
    .select({
      id: resonances.id,
      energy: resonances.energy,
      width: resonances.width,
      source: resonances.source,
      details: resonances.details,
      versionId: resonances.modelVersionId,
      document: modelVersions.document,
    })
    .from(resonances)
    .innerJoin(modelVersions, eq(modelVersions.id, resonances.modelVersionId))
    .where(or(isNull(resonances.areaNm2), isNull(resonances.validityLimit)));
  for (const r of rows) {
    const f = versionFigures(r.versionId, r.document);
    if (!f) {
      skipped++;
      continue;
    }
    const fig = resonanceFigures(r.energy, r.width, f.physics);
    const v = fig.validity;
    // A fit on a gate-voltage axis has an arbitrary energy zero: its position says nothing about validity.
    const fit = (r.details as { fit?: { positionComparable?: boolean } }).fit;
    const known = r.source !== 'fitted' || fit?.positionComparable !== false;
    await db
      .update(resonances)
      .set({
        ...geometryOf(f.geometry),
        physics: fig.physics,
        frequencyGhz: fig.frequencyGhz,
        validityLimit: v.limit,
        wavelengthSpacings: known ? v.wavelengthSpacings : null,
        aboveValidity: known ? v.aboveLimit : null,
      })
      .where(eq(resonances.id, r.id));
  }
  if (versions.length || rows.length) log(`[backfill] ${versions.length} model version(s), ${rows.length} resonance(s) given dimensions and validity figures; ${skipped} skipped`);
  return { versions: versions.length, resonances: rows.length, skipped };
}
