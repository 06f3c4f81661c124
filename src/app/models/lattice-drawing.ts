import type { Lead } from '../../../shared/model/cavity-model';
import { type LatticeKind, type SitePlacement, placementOf } from '../../../shared/model/lattice-geometry';

/**
 * Where the lattice drawing puts things. One drawing unit is the lattice's length L (the
 * spacing a, or a_CC on the honeycomb), y points down, and the grid occupies
 * [0, width] × [0, height]. Sites sit at their real positions (shared/model/lattice-geometry.ts)
 * shifted by half a column and half a row pitch, so on the square lattice site (i, j) is the
 * centre (i + ½, ny − j − ½) of its unit cell, as the mask path draws it.
 */
export interface DrawingFrame {
  readonly kind: LatticeKind;
  readonly placement: SitePlacement;
  /** Length unit (nm, or mm) per drawing unit. */
  readonly unit: number;
  readonly width: number;
  readonly height: number;
  /** Column and row pitch in drawing units. */
  readonly dx: number;
  readonly dy: number;
  /** Drawing coordinates of a point given in the model's length unit. */
  x(length: number): number;
  y(length: number): number;
  /**
   * Drawing coordinates of a region's edge (a potential block): the cell boundary on the square
   * lattice, where every site is drawn as its cell; the real position on the honeycomb, where
   * the atoms are drawn as points.
   */
  edgeX(length: number): number;
  edgeY(length: number): number;
  /** The vertical extent [top, bottom] of rows start..start+count−1, and the horizontal [left, right] of columns. */
  rowBand(start: number, count: number): [number, number];
  columnBand(start: number, count: number): [number, number];
}

/** The frame of an nx × ny grid of a lattice of length L (> 0). */
export function drawingFrame(kind: LatticeKind, length: number, nx: number, ny: number): DrawingFrame {
  const placement = placementOf(kind, length);
  const dx = placement.dx / length;
  const dy = placement.dy / length;
  const lift = placement.rowLift / length;
  const height = ny * dy + lift;
  const x = (v: number) => v / length + dx / 2;
  const y = (v: number) => height - v / length - dy / 2;
  const square = kind === 'square';
  // Half the free room between the rows (or columns) beyond the outermost sites of a band.
  const rowPad = (dy - lift) / 2;
  return {
    kind,
    placement,
    unit: length,
    width: nx * dx,
    height,
    dx,
    dy,
    x,
    y,
    edgeX: square ? (v) => v / length : x,
    edgeY: square ? (v) => height - v / length : y,
    rowBand: (start, count) => [y(((start + count - 1) * dy + lift + rowPad) * length), y((start * dy - rowPad) * length)],
    columnBand: (start, count) => [x((start - 0.5) * dx * length), x((start + count - 0.5) * dx * length)],
  };
}

const r4 = (v: number) => Math.round(v * 1e4) / 1e4;
const n4 = (v: number) => String(r4(v));

/**
 * Drawing x and y of grid site (i, j), rounded to 10⁻⁴ a (the path data's precision, far below a
 * pixel); relative steps are taken between rounded points, so they never drift along a long chain.
 * i and j may lie outside the grid (lead atoms).
 */
function siteAt(frame: DrawingFrame, i: number, j: number): [number, number] {
  return [r4(frame.x(frame.placement.x(i, j))), r4(frame.y(frame.placement.y(i, j)))];
}

/**
 * The nearest-neighbour bonds of the cavity as one SVG path. Each row's runs of bonded
 * neighbours (i, j)–(i + 1, j) are one polyline (the honeycomb's zigzag chains), every other
 * bond a short segment; all relative, so 20,000 atoms make a few hundred kB of path data in
 * one element instead of 30,000 nodes. Cost O(nx·ny).
 */
export function bondPath(mask: Uint8Array, nx: number, ny: number, frame: DrawingFrame): string {
  const p = frame.placement;
  const parts: string[] = [];
  const on = (i: number, j: number) => i >= 0 && i < nx && j >= 0 && j < ny && mask[i * ny + j] === 1;
  for (let j = 0; j < ny; j++) {
    let i = 0;
    while (i < nx) {
      if (!on(i, j) || !on(i + 1, j)) {
        i++;
        continue;
      }
      const [x0, y0] = siteAt(frame, i, j);
      parts.push(`M${n4(x0)} ${n4(y0)}`);
      let [px, py] = [x0, y0];
      while (on(i + 1, j)) {
        const [qx, qy] = siteAt(frame, i + 1, j);
        parts.push(`l${n4(qx - px)} ${n4(qy - py)}`);
        [px, py] = [qx, qy];
        i++;
      }
    }
  }
  for (let i = 0; i < nx; i++) {
    for (let j = 0; j < ny; j++) {
      if (!on(i, j)) continue;
      for (const [di, dj] of p.nearestForward(i, j)) {
        if (dj === 0 || !on(i + di, j + dj)) continue;
        const [x0, y0] = siteAt(frame, i, j);
        const [x1, y1] = siteAt(frame, i + di, j + dj);
        parts.push(`M${n4(x0)} ${n4(y0)}l${n4(x1 - x0)} ${n4(y1 - y0)}`);
      }
    }
  }
  return parts.join('');
}

