/**
 * Rasterising a cavity shape onto the site grid. Site (i, j) sits at
 * (x, y) = (i·a, j·a) nm; mask index i·ny + j (lexicographic (i, j) order, the
 * order of the unknowns). Rules, fixed so a shape means one set of sites:
 * rectangles are half-open [x0, x0+width) × [y0, y0+height) so width = N·a
 * covers N sites; disks, ellipses, stadiums and annulus outer rims include their
 * boundary (annulus inner rim excluded); polygons use the even-odd rule.
 * A tolerance of 1e-9·a absorbs rounding in i·a.
 */
import type { Lead, Shape } from './cavity-model';
import type { SitePlacement } from './lattice-geometry';

const EDGE_TOLERANCE = 1e-9;

/** Decodes base64 without Node or DOM APIs. Cost O(length). */
function decodeBase64(text: string): Uint8Array {
  const alphabet = 'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/';
  const clean = text.replace(/=+$/, '');
  const out = new Uint8Array(Math.floor((clean.length * 3) / 4));
  let bits = 0;
  let acc = 0;
  let o = 0;
  for (let c = 0; c < clean.length; c++) {
    const v = alphabet.indexOf(clean[c]);
    if (v < 0) throw new Error(`invalid base64 character '${clean[c]}' at position ${c}`);
    acc = (acc << 6) | v;
    bits += 6;
    if (bits >= 8) {
      bits -= 8;
      out[o++] = (acc >> bits) & 0xff;
    }
  }
  return out;
}

/** Sets mask sites whose position satisfies `inside`, scanning only the bounding box (nm). */
function fillWhere(
  mask: Uint8Array,
  nx: number,
  ny: number,
  a: number,
  box: [number, number, number, number],
  inside: (x: number, y: number) => boolean,
  placement?: SitePlacement,
): void {
  if (placement && placement.kind !== 'square') {
    const [i0, i1, j0, j1] = placedBox(box, nx, ny, placement);
    for (let i = i0; i <= i1; i++) {
      for (let j = j0; j <= j1; j++) {
        if (inside(placement.x(i, j), placement.y(i, j))) mask[i * ny + j] = 1;
      }
    }
    return;
  }
  const i0 = Math.max(0, Math.floor(box[0] / a) - 1);
  const i1 = Math.min(nx - 1, Math.ceil(box[2] / a) + 1);
  const j0 = Math.max(0, Math.floor(box[1] / a) - 1);
  const j1 = Math.min(ny - 1, Math.ceil(box[3] / a) + 1);
  for (let i = i0; i <= i1; i++) {
    for (let j = j0; j <= j1; j++) {
      if (inside(i * a, j * a)) mask[i * ny + j] = 1;
    }
  }
}

/** Index ranges [i0, i1, j0, j1] of the grid sites a placement puts near a box (nm), clipped to the grid. */
function placedBox(box: [number, number, number, number], nx: number, ny: number, p: SitePlacement): [number, number, number, number] {
  return [
    Math.max(0, Math.floor(box[0] / p.dx) - 1),
    Math.min(nx - 1, Math.ceil(box[2] / p.dx) + 1),
    Math.max(0, Math.floor((box[1] - p.rowLift) / p.dy) - 1),
    Math.min(ny - 1, Math.ceil(box[3] / p.dy) + 1),
  ];
}

/** Even-odd rule at one point: an odd number of polygon edges cross the horizontal line through it to its right. */
function insidePolygon(vertices: readonly (readonly [number, number])[], x: number, y: number): boolean {
  let inside = false;
  for (let k = 0, l = vertices.length - 1; k < vertices.length; l = k++) {
    const [xk, yk] = vertices[k];
    const [xl, yl] = vertices[l];
    if (yk > y !== yl > y && x < ((xl - xk) * (y - yk)) / (yl - yk) + xk) inside = !inside;
  }
  return inside;
}

/**
 * Even-odd fill of a polygon, row by row: site (i, j) is inside when an odd number
 * of edges crossing the row y = j·a lie to its right (x < crossing), the same test
 * and arithmetic as the per-site crossing rule, with the half-open comparison
 * counting a vertex once. Sorting each row's crossings makes the cost
 * O(rows·V·log V + sites) instead of O(sites·V).
 */
