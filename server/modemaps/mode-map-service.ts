import { createHash } from 'node:crypto';
import type { Db } from '../db/client.js';
import type { modeMaps } from '../db/schema/mode-maps.js';
import { ApiError } from '../http/error-handler.js';
import { ENGINE_VERSION } from '../jobs/engine-task.js';
import { findVersion } from '../models/model-repository.js';
import { modelNotFound, storedFigures } from '../models/model-service.js';
import type { DerivedFigures } from '../../shared/model/derived-figures.js';
import { resonanceNotFound } from '../catalogue/catalogue-service.js';
import type { ModeMapQueue } from './mode-map-queue.js';
import * as repo from './mode-map-repository.js';
import { modeMapStore } from './mode-map-store.js';
import type { ModeMapRequest } from './mode-map-request.js';
import { base64Float32, type ModeMapPayload } from './mode-map-task.js';

type ModeMapRow = typeof modeMaps.$inferSelect;

function toModeMapView(row: ModeMapRow) {
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
    return `{${entries
      .sort(([a], [b]) => a.localeCompare(b))
      .map(([k, v]) => `${JSON.stringify(k)}:${canonical(v)}`)
      .join(',')}}`;
  }
  return JSON.stringify(value);
}

/** The cache key of a map: equal requests of one model version and engine give equal keys. */
export function modeMapCacheKey(engineVersion: string, modelVersionId: string, params: Record<string, unknown>): string {
  return createHash('sha256')
    .update(canonical({ engine: engineVersion, modelVersionId, ...params }))
    .digest('hex');
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
    const row = await repo.findPoleCurrent(this.db, groupId, resonanceId);
    if (!row) {
      if (!(await repo.findResonanceForMap(this.db, groupId, resonanceId))) throw resonanceNotFound();
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
      lattice: row.lattice === 'honeycomb' ? 'honeycomb' : 'square',
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
      const r = await repo.findResonanceForMap(this.db, groupId, req.resonanceId);
      if (!r) throw resonanceNotFound();
      if (!r.hasMode) throw new ApiError(409, 'no_mode', 'This resonance has no stored mode vector to map.');
      modelVersionId = r.modelVersionId;
      resonanceId = r.id;
      source = { kind: 'resonance', resonanceId: r.id };
    } else {
      const v = await findVersion(this.db, groupId, req.modelId!, req.version);
      if (!v) throw req.version ? new ApiError(404, 'not_found', `This model has no version ${req.version}.`) : modelNotFound();
      checkChannel(storedFigures(v), req.energy!, req.lead!, req.channel!);
      modelVersionId = v.id;
      source = { kind: 'energy', energy: req.energy, lead: req.lead, channel: req.channel };
    }
    const params = { source, husimi: req.husimi };
    const cacheKey = modeMapCacheKey(ENGINE_VERSION, modelVersionId, params);
    const inserted = await modeMapStore.create(this.db, { groupId, modelVersionId, resonanceId, params, cacheKey, createdBy: userId });
    let row = inserted;
    if (!row) {
      const cached = (await repo.findMapByKey(this.db, groupId, cacheKey))!;
      // A failed map is tried again when asked again; anything else is the cached answer.
      if (cached.status !== 'failed') return { created: false, view: toModeMapView(cached) };
      row = await modeMapStore.askAgain(this.db, cached.id);
      if (!row) return { created: false, view: await this.view(groupId, cached.id) };
    }
    try {
      const jobId = await this.queue.enqueue(row.id);
      await modeMapStore.attachJob(this.db, row.id, jobId);
    } catch (err) {
      await modeMapStore.fail(this.db, row.id, 'the map could not be queued');
      throw err;
    }
    return { created: true, view: toModeMapView(row) };
  }

  async view(groupId: string, id: string) {
    const row = await repo.findMap(this.db, groupId, id);
    if (!row) throw mapNotFound();
    return toModeMapView(row);
  }

  /** The maps already asked for a resonance (newest first), so the page can show them again. */
  async forResonance(groupId: string, resonanceId: string) {
    const rows = await repo.mapsOfResonance(this.db, groupId, resonanceId, 20);
    return rows.map((r) => ({ ...toModeMapView(r), result: null }));
  }
}

/**
 * The lead and channel must exist and the channel be open at E (contract, "Leads": open for
 * ε_m − 2t < E < ε_m + 2t, strict, as the engine's channelFlags; a numerical lead's ranges
 * from its band edges, shared/engine/lead-channel-ranges.ts). Read from the version's
 * stored derived figures (no document parsed, no lattice built here).
 */
function checkChannel(figures: DerivedFigures, energy: number, lead: number, channel: number): void {
  const l = figures.leads[lead];
  if (!l) {
    throw new ApiError(400, 'validation_failed', 'There is no such lead.', [
      { path: 'lead', message: figures.leads.length ? `the model has leads 0 to ${figures.leads.length - 1}` : 'the model has no leads' },
    ]);
  }
  // A numerical lead stored without its ranges (a restored version): the engine checks the channel when it computes.
  if (l.thresholds.length === 0) return;
  // A numerical lead may list one channel on several ranges (derived-figures.ts): open when any holds E.
  const open = [...new Set(l.thresholds.filter((t) => energy > t.opens && energy < t.closes).map((t) => t.channel))].sort((a, b) => a - b);
  if (!open.includes(channel)) {
    throw new ApiError(400, 'validation_failed', `Channel ${channel} of lead ${l.name} is not open at ${energy} meV.`, [
      { path: 'channel', message: open.length ? `open channels at this energy: ${open.join(', ')}` : 'no channel of this lead is open at this energy' },
    ]);
  }
}
