/**
 * Where the sites of a lattice sit and which of them are bonded (docs/physics-model.md,
 * "Lattices"). Every lattice labels its sites by integers (i, j) on an nx × ny grid, mask
 * index i·ny + j, so masks, bitmaps, site lists and the unknowns' lexicographic order work
 * the same on every lattice; only the positions (nm) and the neighbour rules differ.
 *
 * - Square, spacing a: (x, y) = (i·a, j·a); neighbours (i±1, j), (i, j±1).
 * - Honeycomb, carbon–carbon distance a_CC, as a "brick wall": row j is one zigzag chain
 *   along x, x = i·(√3/2)a_CC, y = j·(3/2)a_CC + (a_CC/2 when i + j is odd).
 *   Sublattice A: i + j even; B: i + j odd. Nearest neighbours (distance a_CC): (i±1, j)
 *   always, (i, j+1) from a B site, (i, j−1) from an A site. Next-nearest (distance
 *   √3·a_CC, same sublattice): (i±2, j), (i±1, j±1). Lattice vectors a1 = (√3·a_CC, 0)
 *   ((i, j) → (i+2, j)) and a2 = (√3/2, 3/2)·a_CC ((i, j) → (i+1, j+1)). Edges along x are
 *   zigzag, edges along y armchair.
 */

export type LatticeKind = 'square' | 'honeycomb';

/** Offsets (di, dj) of the neighbours of a site. */
export type Offsets = readonly (readonly [number, number])[];

export interface SitePlacement {
  readonly kind: LatticeKind;
  /** The lattice's length (nm): the spacing a, or a_CC. */
  readonly length: number;
  /** Column pitch Δx and row pitch Δy (nm). */
  readonly dx: number;
  readonly dy: number;
  /** Largest offset of y(i, j) above j·Δy (nm): 0 on the square lattice, a_CC/2 on the honeycomb. */
  readonly rowLift: number;
  x(i: number, j: number): number;
  y(i: number, j: number): number;
  /** 0 for sublattice A, 1 for B (always 0 on the square lattice). */
  sublattice(i: number, j: number): 0 | 1;
  /** Nearest-neighbour offsets listed once per bond (the other half of the bonds is listed from the other end). */
  nearestForward(i: number, j: number): Offsets;
  /** Every nearest-neighbour offset of the site. */
  nearestAll(i: number, j: number): Offsets;
  /** Next-nearest offsets listed once per bond (none on the square lattice). */
  nextForward(i: number, j: number): Offsets;
}

const SQUARE_FORWARD: Offsets = [
  [1, 0],
  [0, 1],
];
const SQUARE_ALL: Offsets = [
  [-1, 0],
  [0, -1],
  [0, 1],
  [1, 0],
];
const NONE: Offsets = [];

/** The square lattice of spacing a (nm). */
export function squarePlacement(a: number): SitePlacement {
  return {
    kind: 'square',
    length: a,
    dx: a,
    dy: a,
    rowLift: 0,
    x: (i) => i * a,
    y: (_i, j) => j * a,
    sublattice: () => 0,
    nearestForward: () => SQUARE_FORWARD,
    nearestAll: () => SQUARE_ALL,
    nextForward: () => NONE,
  };
}

const HONEY_FORWARD_A: Offsets = [[1, 0]];
const HONEY_FORWARD_B: Offsets = [
  [0, 1],
  [1, 0],
];
const HONEY_ALL_A: Offsets = [
  [-1, 0],
  [0, -1],
  [1, 0],
];
const HONEY_ALL_B: Offsets = [
  [-1, 0],
  [0, 1],
  [1, 0],
];
const HONEY_NEXT: Offsets = [
  [-1, 1],
  [1, 1],
  [2, 0],
];

/** The honeycomb lattice of carbon–carbon distance a_CC (nm), zigzag rows along x. */
export function honeycombPlacement(acc: number): SitePlacement {
  const dx = (Math.sqrt(3) / 2) * acc;
  const dy = 1.5 * acc;
  const odd = (i: number, j: number) => ((i + j) & 1) === 1;
  return {
    kind: 'honeycomb',
    length: acc,
    dx,
    dy,
    rowLift: acc / 2,
    x: (i) => i * dx,
    y: (i, j) => j * dy + (odd(i, j) ? acc / 2 : 0),
    sublattice: (i, j) => (odd(i, j) ? 1 : 0),
    nearestForward: (i, j) => (odd(i, j) ? HONEY_FORWARD_B : HONEY_FORWARD_A),
    nearestAll: (i, j) => (odd(i, j) ? HONEY_ALL_B : HONEY_ALL_A),
    nextForward: () => HONEY_NEXT,
  };
}

/** The placement of a lattice kind at its length (nm). */
export function placementOf(kind: LatticeKind, length: number): SitePlacement {
  return kind === 'honeycomb' ? honeycombPlacement(length) : squarePlacement(length);
}

/** Number of nearest neighbours of grid site (i, j) that are set in the mask. */
export function neighbourCount(mask: Uint8Array, nx: number, ny: number, placement: SitePlacement, i: number, j: number): number {
  let c = 0;
  for (const [di, dj] of placement.nearestAll(i, j)) {
    const a = i + di;
    const b = j + dj;
    if (a >= 0 && a < nx && b >= 0 && b < ny && mask[a * ny + b]) c++;
  }
  return c;
}

/**
 * Removes dangling sites, those with fewer than two nearest neighbours in the cavity,
 * repeatedly until none is left (the usual clean-up of an etched flake's edge: removing
 * one can leave its neighbour dangling). `keep` marks sites never removed (lead mouths).
 * Works in place; returns the number removed. Cost O(nx·ny + removed·z).
 */
export function removeDanglingSites(mask: Uint8Array, nx: number, ny: number, placement: SitePlacement, keep?: Uint8Array): number {
  const queue: number[] = [];
  for (let s = 0; s < mask.length; s++) if (mask[s]) queue.push(s);
  let removed = 0;
  while (queue.length) {
    const s = queue.pop()!;
    if (!mask[s] || keep?.[s]) continue;
    const i = Math.floor(s / ny);
    const j = s - i * ny;
    if (neighbourCount(mask, nx, ny, placement, i, j) >= 2) continue;
    mask[s] = 0;
    removed++;
    for (const [di, dj] of placement.nearestAll(i, j)) {
      const a = i + di;
      const b = j + dj;
      if (a >= 0 && a < nx && b >= 0 && b < ny && mask[a * ny + b]) queue.push(a * ny + b);
    }
  }
  return removed;
}