function fillPolygon(mask: Uint8Array, nx: number, ny: number, a: number, vertices: readonly (readonly [number, number])[]): void {
  const n = vertices.length;
  const vx = new Float64Array(n);
  const vy = new Float64Array(n);
  vertices.forEach(([x, y], k) => {
    vx[k] = x;
    vy[k] = y;
  });
  const [minX, minY, maxX, maxY] = shapeBox({ kind: 'polygon', vertices: vertices as [number, number][] })!;
  const i0 = Math.max(0, Math.floor(minX / a) - 1);
  const i1 = Math.min(nx - 1, Math.ceil(maxX / a) + 1);
  const j0 = Math.max(0, Math.floor(minY / a) - 1);
  const j1 = Math.min(ny - 1, Math.ceil(maxY / a) + 1);
  const crossings = new Float64Array(n);
  for (let j = j0; j <= j1; j++) {
    const y = j * a;
    let m = 0;
    for (let k = 0, l = n - 1; k < n; l = k++) {
      const xk = vx[k],
        yk = vy[k],
        xl = vx[l],
        yl = vy[l];
      if (yk > y !== yl > y) crossings[m++] = ((xl - xk) * (y - yk)) / (yl - yk) + xk;
    }
    if (m === 0) continue;
    const row = crossings.subarray(0, m).sort();
    // c = crossings at or left of x; the ones right of x (x < crossing) number m − c.
    let c = 0;
    for (let i = i0; i <= i1; i++) {
      const x = i * a;
      while (c < m && !(x < row[c])) c++;
      if ((m - c) & 1) mask[i * ny + j] = 1;
    }
  }
}

/** Bounding box (nm) [xmin, ymin, xmax, ymax] of a primitive drawn in nm; null for sites and bitmaps. */
function shapeBox(shape: Shape): [number, number, number, number] | null {
  switch (shape.kind) {
    case 'rectangle':
      return [shape.x0, shape.y0, shape.x0 + shape.width, shape.y0 + shape.height];
    case 'disk':
      return [shape.cx - shape.radius, shape.cy - shape.radius, shape.cx + shape.radius, shape.cy + shape.radius];
    case 'ellipse': {
      const r = Math.max(shape.rx, shape.ry);
      return [shape.cx - r, shape.cy - r, shape.cx + r, shape.cy + r];
    }
    case 'stadium': {
      const half = shape.length / 2;
      return [shape.cx - half - shape.radius, shape.cy - shape.radius, shape.cx + half + shape.radius, shape.cy + shape.radius];
    }
    case 'annulus':
      return [shape.cx - shape.outer, shape.cy - shape.outer, shape.cx + shape.outer, shape.cy + shape.outer];
    case 'polygon': {
      let minX = Infinity,
        minY = Infinity,
        maxX = -Infinity,
        maxY = -Infinity;
      for (const [x, y] of shape.vertices) {
        minX = Math.min(minX, x);
        maxX = Math.max(maxX, x);
        minY = Math.min(minY, y);
        maxY = Math.max(maxY, y);
      }
      return [minX, minY, maxX, maxY];
    }
    default:
      return null;
  }
}

/** Grid sites fillWhere scans for a bounding box (the same clipping, so the count is exact). */
function boxSites(box: [number, number, number, number], nx: number, ny: number, a: number, placement?: SitePlacement): number {
  if (placement && placement.kind !== 'square') {
    const [i0, i1, j0, j1] = placedBox(box, nx, ny, placement);
    return Math.max(0, i1 - i0 + 1) * Math.max(0, j1 - j0 + 1);
  }
  const i0 = Math.max(0, Math.floor(box[0] / a) - 1);
  const i1 = Math.min(nx - 1, Math.ceil(box[2] / a) + 1);
  const j0 = Math.max(0, Math.floor(box[1] / a) - 1);
  const j1 = Math.min(ny - 1, Math.ceil(box[3] / a) + 1);
  return Math.max(0, i1 - i0 + 1) * Math.max(0, j1 - j0 + 1);
}

/**
 * Work of rasteriseShape in site tests, computed without rasterising: Σ over
 * primitives of the sites scanned (plus rows × V·log V for a polygon), plus one grid pass
 * (nx·ny) for every shape's mask and every member a combinator merges. Cost
 * O(shapes + vertices). Used to refuse a document before the work starts.
 */
