import { Pipe, type PipeTransform } from '@angular/core';
import { MATERIAL_PRESETS } from '../../../../shared/model/materials';

/** What the API writes for a model whose effective mass was given by hand (server/models/model-figures.ts). */
const customMaterialId = 'custom';
/** What the API writes for a model on the honeycomb lattice (graphene; no effective mass). */
const honeycombMaterialId = 'honeycomb';

/**
 * The readable name of a material id as the API lists it ("gaas" → "GaAs (2DEG)"),
 * from the presets in shared/model/materials.ts. A hand-given mass reads "custom m*", a
 * honeycomb-lattice model "graphene (honeycomb)";
 * an id no preset knows (a newer server) is shown as it is rather than hidden.
 */
export function materialLabel(id: string | null | undefined): string {
  if (id == null || id === '') return '—';
  if (id === customMaterialId) return 'custom m*';
  if (id === honeycombMaterialId) return 'graphene (honeycomb)';
  return MATERIAL_PRESETS.find((m) => m.id === id)?.label ?? id;
}

@Pipe({ name: 'materialLabel' })
export class MaterialLabelPipe implements PipeTransform {
  transform(id: string | null | undefined): string {
    return materialLabel(id);
  }
}
