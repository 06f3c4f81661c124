/**
 * The probability current of every pole a run finds, computed in the engine thread
 * beside the pole search and stored compactly with the resonance (resonance_currents).
 */
import { currentMap, leadCouplings } from '../../shared/engine/current-map.js';
import type { EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian.js';
import type { Pole } from '../../shared/engine/pole-types.js';

export interface PoleCurrent {
  /** (j_x, j_y) per site (1/ps for Σ|ψ|² = 1). */
  vectors: Float32Array;
  leads: { name: string; side: string; current: number }[];
}

/** A pole as a run hands it to the result writer: with its current map. */
export type RunPole = Pole & { current?: PoleCurrent };

/** Adds the current map of each pole's mode at its pole z, on the sheet it was found on. Cost O(sites + bonds) each. */
export function withCurrents(op: EffectiveHamiltonian, poles: Pole[]): RunPole[] {
  return poles.map((p) => {
    const leads = leadCouplings(op, { re: p.energy, im: -p.width / 2 }, p.sheet);
    const map = currentMap(op.system.lattice, p.mode, leads);
    return {
      ...p,
      current: {
        vectors: Float32Array.from(map.siteVectors),
        leads: leads.map((l, k) => ({ name: l.name, side: l.side, current: map.leadCurrents[k] })),
      },
    };
  });
}

/** The cavity mask as a bitset over the grid, bit i·ny + j, most significant bit first in each byte. */
export function maskBits(nx: number, ny: number, sites: { i: ArrayLike<number>; j: ArrayLike<number> }): Buffer {
  const bits = Buffer.alloc(Math.ceil((nx * ny) / 8));
  for (let s = 0; s < sites.i.length; s++) {
    const k = sites.i[s] * ny + sites.j[s];
    bits[k >> 3] |= 0x80 >> (k & 7);
  }
  return bits;
}

/** Little-endian bytes of a typed array (a copy, so the row owns its buffer). */
export function bytesOf(a: Float32Array | Float64Array): Buffer {
  return Buffer.from(a.buffer.slice(a.byteOffset, a.byteOffset + a.byteLength));
}
