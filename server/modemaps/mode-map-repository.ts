import { and, desc, eq, sql } from 'drizzle-orm';
import type { Queryable } from '../db/client.js';
import { resonanceModes, resonances } from '../db/schema/catalogue.js';
import { modelVersions } from '../db/schema/models.js';
import { modeMaps, resonanceCurrents } from '../db/schema/mode-maps.js';

/** Reads of mode maps and stored pole currents (writes of maps go through mode-map-store.ts). */

/** The stored current of a group's resonance with its mode; null when it has none (or is not the group's). */
export async function findPoleCurrent(q: Queryable, groupId: string, resonanceId: string) {
  const [row] = await q
    .select({
      energy: resonances.energy,
      width: resonances.width,
      bound: resonances.bound,
      spacingNm: resonances.spacingNm,
      lattice: sql<string | null>`${modelVersions.document}->'lattice'->>'kind'`,
      nx: resonanceCurrents.nx,
      ny: resonanceCurrents.ny,
      mask: resonanceCurrents.mask,
      vectors: resonanceCurrents.vectors,
      leads: resonanceCurrents.leadCurrents,
      mode: resonanceModes.vector,
    })
    .from(resonances)
    .innerJoin(resonanceCurrents, eq(resonanceCurrents.resonanceId, resonances.id))
    .innerJoin(resonanceModes, eq(resonanceModes.resonanceId, resonances.id))
    .innerJoin(modelVersions, eq(modelVersions.id, resonances.modelVersionId))
    .where(and(eq(resonances.id, resonanceId), eq(resonances.groupId, groupId)));
  return row ?? null;
}

/** A group's resonance with its model version and whether a mode vector is stored. */
export async function findResonanceForMap(q: Queryable, groupId: string, resonanceId: string) {
  const [row] = await q
    .select({ id: resonances.id, modelVersionId: resonances.modelVersionId, hasMode: resonanceModes.resonanceId })
    .from(resonances)
    .leftJoin(resonanceModes, eq(resonanceModes.resonanceId, resonances.id))
    .where(and(eq(resonances.id, resonanceId), eq(resonances.groupId, groupId)));
  return row ?? null;
}

export async function findMap(q: Queryable, groupId: string, id: string) {
  const [row] = await q
    .select()
    .from(modeMaps)
    .where(and(eq(modeMaps.id, id), eq(modeMaps.groupId, groupId)));
  return row ?? null;
}

export async function findMapByKey(q: Queryable, groupId: string, cacheKey: string) {
  const [row] = await q
    .select()
    .from(modeMaps)
    .where(and(eq(modeMaps.groupId, groupId), eq(modeMaps.cacheKey, cacheKey)));
  return row ?? null;
}

/** The newest maps asked for a resonance. */
export function mapsOfResonance(q: Queryable, groupId: string, resonanceId: string, limit: number) {
  return q
    .select()
    .from(modeMaps)
    .where(and(eq(modeMaps.groupId, groupId), eq(modeMaps.resonanceId, resonanceId)))
    .orderBy(desc(modeMaps.createdAt))
    .limit(limit);
}
