import type { ResonanceRow } from '../../shared/api/resonance-row.js';
import type { ResonanceRecord } from './catalogue-repository.js';

export type { ResonanceRow };

export function modeImageUrl(groupId: string, id: string, size: 'thumb' | 'full'): string {
  return `/api/groups/${groupId}/resonances/${id}/mode.png?size=${size}`;
}

/** Record → API row; only the key dimensions the family has are listed. */
export function toResonanceRow(r: ResonanceRecord): ResonanceRow {
  const keyDimensions: ResonanceRow['keyDimensions'] = {};
  if (r.widthNm !== null) keyDimensions.width = r.widthNm;
  if (r.heightNm !== null) keyDimensions.height = r.heightNm;
  if (r.radiusNm !== null) keyDimensions.radius = r.radiusNm;
  if (r.lengthNm !== null) keyDimensions.length = r.lengthNm;
  return {
    id: r.id,
    runId: r.runId,
    source: r.source,
    fitId: r.fitId,
    modelId: r.modelId,
    modelName: r.modelName,
    modelVersion: r.modelVersion,
    family: r.family,
    keyDimensions,
    material: r.material,
    fieldT: r.fieldT,
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
    tags: r.tags,
    notes: r.notes,
    createdAt: r.createdAt.toISOString(),
    thumbnailUrl: r.source === 'fitted' ? null : modeImageUrl(r.groupId, r.id, 'thumb'),
    imageUrl: r.source === 'fitted' ? null : modeImageUrl(r.groupId, r.id, 'full'),
  };
}
