import { createHash } from 'node:crypto';
import { and, eq, sql } from 'drizzle-orm';
import type { Db } from '../db/client.js';
import { resonanceModes, resonances } from '../db/schema/catalogue.js';
import { modeMaps, resonanceCurrents } from '../db/schema/mode-maps.js';
import { ApiError } from '../http/error-handler.js';
import { ENGINE_VERSION } from '../jobs/engine-task.js';
import { findVersion } from '../models/model-repository.js';
import { modelNotFound } from '../models/model-service.js';
import { resonanceNotFound } from '../catalogue/catalogue-service.js';
import { cavityModelSchema, modelHopping } from '../../shared/model/cavity-model.js';
import { channelFlags, leadChannels } from '../../shared/engine/leads.js';
import type { ModeMapQueue } from './mode-map-queue.js';
import type { ModeMapRequest } from './mode-map-request.js';
import { base64Float32, type ModeMapPayload } from './mode-map-task.js';

export type ModeMapRow = typeof modeMaps.$inferSelect;

export function toModeMapView(row: ModeMapRow) {
  return {
    id: row.id,
    status: row.status,
    progress: row.progressStage !== null ? { stage: row.progressStage, fraction: row.progressFraction ?? 0 } : null,
    params: row.params,
    resonanceId: row.resonanceId,
    error: row.error,
    createdAt: row.createdAt,
    finishedAt: row.finishedAt,
    result: row.status === 'completed' ? row.result : null,
  };
}

/** JSON with sorted keys, so equal requests give equal cache keys. */
function canonical(value: unknown): string {
  if (Array.isArray(value)) return `[${value.map(canonical).join(',')}]`;
  if (value && typeof value === 'object') {
    const entries = Object.entries(value as Record<string, unknown>).filter(([, v]) => v !== undefined);
    return `{${entries.sort(([a], [b]) => a.localeCompare(b)).map(([k, v]) => `${JSON.stringify(k)}:${canonical(v)}`).join(',')}}`;
  }
  return JSON.stringify(value);
}

/** The cache key of a map: equal requests of one model version and engine give equal keys. */
export function modeMapCacheKey(engineVersion: string, modelVersionId: string, params: Record<string, unknown>): string {
  return createHash('sha256').update(canonical({ engine: engineVersion, modelVersionId, ...params })).digest('hex');
}

function mapNotFound(): ApiError {
  return new ApiError(404, 'not_found', 'No such map in this group.');
}

/**
 * Mode maps: the stored current of a pole, and maps computed on demand (queued, cached by
 * their parameters and the engine version).
 */
export class ModeMapService {
  constructor(
    private readonly db: Db,
    private readonly queue: ModeMapQueue | null,
  ) {}