/**
 * The cavity's atoms as two SVG paths, sublattice A and B: one zero-length sub-path per atom,
 * drawn as a dot by a round line cap. Cost O(nx·ny).
 */
export function atomPaths(mask: Uint8Array, nx: number, ny: number, frame: DrawingFrame): [string, string] {
  const out: [string[], string[]] = [[], []];
  for (let i = 0; i < nx; i++) {
    for (let j = 0; j < ny; j++) {
      if (!mask[i * ny + j]) continue;
      const [x, y] = siteAt(frame, i, j);
      out[frame.placement.sublattice(i, j)].push(`M${n4(x)} ${n4(y)}h0`);
    }
  }
  return [out[0].join(''), out[1].join('')];
}

/** A lead drawn as the ribbon of the lattice it is: its first atoms, their bonds, the atoms of the cavity they bond to. */
export interface LeadRibbon {
  /** The band the ribbon occupies outside the grid, in drawing units. */
  band: { x: number; y: number; w: number; h: number };
  bonds: string;
  atoms: string;
  /** The cavity atoms bonded to the lead (the contacts). */
  contacts: string;
  /** Zigzag (left/right leads on the honeycomb), armchair (top/bottom) or plain (square lattice). */
  edge: 'zigzag' | 'armchair' | 'square';
}

/**
 * The first columns (left/right leads) or rows (top/bottom) of a lead, as far as `reach`
 * drawing units from the grid: the lead is the semi-infinite ribbon of the cavity's own lattice
 * on the lead's rows (columns), docs/physics-model.md "Lead cells", so its atoms continue the
 * grid labels past the edge and bond by the lattice's own rules, including the bonds to the
 * cavity atoms of the mouth. Cost O(width·reach).
 */
export function leadRibbon(
  lead: Pick<Lead, 'side' | 'start' | 'width'>,
  mask: Uint8Array | null,
  nx: number,
  ny: number,
  frame: DrawingFrame,
  reach: number,
): LeadRibbon {
  const p = frame.placement;
  const horizontal = lead.side === 'left' || lead.side === 'right';
  // Whole unit cells of the lead (2 columns or rows on the honeycomb, 1 on the square lattice).
  const cell = frame.kind === 'honeycomb' ? 2 : 1;
  const pitch = horizontal ? frame.dx : frame.dy;
  const depth = Math.max(cell, cell * Math.floor(reach / (pitch * cell)));
  const inLead = (i: number, j: number): boolean => {
    const along = horizontal ? j : i;
    if (along < lead.start || along >= lead.start + lead.width) return false;
    switch (lead.side) {
      case 'left':
        return i < 0 && i >= -depth;
      case 'right':
        return i >= nx && i < nx + depth;
      case 'bottom':
        return j < 0 && j >= -depth;
      case 'top':
        return j >= ny && j < ny + depth;
    }
  };
  const inCavity = (i: number, j: number) => mask !== null && i >= 0 && i < nx && j >= 0 && j < ny && mask[i * ny + j] === 1;
  const sites: [number, number][] = [];
  for (let k = 0; k < depth; k++) {
    for (let q = lead.start; q < lead.start + lead.width; q++) {
      const across = lead.side === 'left' ? -1 - k : lead.side === 'right' ? nx + k : lead.side === 'bottom' ? -1 - k : ny + k;
      sites.push(horizontal ? [across, q] : [q, across]);
    }
  }
  const bonds: string[] = [];
  const atoms: string[] = [];
  const contacts = new Set<string>();
  for (const [i, j] of sites) {
    const [x0, y0] = siteAt(frame, i, j);
    atoms.push(`M${n4(x0)} ${n4(y0)}h0`);
    const forward = p.nearestForward(i, j);
    for (const [di, dj] of p.nearestAll(i, j)) {
      const a = i + di;
      const b = j + dj;
      const lead2 = inLead(a, b);
      const isForward = forward.some(([fi, fj]) => fi === di && fj === dj);
      if (!(lead2 && isForward) && !inCavity(a, b)) continue;
      const [x1, y1] = siteAt(frame, a, b);
      bonds.push(`M${n4(x0)} ${n4(y0)}l${n4(x1 - x0)} ${n4(y1 - y0)}`);
      if (!lead2) contacts.add(`M${n4(x1)} ${n4(y1)}h0`);
    }
  }
  const [top, bottom] = horizontal ? frame.rowBand(lead.start, lead.width) : [0, 0];
  const [left, right] = horizontal ? [0, 0] : frame.columnBand(lead.start, lead.width);
  const span = depth * pitch;
  const band =
    lead.side === 'left'
      ? { x: -span, y: top, w: span, h: bottom - top }
      : lead.side === 'right'
        ? { x: frame.width, y: top, w: span, h: bottom - top }
        : lead.side === 'bottom'
          ? { x: left, y: frame.height, w: right - left, h: span }
          : { x: left, y: -span, w: right - left, h: span };
  return {
    band,
    bonds: bonds.join(''),
    atoms: atoms.join(''),
    contacts: [...contacts].join(''),
    edge: frame.kind === 'square' ? 'square' : horizontal ? 'zigzag' : 'armchair',
  };
}
