/**
 * Mode maps in the group backup: the stored current of every pole (`resonanceCurrent`)
 * and the completed maps computed on demand (`modeMap`). A map still queued or running,
 * or one that failed, is left out: it is asked for again on the restored group. A
 * restored map gets the cache key of its new ids, so asking for the same map again
 * finds it instead of computing it once more.
 */
import type { ModeMapPayload } from '../../shared/api/mode-maps.js';
import { and, asc, eq, inArray } from 'drizzle-orm';
import { z } from 'zod';
import { resonances } from '../db/schema/catalogue.js';
import { modeMaps, resonanceCurrents } from '../db/schema/mode-maps.js';
import { runs } from '../db/schema/runs.js';
import { peakFits } from '../db/schema/fits.js';
import { modeMapCacheKey } from '../modemaps/mode-map-service.js';
import { authorEmails } from './author-emails.js';
import type { BackupSection } from './backup-section.js';
import { remapJsonIds } from './remap-json-ids.js';

const id = z.uuid();
const when = z.iso.datetime({ offset: true });
const num = z.number().finite();
const base64 = z.string().regex(/^[A-Za-z0-9+/]*={0,2}$/, 'must be base64');
const iso = (d: Date | null) => (d ? d.toISOString() : null);
/** Currents read per query: each holds a float32 pair per site. */
const BATCH = 100;

const resonanceCurrentRecord = z.object({
  type: z.literal('resonanceCurrent'),
  resonanceId: id,
  nx: z.number().int().positive(),
  ny: z.number().int().positive(),
  /** The cavity sites as a bitset over the grid (bit i·ny + j, most significant first), base64. */
  mask: base64,
  /** (j_x, j_y) per cavity site, little-endian float32, base64. */
  vectors: base64,
  leadCurrents: z.array(z.object({ name: z.string(), side: z.string(), current: num })),
});

const modeMapRecord = z.object({
  type: z.literal('modeMap'),
  id,
  modelVersionId: id,
  resonanceId: id.nullable(),
  params: z.record(z.string(), z.unknown()),
  status: z.literal('completed', { error: 'only completed maps are in a backup' }),
  progressStage: z.string().nullable(),
  progressFraction: num.nullable(),
  attempt: z.number().int().nonnegative(),
  engineVersion: z.string(),
  result: z.record(z.string(), z.unknown()),
  createdBy: z.string().max(320).nullable(),
  createdAt: when,
  finishedAt: when.nullable(),
});

type CurrentRecord = z.infer<typeof resonanceCurrentRecord>;
type MapRecord = z.infer<typeof modeMapRecord>;

function popcount(bytes: Buffer): number {
  let n = 0;
  for (const b of bytes) for (let v = b; v; v &= v - 1) n++;
  return n;
}

