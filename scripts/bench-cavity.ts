// The one cavity the benches and the estimate's calibration measure, so their figures
// describe the same device.
import type { CavityModelInput } from '../shared/model/cavity-model';

/** An n×n GaAs rectangle (a = 5 nm) with weak disorder and two 10-site leads. */
export function benchCavity(side: number): CavityModelInput {
  return {
    name: `bench rectangle ${side}×${side}`,
    spacing: 5,
    material: { effectiveMass: 0.067 },
    grid: { nx: side, ny: side },
    shape: { kind: 'rectangle', x0: 0, y0: 0, width: 5 * side, height: 5 * side },
    // weak disorder breaks the rectangle's degeneracies, as in a real dot
    potential: [{ kind: 'disorder', strength: 0.5, seed: 11 }],
    leads: [
      { side: 'left', start: Math.round(0.2 * side), width: 10 },
      { side: 'right', start: Math.round(0.65 * side), width: 10 },
    ],
  };
}