export function rasterWork(shape: Shape, nx: number, ny: number, a: number, placement?: SitePlacement): number {
  const grid = nx * ny;
  if (placement && placement.kind !== 'square') {
    // Off the square lattice every primitive is tested site by site (a polygon: every edge at every site).
    switch (shape.kind) {
      case 'sites':
      case 'bitmap':
        return rasterWork(shape, nx, ny, a);
      case 'union':
        return grid + shape.of.reduce((s, m) => s + grid + rasterWork(m, nx, ny, a, placement), 0);
      case 'subtract':
        return grid + rasterWork(shape.from, nx, ny, a, placement) + shape.remove.reduce((s, m) => s + grid + rasterWork(m, nx, ny, a, placement), 0);
      case 'polygon':
        return grid + boxSites(shapeBox(shape)!, nx, ny, a, placement) * shape.vertices.length;
      default:
        return grid + boxSites(shapeBox(shape)!, nx, ny, a, placement);
    }
  }
  switch (shape.kind) {
    case 'sites':
      return grid + shape.list.length;
    case 'bitmap':
      return grid + shape.width * shape.height;
    case 'union':
      return grid + shape.of.reduce((s, m) => s + grid + rasterWork(m, nx, ny, a), 0);
    case 'subtract':
      return grid + rasterWork(shape.from, nx, ny, a) + shape.remove.reduce((s, m) => s + grid + rasterWork(m, nx, ny, a), 0);
    case 'polygon': {
      // Row scan: each row tests every edge (and sorts its crossings), then passes its sites.
      const box = shapeBox(shape)!;
      const rows = boxSites([0, box[1], 0, box[3]], 1, ny, a);
      const v = shape.vertices.length;
      return grid + rows * v * (1 + Math.log2(v)) + boxSites(box, nx, ny, a);
    }
    default:
      return grid + boxSites(shapeBox(shape)!, nx, ny, a);
  }
}

/**
 * The site mask (1 = cavity) of a shape tree on an nx × ny grid of spacing a (nm).
 * Cost O(Σ bounding-box sites of the primitives); combinators add O(nx·ny) each.
 */
export function rasteriseShape(shape: Shape, nx: number, ny: number, a: number, placement?: SitePlacement): Uint8Array {
  const mask = new Uint8Array(nx * ny);
  const fill = (box: [number, number, number, number], inside: (x: number, y: number) => boolean) => fillWhere(mask, nx, ny, a, box, inside, placement);
  const eps = EDGE_TOLERANCE * a;
  switch (shape.kind) {
    case 'rectangle': {
      const { x0, y0, width, height } = shape;
      fill([x0, y0, x0 + width, y0 + height], (x, y) => x >= x0 - eps && x < x0 + width - eps && y >= y0 - eps && y < y0 + height - eps);
      break;
    }
    case 'disk': {
      const { cx, cy, radius: r } = shape;
      const r2 = (r + eps) * (r + eps);
      fill([cx - r, cy - r, cx + r, cy + r], (x, y) => (x - cx) ** 2 + (y - cy) ** 2 <= r2);
      break;
    }
    case 'ellipse': {
      const { cx, cy, rx, ry } = shape;
      const phi = ((shape.angleDeg ?? 0) * Math.PI) / 180;
      const c = Math.cos(phi);
      const s = Math.sin(phi);
      const reach = Math.max(rx, ry);
      const tol = 1 + 2 * EDGE_TOLERANCE;
      fill([cx - reach, cy - reach, cx + reach, cy + reach], (x, y) => {
        const u = (c * (x - cx) + s * (y - cy)) / rx;
        const v = (-s * (x - cx) + c * (y - cy)) / ry;
        return u * u + v * v <= tol;
      });
      break;
    }
    case 'stadium': {
      const { cx, cy, length, radius: r } = shape;
      const half = length / 2;
      const r2 = (r + eps) * (r + eps);
      fill([cx - half - r, cy - r, cx + half + r, cy + r], (x, y) => {
        const dx = Math.max(0, Math.abs(x - cx) - half);
        return dx * dx + (y - cy) ** 2 <= r2;
      });
      break;
    }
    case 'annulus': {
      const { cx, cy, inner, outer } = shape;
      const o2 = (outer + eps) * (outer + eps);
      const i2 = (inner + eps) * (inner + eps);
      fill([cx - outer, cy - outer, cx + outer, cy + outer], (x, y) => {
        const d2 = (x - cx) ** 2 + (y - cy) ** 2;
        return d2 <= o2 && d2 > i2;
      });
      break;
    }
    case 'polygon':
      if (placement && placement.kind !== 'square') fill(shapeBox(shape)!, (x, y) => insidePolygon(shape.vertices, x, y));
      else fillPolygon(mask, nx, ny, a, shape.vertices);
      break;
    case 'sites':
      for (const [i, j] of shape.list) if (i < nx && j < ny) mask[i * ny + j] = 1;
      break;
    case 'bitmap': {
      const bytes = decodeBase64(shape.data);
      const stride = Math.ceil(shape.width / 8);
      const i0 = shape.i0 ?? 0;
      const j0 = shape.j0 ?? 0;
      for (let r = 0; r < shape.height; r++) {
        for (let c = 0; c < shape.width; c++) {
          const byte = bytes[r * stride + (c >> 3)] ?? 0;
          if ((byte >> (7 - (c & 7))) & 1) {
            const i = i0 + c;
            const j = j0 + r;
            if (i < nx && j < ny) mask[i * ny + j] = 1;
          }
        }
      }
      break;
    }
    case 'union':
      for (const part of shape.of) {
        const m = rasteriseShape(part, nx, ny, a, placement);
        for (let s = 0; s < mask.length; s++) mask[s] |= m[s];
      }
      break;
    case 'subtract': {
      mask.set(rasteriseShape(shape.from, nx, ny, a, placement));
      for (const part of shape.remove) {
        const m = rasteriseShape(part, nx, ny, a, placement);
        for (let s = 0; s < mask.length; s++) if (m[s]) mask[s] = 0;
      }
      break;
    }
  }
  return mask;
}