const currentSection: BackupSection<CurrentRecord> = {
  type: 'resonanceCurrent',
  schema: resonanceCurrentRecord,
  async *records(q, groupId) {
    // In the order of the resonances in the archive: computed ones run by run, then fitted ones.
    const order = await q
      .select({ id: resonances.id })
      .from(resonanceCurrents)
      .innerJoin(resonances, eq(resonances.id, resonanceCurrents.resonanceId))
      .leftJoin(runs, eq(runs.id, resonances.runId))
      .leftJoin(peakFits, eq(peakFits.id, resonances.fitId))
      .where(eq(resonances.groupId, groupId))
      .orderBy(
        asc(resonances.source),
        asc(runs.createdAt),
        asc(runs.kind),
        asc(runs.note),
        asc(resonances.idx),
        asc(peakFits.createdAt),
        asc(resonances.energy),
      );
    for (let k = 0; k < order.length; k += BATCH) {
      const ids = order.slice(k, k + BATCH).map((r) => r.id);
      const at = new Map(ids.map((x, n) => [x, n]));
      const rows = await q.select().from(resonanceCurrents).where(inArray(resonanceCurrents.resonanceId, ids));
      rows.sort((a, b) => at.get(a.resonanceId)! - at.get(b.resonanceId)!);
      for (const c of rows) {
        yield {
          type: 'resonanceCurrent',
          resonanceId: c.resonanceId,
          nx: c.nx,
          ny: c.ny,
          mask: c.mask.toString('base64'),
          vectors: c.vectors.toString('base64'),
          leadCurrents: c.leadCurrents,
        };
      }
    }
  },
  label: (c) => `resonanceCurrent of resonance ${c.resonanceId}`,
  references: (c) => [{ field: 'resonanceId', kind: 'resonances', id: c.resonanceId }],
  check(c) {
    const issues: { field: string; message: string }[] = [];
    const mask = Buffer.from(c.mask, 'base64');
    const maskBytes = Math.ceil((c.nx * c.ny) / 8);
    if (mask.length !== maskBytes) issues.push({ field: 'mask', message: `must hold ${c.nx} × ${c.ny} bits (${maskBytes} bytes), holds ${mask.length} bytes` });
    else {
      const sites = popcount(mask);
      const bytes = Buffer.byteLength(c.vectors, 'base64');
      if (bytes !== sites * 8)
        issues.push({ field: 'vectors', message: `must hold a float32 pair for each of the mask's ${sites} sites (${sites * 8} bytes), holds ${bytes} bytes` });
    }
    return issues;
  },
  async restore(tx, _groupId, records, ids) {
    for (let k = 0; k < records.length; k += 50) {
      await tx.insert(resonanceCurrents).values(
        records.slice(k, k + 50).map((c) => ({
          resonanceId: ids.resonances.get(c.resonanceId)!,
          nx: c.nx,
          ny: c.ny,
          mask: Buffer.from(c.mask, 'base64'),
          vectors: Buffer.from(c.vectors, 'base64'),
          leadCurrents: c.leadCurrents,
        })),
      );
    }
  },
};

const mapSection: BackupSection<MapRecord> = {
  type: 'modeMap',
  schema: modeMapRecord,
  async *records(q, groupId) {
    const emailOf = authorEmails(q);
    const list = await q
      .select({ id: modeMaps.id })
      .from(modeMaps)
      .where(and(eq(modeMaps.groupId, groupId), eq(modeMaps.status, 'completed')))
      .orderBy(asc(modeMaps.createdAt), asc(modeMaps.finishedAt));
    // One map at a time: a Husimi map's result can be large.
    for (const { id: mapId } of list) {
      const [m] = await q.select().from(modeMaps).where(eq(modeMaps.id, mapId));
      if (!m || m.status !== 'completed' || !m.result) continue;
      yield {
        type: 'modeMap',
        id: m.id,
        modelVersionId: m.modelVersionId,
        resonanceId: m.resonanceId,
        params: m.params,
        status: 'completed',
        progressStage: m.progressStage,
        progressFraction: m.progressFraction,
        attempt: m.attempt,
        engineVersion: m.engineVersion ?? String(m.result.engineVersion ?? ''),
        result: m.result,
        createdBy: await emailOf(m.createdBy),
        createdAt: iso(m.createdAt)!,
        finishedAt: iso(m.finishedAt),
      };
    }
  },
  label: (m) => `modeMap ${m.id}`,
  references: (m) => [
    { field: 'modelVersionId', kind: 'modelVersions', id: m.modelVersionId },
    { field: 'resonanceId', kind: 'resonances', id: m.resonanceId },
  ],
  async restore(tx, groupId, records, ids) {
    for (const m of records) {
      const modelVersionId = ids.modelVersions.get(m.modelVersionId)!;
      const params = remapJsonIds(m.params, ids);
      // Two maps of one request (possible only in an edited file) keep the first: a map is a cache.
      await tx
        .insert(modeMaps)
        .values({
          groupId,
          modelVersionId,
          resonanceId: m.resonanceId ? ids.resonances.get(m.resonanceId)! : null,
          params,
          cacheKey: modeMapCacheKey(m.engineVersion, modelVersionId, params),
          status: 'completed',
          progressStage: m.progressStage,
          progressFraction: m.progressFraction,
          attempt: m.attempt,
          engineVersion: m.engineVersion,
          result: m.result as ModeMapPayload | null,
          createdBy: m.createdBy ? (ids.people.get(m.createdBy.toLowerCase()) ?? null) : null,
          createdAt: new Date(m.createdAt),
          finishedAt: m.finishedAt ? new Date(m.finishedAt) : null,
        })
        .onConflictDoNothing();
    }
  },
};

export const modeMapsBackupSections = [currentSection, mapSection];
