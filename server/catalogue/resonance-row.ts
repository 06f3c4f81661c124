import type { ResonanceRecord } from './catalogue-repository.js';

/**
 * One catalogued resonance z = E − iΓ/2 as the API shows it. Energies and widths in meV,
 * lifetime τ = ħ/Γ in ps, field in T, key dimensions in nm; lifetime and Q are null for
 * bound states (infinite).
 */
export interface ResonanceRow {
  id: string;
  /** Null for a fitted resonance of a measured trace. */
  runId: string | null;
  /** 'computed': a pole a run found; 'fitted': a peak fit (see fitId). */
  source: 'computed' | 'fitted';
  fitId: string | null;
  modelId: string;
  modelName: string;
  modelVersion: number;
  family: string;
  keyDimensions: { width?: number; height?: number; radius?: number; length?: number };
  material: string;
  fieldT: number;
  energy: number;
  width: number;
  lifetimePs: number | null;
  quality: number | null;
  partialWidths: { lead: string; width: number }[];
  /** Null for fitted resonances. */
  petermann: number | null;
  residual: number | null;
  bound: boolean;
  nearThreshold: boolean;
  overlapping: boolean;
  tags: string[];
  notes: string;
  createdAt: string;
  /** Null for fitted resonances (they have no mode image). */
  thumbnailUrl: string | null;
  imageUrl: string | null;
}

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