  /** The current of a catalogued pole as its run stored it, with the mode for the density image. */
  async poleCurrent(groupId: string, resonanceId: string): Promise<ModeMapPayload> {
    const [row] = await this.db
      .select({
        energy: resonances.energy,
        width: resonances.width,
        bound: resonances.bound,
        spacingNm: resonances.spacingNm,
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
      .where(and(eq(resonances.id, resonanceId), eq(resonances.groupId, groupId)));
    if (!row) {
      const [exists] = await this.db.select({ id: resonances.id }).from(resonances).where(and(eq(resonances.id, resonanceId), eq(resonances.groupId, groupId)));
      if (!exists) throw resonanceNotFound();
      throw new ApiError(404, 'no_current', 'This resonance was catalogued before current maps were stored; compute its map on demand (POST mode-maps).');
    }
    const mode = new Float64Array(row.mode.buffer.slice(row.mode.byteOffset, row.mode.byteOffset + row.mode.byteLength));
    return {
      engineVersion: ENGINE_VERSION,
      state: {
        kind: row.bound ? 'bound' : 'pole',
        energy: row.energy,
        width: row.width,
        label: `mode of the pole z = ${row.energy} − i·${row.width / 2} meV`,
      },
      unit: '1/ps',
      spacingNm: row.spacingNm,
      grid: { nx: row.nx, ny: row.ny },
      mask: row.mask.toString('base64'),
      psi: base64Float32(mode),
      vectors: row.vectors.toString('base64'),
      leads: row.leads,
      kirchhoffResidual: null,
      ldos: null,
      husimi: null,
    };
  }

  async create(groupId: string, userId: string, req: ModeMapRequest) {
    if (!this.queue) throw new ApiError(503, 'queue_unavailable', 'Maps cannot be computed here: no computation queue is attached to this server.');
    let modelVersionId: string;
    let resonanceId: string | null = null;
    let source: Record<string, unknown>;
    if (req.resonanceId) {
      const [r] = await this.db
        .select({ id: resonances.id, modelVersionId: resonances.modelVersionId, hasMode: resonanceModes.resonanceId })
        .from(resonances)
        .leftJoin(resonanceModes, eq(resonanceModes.resonanceId, resonances.id))
        .where(and(eq(resonances.id, req.resonanceId), eq(resonances.groupId, groupId)));
      if (!r) throw resonanceNotFound();
      if (!r.hasMode) throw new ApiError(409, 'no_mode', 'This resonance has no stored mode vector to map.');
      modelVersionId = r.modelVersionId;
      resonanceId = r.id;
      source = { kind: 'resonance', resonanceId: r.id };
    } else {
      const v = await findVersion(this.db, groupId, req.modelId!, req.version);
      if (!v) throw req.version ? new ApiError(404, 'not_found', `This model has no version ${req.version}.`) : modelNotFound();
      checkChannel(v.document, req.energy!, req.lead!, req.channel!);
      modelVersionId = v.id;
      source = { kind: 'energy', energy: req.energy, lead: req.lead, channel: req.channel };
    }
    const params = { source, husimi: req.husimi };
    const cacheKey = modeMapCacheKey(ENGINE_VERSION, modelVersionId, params);
    const [inserted] = await this.db
      .insert(modeMaps)
      .values({ groupId, modelVersionId, resonanceId, params, cacheKey, createdBy: userId, progressStage: 'queued', progressFraction: 0 })
      .onConflictDoNothing()
      .returning();
    let row = inserted;
    if (!row) {
      [row] = await this.db.select().from(modeMaps).where(and(eq(modeMaps.groupId, groupId), eq(modeMaps.cacheKey, cacheKey)));
      // A failed map is tried again when asked again; anything else is the cached answer.
      if (row.status !== 'failed') return { created: false, view: toModeMapView(row) };
      [row] = await this.db
        .update(modeMaps)
        .set({ status: 'queued', error: null, progressStage: 'queued', progressFraction: 0, finishedAt: null })
        .where(and(eq(modeMaps.id, row.id), eq(modeMaps.status, 'failed')))
        .returning();
      if (!row) return { created: false, view: await this.view(groupId, inserted?.id ?? '') };
    }
    try {
      const jobId = await this.queue.enqueue(row.id);
      await this.db.update(modeMaps).set({ jobId }).where(eq(modeMaps.id, row.id));
    } catch (err) {
      await this.db.update(modeMaps).set({ status: 'failed', error: 'the map could not be queued' }).where(eq(modeMaps.id, row.id));
      throw err;
    }
    return { created: true, view: toModeMapView(row) };
  }

  async view(groupId: string, id: string) {
    const [row] = await this.db.select().from(modeMaps).where(and(eq(modeMaps.id, id), eq(modeMaps.groupId, groupId)));
    if (!row) throw mapNotFound();
    return toModeMapView(row);
  }

  /** The maps already asked for a resonance (newest first), so the page can show them again. */
  async forResonance(groupId: string, resonanceId: string) {
    const rows = await this.db
      .select()
      .from(modeMaps)
      .where(and(eq(modeMaps.groupId, groupId), eq(modeMaps.resonanceId, resonanceId)))
      .orderBy(sql`${modeMaps.createdAt} desc`)
      .limit(20);
    return rows.map((r) => ({ ...toModeMapView(r), result: null }));
  }
}

/**
 * The lead and channel must exist and the channel be open at E (contract, "Leads": open for
 * ε_m − 2t < E < ε_m + 2t). Checked from the document alone (no lattice is built here).
 */
function checkChannel(document: unknown, energy: number, lead: number, channel: number): void {
  const parsed = cavityModelSchema.safeParse(document);
  if (!parsed.success) throw new ApiError(500, 'stored_model_invalid', 'A stored model version no longer validates; please report this.');
  const model = parsed.data;
  const l = model.leads[lead];
  if (!l) {
    throw new ApiError(400, 'validation_failed', 'There is no such lead.', [
      { path: 'lead', message: model.leads.length ? `the model has leads 0 to ${model.leads.length - 1}` : 'the model has no leads' },
    ]);
  }
  const t = modelHopping(model);
  const flags = channelFlags(leadChannels(l.width, t, l.offset), energy);
  const open = flags.flatMap((f, m) => (f ? [m + 1] : []));
  if (!flags[channel - 1]) {
    throw new ApiError(400, 'validation_failed', `Channel ${channel} of lead ${l.name ?? `${l.side}${lead}`} is not open at ${energy} meV.`, [
      { path: 'channel', message: open.length ? `open channels at this energy: ${open.join(', ')}` : 'no channel of this lead is open at this energy' },
    ]);
  }
}
