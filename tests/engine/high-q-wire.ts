import type { CavityModelInput } from '../../shared/model/cavity-model';

/**
 * A short GaAs wire (14 × 3 sites, a = 5 nm) between two 1115 meV barrier columns, with
 * 3-site leads: a resonance near 15.15 meV with Q ≈ 10⁵, and the leads' channel 2
 * opening at 13.32 meV. Shared by the sweep tests (interpolated, spectral, Schur).
 */
export const highQWire: CavityModelInput = {
  name: 'high-Q wire',
  spacing: 5,
  material: 'gaas',
  grid: { nx: 14, ny: 3 },
  shape: { kind: 'rectangle', x0: 0, y0: 0, width: 70, height: 15 },
  potential: [
    { kind: 'block', x0: 5, y0: 0, width: 5, height: 15, value: 1115 },
    { kind: 'block', x0: 60, y0: 0, width: 5, height: 15, value: 1115 },
  ],
  leads: [
    { side: 'left', start: 0, width: 3 },
    { side: 'right', start: 0, width: 3 },
  ],
};
