/**
 * The outline of a cavity traced from its site mask: the union of the lattice cells, each
 * site (i, j) owning the a×a square around it. In the layout frame (see layout.ts) the cell
 * of site (i, j) is [i·a, (i+1)·a] × [j·a, (j+1)·a], so a corner (ci, cj) sits at (ci·a, cj·a).
 *
 * Every cell side between a cavity cell and a non-cavity one is a boundary edge, directed
 * with the cavity on its left; chaining them gives counter-clockwise outer boundaries and
 * clockwise holes. Where two cavity cells touch only at a corner, the chain turns left, so
 * cells joined only diagonally stay apart (4-connected, like the lattice's hopping). Points
 * on a straight run are merged. The area of the result is exactly (number of sites)·a².
 * Cost O(nx·ny).
 */
import { containsPoint, signedArea, withoutCollinear, type Ring } from './polygon';

export interface TracedOutline {
  /** Outer boundaries, counter-clockwise, each with its holes (clockwise). */
  parts: { outer: Ring; holes: Ring[] }[];
  /** Σ outer areas − Σ hole areas (nm²). */
  area: number;
}

// Directions: 0 +x, 1 +y, 2 −x, 3 −y; left of d is (d + 1) % 4.
const DX = [1, 0, -1, 0];
const DY = [0, 1, 0, -1];

export function traceMaskOutline(mask: Uint8Array, nx: number, ny: number, a: number): TracedOutline {
  const cw = ny + 1; // corners per column
  const corners = (nx + 1) * (ny + 1);
  const outDir = new Int8Array(corners * 2).fill(-1);
  const used = new Uint8Array(corners * 2);
  const inside = (i: number, j: number) => i >= 0 && j >= 0 && i < nx && j < ny && mask[i * ny + j] === 1;
  const addEdge = (ci: number, cj: number, d: number) => {
    const v = ci * cw + cj;
    outDir[outDir[2 * v] < 0 ? 2 * v : 2 * v + 1] = d;
  };
  for (let i = 0; i < nx; i++) {
    for (let j = 0; j < ny; j++) {
      if (!inside(i, j)) continue;
      if (!inside(i, j - 1)) addEdge(i, j, 0);
      if (!inside(i + 1, j)) addEdge(i + 1, j, 1);
      if (!inside(i, j + 1)) addEdge(i + 1, j + 1, 2);
      if (!inside(i - 1, j)) addEdge(i, j + 1, 3);
    }
  }

  const loops: Ring[] = [];
  for (let slot = 0; slot < outDir.length; slot++) {
    if (outDir[slot] < 0 || used[slot]) continue;
    const ring: Ring = [];
    let v = slot >> 1;
    let s = slot;
    for (;;) {
      used[s] = 1;
      const d = outDir[s];
      const ci = Math.floor(v / cw);
      const cj = v - ci * cw;
      ring.push([ci * a, cj * a]);
      const next = (ci + DX[d]) * cw + (cj + DY[d]);
      // Choose the outgoing edge at the next corner: the left turn where there are two.
      const s0 = 2 * next;
      const s1 = 2 * next + 1;
      let pick: number;
      if (outDir[s1] < 0) pick = s0;
      else pick = outDir[s0] === (d + 1) % 4 ? s0 : s1;
      v = next;
      s = pick;
      if (used[s]) break;
    }
    loops.push(withoutCollinear(ring));
  }

  const outers = loops.filter((r) => signedArea(r) > 0).map((outer) => ({ outer, holes: [] as Ring[], area: signedArea(outer) }));
  let area = outers.reduce((sum, o) => sum + o.area, 0);
  for (const hole of loops.filter((r) => signedArea(r) < 0)) {
    area += signedArea(hole);
    // A point just inside the hole: the middle of the cell to the right of its first edge.
    const [x0, y0] = hole[0]!;
    const [x1, y1] = hole[1]!;
    const len = Math.hypot(x1 - x0, y1 - y0);
    const ux = (x1 - x0) / len;
    const uy = (y1 - y0) / len;
    const px = x0 + (ux * a) / 2 + (uy * a) / 2;
    const py = y0 + (uy * a) / 2 - (ux * a) / 2;
    const parents = outers.filter((o) => containsPoint(o.outer, px, py)).sort((p, q) => p.area - q.area);
    (parents[0] ?? outers[0]!).holes.push(hole);
  }
  return { parts: outers.map(({ outer, holes }) => ({ outer, holes })), area };
}
