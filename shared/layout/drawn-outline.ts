/**
 * The outline of the shape the user drew, where the model came from a drawing of one
 * primitive (rectangle, disk, ellipse, stadium, annulus, polygon): the smooth shape the
 * lattice approximates. Curves become polygons whose chords stay within CHORD_TOLERANCE_NM of
 * the curve. Combined shapes, site lists and bitmaps have no single drawn outline (null): the
 * traced outline is then the only one. Coordinates in the layout frame (model + a/2).
 */
import type { Shape } from '../model/cavity-model';
import { bridgeHoles, ellipseRing, rectangleRing, signedArea, type Ring } from './polygon';

/** Largest distance between a curve and its polygon (nm). */
export const CHORD_TOLERANCE_NM = 0.5;

/** Segments for a full turn of radius r so the sagitta r(1 − cos(π/n)) stays within the tolerance. */
export function segmentsFor(radius: number): number {
  if (radius <= CHORD_TOLERANCE_NM) return 32;
  const n = Math.ceil(Math.PI / Math.acos(1 - CHORD_TOLERANCE_NM / radius));
  return Math.min(2048, Math.max(32, n));
}

function shifted(ring: Ring, d: number): Ring {
  return ring.map(([x, y]) => [x + d, y + d] as const);
}

function ccw(ring: Ring): Ring {
  return signedArea(ring) < 0 ? [...ring].reverse() : ring;
}

/** Rings of the drawn shape in the layout frame, or null when the shape is not one primitive. */
export function drawnOutline(shape: Shape, spacing: number): Ring[] | null {
  const d = spacing / 2;
  switch (shape.kind) {
    case 'rectangle':
      return [shifted(rectangleRing(shape.x0, shape.y0, shape.x0 + shape.width, shape.y0 + shape.height), d)];
    case 'disk':
      return [shifted(ellipseRing(shape.cx, shape.cy, shape.radius, shape.radius, segmentsFor(shape.radius)), d)];
    case 'ellipse': {
      const r = Math.max(shape.rx, shape.ry);
      return [shifted(ellipseRing(shape.cx, shape.cy, shape.rx, shape.ry, segmentsFor(r), ((shape.angleDeg ?? 0) * Math.PI) / 180), d)];
    }
    case 'stadium': {
      const half = shape.length / 2;
      const r = shape.radius;
      const n = Math.max(16, Math.ceil(segmentsFor(r) / 2));
      const ring: Ring = [];
      for (let k = 0; k <= n; k++) {
        const t = -Math.PI / 2 + (Math.PI * k) / n;
        ring.push([shape.cx + half + r * Math.cos(t), shape.cy + r * Math.sin(t)]);
      }
      for (let k = 0; k <= n; k++) {
        const t = Math.PI / 2 + (Math.PI * k) / n;
        ring.push([shape.cx - half + r * Math.cos(t), shape.cy + r * Math.sin(t)]);
      }
      return [shifted(ring, d)];
    }
    case 'annulus': {
      const outer = ellipseRing(shape.cx, shape.cy, shape.outer, shape.outer, segmentsFor(shape.outer));
      const inner = ellipseRing(shape.cx, shape.cy, shape.inner, shape.inner, segmentsFor(shape.inner)).reverse();
      return [shifted(bridgeHoles(outer, [inner]), d)];
    }
    case 'polygon':
      return [shifted(ccw(shape.vertices.map(([x, y]) => [x, y] as const)), d)];
    default:
      return null;
  }
}