/** One 4-connected piece of the cavity: its size and its first site in (i, j) order. */
interface CavityComponent {
  size: number;
  firstI: number;
  firstJ: number;
}

/**
 * The connected components of a mask through nearest-neighbour bonds: 4-connected on the
 * square lattice, through the placement's bonds on another. Cost O(nx·ny).
 */
export function connectedComponents(mask: Uint8Array, nx: number, ny: number, placement?: SitePlacement): CavityComponent[] {
  const seen = new Uint8Array(mask.length);
  const stack = new Int32Array(mask.length);
  const parts: CavityComponent[] = [];
  for (let s0 = 0; s0 < mask.length; s0++) {
    if (!mask[s0] || seen[s0]) continue;
    let top = 0;
    let size = 0;
    stack[top++] = s0;
    seen[s0] = 1;
    while (top > 0) {
      const s = stack[--top];
      size++;
      const i = Math.floor(s / ny);
      const j = s - i * ny;
      const push = (t: number) => {
        if (mask[t] && !seen[t]) {
          seen[t] = 1;
          stack[top++] = t;
        }
      };
      if (placement && placement.kind !== 'square') {
        for (const [di, dj] of placement.nearestAll(i, j)) {
          const a = i + di;
          const b = j + dj;
          if (a >= 0 && a < nx && b >= 0 && b < ny) push(a * ny + b);
        }
        continue;
      }
      if (i > 0) push(s - ny);
      if (i < nx - 1) push(s + ny);
      if (j > 0) push(s - 1);
      if (j < ny - 1) push(s + 1);
    }
    parts.push({ size, firstI: Math.floor(s0 / ny), firstJ: s0 % ny });
  }
  return parts;
}

/**
 * Lattice coordinates of a lead's mouth sites, in the order p = 1..W of the
 * transverse modes (increasing j for left/right leads, increasing i for
 * bottom/top), per the contract's "Mouth sites" rule.
 */
export function mouthSites(lead: Pick<Lead, 'side' | 'start' | 'width'>, nx: number, ny: number): { i: Int32Array; j: Int32Array } {
  const i = new Int32Array(lead.width);
  const j = new Int32Array(lead.width);
  for (let p = 0; p < lead.width; p++) {
    const along = lead.start + p;
    switch (lead.side) {
      case 'left':
        i[p] = 0;
        j[p] = along;
        break;
      case 'right':
        i[p] = nx - 1;
        j[p] = along;
        break;
      case 'bottom':
        i[p] = along;
        j[p] = 0;
        break;
      case 'top':
        i[p] = along;
        j[p] = ny - 1;
        break;
    }
  }
  return { i, j };
}
