/**
 * The onsite potential V(s) (meV) of each cavity site: the sum of the model's
 * potential terms, evaluated at the site positions (x = i·a, y = j·a on the square
 * lattice; the placement's positions on another, lattice-geometry.ts). Blocks are half-open like
 * rectangles (see geometry.ts).
 */
import type { PotentialTerm } from './cavity-model';
import { siteUniform } from './site-noise';
import type { SitePlacement } from './lattice-geometry';

/**
 * V at the listed sites. Cost O(sites · terms) plus O(entries) for explicit lists.
 * @param siteIndex grid → unknown index map (i·ny + j → s, −1 outside)
 */
export function evaluatePotential(
  terms: readonly PotentialTerm[],
  sites: { i: Int32Array; j: Int32Array },
  siteIndex: Int32Array,
  ny: number,
  a: number,
  placement?: SitePlacement,
): Float64Array {
  const px = placement && placement.kind !== 'square' ? (s: number) => placement.x(sites.i[s], sites.j[s]) : (s: number) => sites.i[s] * a;
  const py = placement && placement.kind !== 'square' ? (s: number) => placement.y(sites.i[s], sites.j[s]) : (s: number) => sites.j[s] * a;
  const n = sites.i.length;
  const v = new Float64Array(n);
  const eps = 1e-9 * a;
  for (const term of terms) {
    switch (term.kind) {
      case 'block': {
        const { x0, y0, width, height, value } = term;
        for (let s = 0; s < n; s++) {
          const x = px(s);
          const y = py(s);
          if (x >= x0 - eps && x < x0 + width - eps && y >= y0 - eps && y < y0 + height - eps) v[s] += value;
        }
        break;
      }
      case 'gaussian': {
        const { cx, cy, sigma, amplitude } = term;
        const inv = 1 / (2 * sigma * sigma);
        for (let s = 0; s < n; s++) {
          const dx = px(s) - cx;
          const dy = py(s) - cy;
          v[s] += amplitude * Math.exp(-(dx * dx + dy * dy) * inv);
        }
        break;
      }
      case 'disorder': {
        for (let s = 0; s < n; s++) v[s] += term.strength * (siteUniform(term.seed, sites.i[s], sites.j[s]) - 0.5);
        break;
      }
      case 'sites': {
        // Entries on grid points outside the cavity have no site to act on.
        for (const [i, j, value] of term.values) {
          const s = siteIndex[i * ny + j];
          if (s !== undefined && s >= 0) v[s] += value;
        }
        break;
      }
    }
  }
  return v;
}
