import type { CavityModelInput } from '../../shared/model/cavity-model';

/**
 * An irregular GaAs-mass cavity (16 × 12 sites, a = 5 nm: an 80 × 60 nm rectangle minus a disk,
 * with disorder) and the given leads. Shared by the transmission, current-map and mouth-Schur tests.
 */
export function irregularCavity(field: number, leads: CavityModelInput['leads']): CavityModelInput {
  return {
    name: 'irregular',
    spacing: 5,
    material: { effectiveMass: 0.067 },
    grid: { nx: 16, ny: 12 },
    shape: {
      kind: 'subtract',
      from: { kind: 'rectangle', x0: 0, y0: 0, width: 80, height: 60 },
      remove: [{ kind: 'disk', cx: 52, cy: 36, radius: 9 }],
    },
    potential: [{ kind: 'disorder', strength: 10, seed: 3 }],
    field,
    leads,
  };
}
