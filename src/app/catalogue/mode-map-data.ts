/**
 * Decoding and geometry of the mode maps the API sends (docs/api.md, "Mode maps"):
 * per-site arrays as base64 float32 in lexicographic (i, j) site order, the cavity as a
 * bitset over the grid. Pure functions, so the view (mode-map-view.ts) only draws.
 * Sites sit where their lattice puts them (shared/model/lattice-geometry.ts): (i·a, j·a) on
 * the square lattice, (i·Δx, j·Δy + a_CC/2 on odd i + j) on the honeycomb, Δx = (√3/2)a_CC,
 * Δy = (3/2)a_CC. Drawing coordinates are nm with y pointing down: X = x, Y = (ny − 1)·Δy − y.
 */
import type { ModeMapPayload } from '../../../shared/api/mode-maps';
import { placementOf, type LatticeKind } from '../../../shared/model/lattice-geometry';

type HusimiPayload = NonNullable<ModeMapPayload['husimi']>;

/** A decoded map: sites, |ψ|², phase, current vectors, optional LDOS and Husimi data. */
export interface ModeMapField {
  nx: number;
  ny: number;
  lattice: LatticeKind;
  /** The lattice length (nm): a, or a_CC. */
  a: number;
  /** Column and row pitch (nm): a and a on the square lattice. */
  dx: number;
  dy: number;
  /** Position of each site (nm, y up). */
  x: Float32Array;
  y: Float32Array;
  /** Grid index i·ny + j → site index, −1 outside. */
  siteOf: Int32Array;
  i: Int32Array;
  j: Int32Array;
  density: Float32Array;
  phase: Float32Array;
  jx: Float32Array;
  jy: Float32Array;
  ldos: Float32Array | null;
  husimi: HusimiField | null;
}

/** Which valley of a honeycomb map is shown: one of them, or their sum. */
export type ValleyChoice = 'both' | 'K' | 'K′';

export interface HusimiField {
  x: Float32Array;
  y: Float32Array;
  directions: number[];
  /** P per point × direction (on the honeycomb: of the chosen valley, or of both). */
  distribution: Float32Array;
  peaks: { point: number; angle: number; share: number }[];
  /** Mean P per point over the largest mean. */
  strength: Float32Array;
  maxP: number;
  /** Honeycomb only: the valley shown, valley K's share per point (NaN where empty) and the number of empty points. */
  valley: ValleyChoice | null;
  valleyShare: Float32Array | null;
  emptyPoints: number;
}

function float32FromBase64(b64: string): Float32Array {
  const bin = atob(b64);
  const bytes = new Uint8Array(bin.length);
  for (let k = 0; k < bin.length; k++) bytes[k] = bin.charCodeAt(k);
  return new Float32Array(bytes.buffer);
}

export function decodeModeMap(p: ModeMapPayload, husimi: HusimiPayload | null = p.husimi, valley: ValleyChoice = 'both'): ModeMapField {
  const { nx, ny } = p.grid;
  const bin = atob(p.mask);
  const siteOf = new Int32Array(nx * ny).fill(-1);
  const is: number[] = [];
  const js: number[] = [];
  for (let k = 0; k < nx * ny; k++) {
    if (bin.charCodeAt(k >> 3) & (0x80 >> (k & 7))) {
      siteOf[k] = is.length;
      is.push(Math.floor(k / ny));
      js.push(k % ny);
    }
  }
  const n = is.length;
  const psi = float32FromBase64(p.psi);
  const vec = float32FromBase64(p.vectors);
  if (psi.length !== 2 * n || vec.length !== 2 * n) throw new Error(`the map has ${psi.length / 2} values for ${n} cavity sites`);
  const density = new Float32Array(n);
  const phase = new Float32Array(n);
  const jx = new Float32Array(n);
  const jy = new Float32Array(n);
  for (let s = 0; s < n; s++) {
    density[s] = psi[2 * s] ** 2 + psi[2 * s + 1] ** 2;
    phase[s] = Math.atan2(psi[2 * s + 1], psi[2 * s]);
    jx[s] = vec[2 * s];
    jy[s] = vec[2 * s + 1];
  }
  const lattice = p.lattice ?? 'square';
  const place = placementOf(lattice, p.spacingNm);
  return {
    nx,
    ny,
    lattice,
    a: p.spacingNm,
    dx: place.dx,
    dy: place.dy,
    x: Float32Array.from(is, (i, s) => place.x(i, js[s])),
    y: Float32Array.from(js, (j, s) => place.y(is[s], j)),
    siteOf,
    i: Int32Array.from(is),
    j: Int32Array.from(js),
    density,
    phase,
    jx,
    jy,
    ldos: p.ldos ? float32FromBase64(p.ldos) : null,
    husimi: husimi ? decodeHusimi(husimi, valley) : null,
  };
}

