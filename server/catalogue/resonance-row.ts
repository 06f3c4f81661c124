import type { ResonanceRow } from '../../shared/api/resonance-row.js';
import type { ResonanceRecord } from './catalogue-repository.js';
import { keyDimensionsOf } from '../models/model-figures.js';

export type { ResonanceRow };

export function modeImageUrl(groupId: string, id: string, size: 'thumb' | 'full'): string {
  return `/api/groups/${groupId}/resonances/${id}/mode.png?size=${size}`;
}

/** Record → API row; only the key dimensions the family has are listed. */
export function toResonanceRow(r: ResonanceRecord): ResonanceRow {
  const keyDimensions = keyDimensionsOf(r) as ResonanceRow['keyDimensions'];
  const physics = r.physics === 'microwave' ? 'microwave' : 'electrons';
  let microwave: ResonanceRow['microwave'] = null;
  if (physics === 'microwave') {
    // ε_r is not stored per row: the stored Re f = s·Re√z gives the scale s = c/(2π√ε_r), which
    // converts Im√z to Γ_f = 2s|Im√z| and the k² limit to a frequency.
    const root = complexSqrt(r.energy, -r.width / 2);
    const f = r.frequencyGhz ?? 0;
    const scale = root.re > 0 ? f / root.re : 0;
    microwave = {
      frequencyGhz: f,
      widthMhz: 2 * scale * Math.abs(root.im) * 1e3,
      lifetimeNs: r.lifetimePs === null ? null : r.lifetimePs / 1e3,
      quality: r.quality,
      validityLimitGhz: r.validityLimit === null ? null : scale * Math.sqrt(Math.max(0, r.validityLimit)),
    };
  }
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
    physics,
    microwave,
    validity: { limit: r.validityLimit, wavelengthSpacings: r.wavelengthSpacings, aboveLimit: r.aboveValidity },
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

/** Principal √(re + i·im). */
function complexSqrt(re: number, im: number): { re: number; im: number } {
  // The half-angle form loses Im √z to cancellation when |im| ≪ re (a narrow pole): take the
  // larger part from it and the smaller from 2·Re√z·Im√z = im (Numerical Recipes §5.4).
  const m = Math.hypot(re, im);
  if (m === 0) return { re: 0, im: 0 };
  const w = Math.sqrt((m + Math.abs(re)) / 2);
  if (re >= 0) return { re: w, im: im / (2 * w) };
  return { re: Math.abs(im) / (2 * w), im: im < 0 ? -w : w };
}
