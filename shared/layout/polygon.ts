/**
 * Plain polygon arithmetic for the layout: a ring is a closed list of vertices (x, y) in nm,
 * the last vertex joined to the first (never repeated). Counter-clockwise rings have positive
 * signed area.
 */
export type Point = readonly [number, number];
export type Ring = Point[];

/** Shoelace formula (any surveying or computational-geometry text; common practice). Cost O(n). */
export function signedArea(ring: readonly Point[]): number {
  let twice = 0;
  for (let k = 0, l = ring.length - 1; k < ring.length; l = k++) twice += ring[l]![0] * ring[k]![1] - ring[k]![0] * ring[l]![1];
  return twice / 2;
}

/** Even-odd point-in-ring test (crossing number). Cost O(n). */
export function containsPoint(ring: readonly Point[], x: number, y: number): boolean {
  let inside = false;
  for (let k = 0, l = ring.length - 1; k < ring.length; l = k++) {
    const [xk, yk] = ring[k]!;
    const [xl, yl] = ring[l]!;
    if (yk > y !== yl > y && x < ((xl - xk) * (y - yk)) / (yl - yk) + xk) inside = !inside;
  }
  return inside;
}

/** Drops vertices that repeat their predecessor (cyclically). */
function withoutRepeats(ring: Ring): Ring {
  const out: Ring = [];
  for (const p of ring) {
    const last = out[out.length - 1];
    if (!last || last[0] !== p[0] || last[1] !== p[1]) out.push(p);
  }
  while (out.length > 1 && out[0]![0] === out[out.length - 1]![0] && out[0]![1] === out[out.length - 1]![1]) out.pop();
  return out;
}

/** Drops vertices that lie on the straight line through their neighbours (exactly; the tracer's are on a grid). */
export function withoutCollinear(ring: Ring): Ring {
  let r = withoutRepeats(ring);
  let changed = true;
  while (changed && r.length > 3) {
    changed = false;
    const out: Ring = [];
    for (let k = 0; k < r.length; k++) {
      const a = r[(k + r.length - 1) % r.length]!;
      const b = r[k]!;
      const c = r[(k + 1) % r.length]!;
      const cross = (b[0] - a[0]) * (c[1] - b[1]) - (b[1] - a[1]) * (c[0] - b[0]);
      if (cross === 0) changed = true;
      else out.push(b);
    }
    r = out;
  }
  return r;
}

/** A circle (or ellipse with rx ≠ ry, rotated by angle radians) as a counter-clockwise n-gon through its rim. */
export function ellipseRing(cx: number, cy: number, rx: number, ry: number, n: number, angle = 0): Ring {
  const c = Math.cos(angle);
  const s = Math.sin(angle);
  const out: Ring = [];
  for (let k = 0; k < n; k++) {
    const t = (2 * Math.PI * k) / n;
    const u = rx * Math.cos(t);
    const v = ry * Math.sin(t);
    out.push([cx + c * u - s * v, cy + s * u + c * v]);
  }
  return out;
}

export function rectangleRing(x0: number, y0: number, x1: number, y1: number): Ring {
  return [
    [x0, y0],
    [x1, y0],
    [x1, y1],
    [x0, y1],
  ];
}

/**
 * One ring for an outer boundary with holes, as mask-layout formats want it (a GDSII boundary
 * has no holes): each hole is joined to the boundary by a zero-width cut running left from
 * its leftmost vertex to the nearest edge, the usual "keyhole" (the same hole elimination as
 * the earcut triangulator). Holes go in order of their leftmost x, so a later cut may land
 * on an earlier hole. The area is unchanged (the cut has none). Expects the outer ring
 * counter-clockwise and the holes clockwise. Cost O(holes · n).
 */
export function bridgeHoles(outer: Ring, holes: Ring[]): Ring {
  let ring = [...outer];
  const leftmost = (h: Ring) => h.reduce((best, p, k) => (p[0] < h[best]![0] || (p[0] === h[best]![0] && p[1] < h[best]![1]) ? k : best), 0);
  const ordered = holes.map((h) => ({ h, m: leftmost(h) })).sort((a, b) => a.h[a.m]![0] - b.h[b.m]![0]);
  for (const { h, m } of ordered) {
    const [hx, hy] = h[m]!;
    let bestK = -1;
    let bestX = -Infinity;
    for (let k = 0; k < ring.length; k++) {
      const [x1, y1] = ring[k]!;
      const [x2, y2] = ring[(k + 1) % ring.length]!;
      if (y1 === y2) continue;
      const lo = Math.min(y1, y2);
      const hi = Math.max(y1, y2);
      if (hy < lo || hy > hi) continue;
      const x = x1 + ((hy - y1) * (x2 - x1)) / (y2 - y1);
      if (x <= hx && x > bestX) {
        bestX = x;
        bestK = k;
      }
    }
    if (bestK < 0) throw new Error(`a hole at (${hx}, ${hy}) lies outside its boundary`);
    const p: Point = [bestX, hy];
    const loop: Ring = [];
    for (let k = 0; k <= h.length; k++) loop.push(h[(m + k) % h.length]!);
    ring = [...ring.slice(0, bestK + 1), p, ...loop, p, ...ring.slice(bestK + 1)];
  }
  return withoutRepeats(ring);
}