function decodeHusimi(h: HusimiPayload, valley: ValleyChoice): HusimiField {
  const pts = float32FromBase64(h.points);
  // On the honeycomb the top level is the sum of the valleys; one valley is drawn from its own rows and peaks.
  const one = h.valleys && valley !== 'both' ? h.valleys.find((v) => v.name === valley) : undefined;
  const count = pts.length / 2;
  const x = new Float32Array(count);
  const y = new Float32Array(count);
  for (let p = 0; p < count; p++) {
    x[p] = pts[2 * p];
    y[p] = pts[2 * p + 1];
  }
  const distribution = float32FromBase64(one ? one.distribution : h.distribution);
  const m = h.directions.length;
  const mean = new Float32Array(count);
  let maxMean = 0;
  let maxP = 0;
  for (let p = 0; p < count; p++) {
    let s = 0;
    for (let d = 0; d < m; d++) {
      s += distribution[p * m + d];
      maxP = Math.max(maxP, distribution[p * m + d]);
    }
    mean[p] = s / m;
    maxMean = Math.max(maxMean, mean[p]);
  }
  for (let p = 0; p < count; p++) mean[p] = maxMean > 0 ? mean[p] / maxMean : 0;
  const carrier = h.carrier ? float32FromBase64(h.carrier) : null;
  return {
    x,
    y,
    directions: h.directions,
    distribution,
    peaks: one ? one.peaks : h.peaks,
    strength: mean,
    maxP,
    valley: h.valleys ? valley : null,
    valleyShare: h.valleyShare ? float32FromBase64(h.valleyShare) : null,
    emptyPoints: carrier ? carrier.filter((c) => c === 0).length : 0,
  };
}

/** Drawing Y (nm, down) of a lattice y (nm, up). */
export function drawY(f: Pick<ModeMapField, 'ny' | 'dy'>, y: number): number {
  return (f.ny - 1) * f.dy - y;
}

interface Arrow {
  x: number;
  y: number;
  /** Direction (unit, drawing coordinates) and relative length 0..1. */
  ux: number;
  uy: number;
  length: number;
}

/**
 * Current arrows on blocks of `stride` columns × `strideY` rows of sites (the mean vector
 * of the block's sites, drawn at the mean position of those sites), relative to the
 * largest block; blocks below 3 % of it are left out.
 */
export function currentArrows(f: ModeMapField, stride: number, strideY = stride): Arrow[] {
  const s = Math.max(1, Math.round(stride));
  const t = Math.max(1, Math.round(strideY));
  const bx = Math.ceil(f.nx / s);
  const by = Math.ceil(f.ny / t);
  const sumX = new Float64Array(bx * by);
  const sumY = new Float64Array(bx * by);
  const cnt = new Int32Array(bx * by);
  const cx = new Float64Array(bx * by);
  const cy = new Float64Array(bx * by);
  for (let k = 0; k < f.i.length; k++) {
    const b = Math.floor(f.i[k] / s) * by + Math.floor(f.j[k] / t);
    sumX[b] += f.jx[k];
    sumY[b] += f.jy[k];
    cx[b] += f.x[k];
    cy[b] += f.y[k];
    cnt[b]++;
  }
  let max = 0;
  for (let b = 0; b < bx * by; b++) if (cnt[b]) max = Math.max(max, Math.hypot(sumX[b], sumY[b]) / cnt[b]);
  const out: Arrow[] = [];
  if (!(max > 0)) return out;
  for (let b = 0; b < bx * by; b++) {
    if (!cnt[b]) continue;
    const vx = sumX[b] / cnt[b];
    const vy = sumY[b] / cnt[b];
    const len = Math.hypot(vx, vy) / max;
    if (len < 0.03) continue;
    out.push({ x: cx[b] / cnt[b], y: drawY(f, cy[b] / cnt[b]), ux: vx / Math.hypot(vx, vy), uy: -vy / Math.hypot(vx, vy), length: len });
  }
  return out;
}

/** A round length (1, 2 or 5 × 10^k nm) close to a fifth of the visible width, for the scale bar. */
export function scaleBarLength(visibleWidthNm: number): number {
  const target = visibleWidthNm / 5;
  const p = 10 ** Math.floor(Math.log10(target));
  for (const m of [5, 2, 1]) if (m * p <= target) return m * p;
  return p;
}

/**
 * Fill of a honeycomb glyph by valley K's share: orange (K) through grey to blue (K′), two
 * colours told apart with the common colour-vision deficiencies; null for an empty point.
 */
export function valleyColour(share: number): string | null {
  if (!Number.isFinite(share)) return null;
  const k = [254, 97, 0];
  const k2 = [100, 143, 255];
  const mix = k.map((c, n) => Math.round(c * share + k2[n] * (1 - share)));
  return `rgb(${mix[0]},${mix[1]},${mix[2]})`;
}

/** SVG path of a polar glyph: radius ∝ P(θ)/maxP around (x, y) in drawing coordinates. */
export function glyphPath(h: HusimiField, point: number, x: number, y: number, radius: number): string {
  const m = h.directions.length;
  const parts: string[] = [];
  for (let d = 0; d < m; d++) {
    const r = (radius * h.distribution[point * m + d]) / (h.maxP || 1);
    const th = h.directions[d];
    parts.push(`${d ? 'L' : 'M'}${(x + r * Math.cos(th)).toFixed(2)},${(y - r * Math.sin(th)).toFixed(2)}`);
  }
  return parts.join('') + 'Z';
}
