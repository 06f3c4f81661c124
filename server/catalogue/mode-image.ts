import { PNG } from 'pngjs';

/** Where a mode lives on the lattice: its sites and the grid they sit on. */
export interface ModeLattice {
  nx: number;
  ny: number;
  /** Column i and row j of each unknown, in the order of the mode vector. */
  i: ArrayLike<number>;
  j: ArrayLike<number>;
}

interface ModeImageOptions {
  /** Longest side of the image in pixels; each site becomes a square of whole pixels. */
  maxSide: number;
}

/** Colour of grid points outside the cavity (a neutral grey, distinct from zero density, which is black). */
const OUTSIDE_RGB: readonly [number, number, number] = [206, 210, 214];

/**
 * Renders a mode ψ (interleaved re, im) as a PNG: brightness is sqrt(|ψ|²/max|ψ|²)
 * (the square root keeps weak lobes visible) and the hue is the phase arg ψ,
 * hue 0° (red) at phase 0 going round through yellow, green, cyan, blue, magenta.
 * Row j = 0 (y = 0) is drawn at the bottom, as on the lattice preview.
 * Cost: O(sites · pixels per site).
 */
export function renderModePng(lattice: ModeLattice, psi: Float64Array, options: ModeImageOptions): Buffer {
  const { nx, ny } = lattice;
  const scale = Math.max(1, Math.floor(options.maxSide / Math.max(nx, ny)));
  const width = nx * scale;
  const height = ny * scale;
  const png = new PNG({ width, height });
  const data = png.data;
  for (let p = 0; p < width * height; p++) {
    data[4 * p] = OUTSIDE_RGB[0];
    data[4 * p + 1] = OUTSIDE_RGB[1];
    data[4 * p + 2] = OUTSIDE_RGB[2];
    data[4 * p + 3] = 255;
  }
  const n = lattice.i.length;
  let maxDensity = 0;
  for (let s = 0; s < n; s++) {
    const d = psi[2 * s] ** 2 + psi[2 * s + 1] ** 2;
    if (d > maxDensity) maxDensity = d;
  }
  const rgb: [number, number, number] = [0, 0, 0];
  for (let s = 0; s < n; s++) {
    const re = psi[2 * s];
    const im = psi[2 * s + 1];
    const value = maxDensity > 0 ? Math.sqrt((re * re + im * im) / maxDensity) : 0;
    phaseColour(Math.atan2(im, re), value, rgb);
    const x0 = lattice.i[s] * scale;
    const y0 = (ny - 1 - lattice.j[s]) * scale;
    for (let dy = 0; dy < scale; dy++) {
      let p = 4 * ((y0 + dy) * width + x0);
      for (let dx = 0; dx < scale; dx++, p += 4) {
        data[p] = rgb[0];
        data[p + 1] = rgb[1];
        data[p + 2] = rgb[2];
      }
    }
  }
  return PNG.sync.write(png);
}

/**
 * HSV → RGB with full saturation: hue from the phase (radians, any range), value in [0, 1].
 * The same mapping is drawn as the legend in the client (catalogue/phase-legend).
 */
function phaseColour(phase: number, value: number, out: [number, number, number]): void {
  const turns = phase / (2 * Math.PI);
  const h = (turns - Math.floor(turns)) * 6;
  const sector = Math.floor(h) % 6;
  const f = h - Math.floor(h);
  const v = Math.round(255 * Math.min(1, Math.max(0, value)));
  const q = Math.round(v * (1 - f));
  const t = Math.round(v * f);
  switch (sector) {
    case 0: out[0] = v; out[1] = t; out[2] = 0; break;
    case 1: out[0] = q; out[1] = v; out[2] = 0; break;
    case 2: out[0] = 0; out[1] = v; out[2] = t; break;
    case 3: out[0] = 0; out[1] = q; out[2] = v; break;
    case 4: out[0] = t; out[1] = 0; out[2] = v; break;
    default: out[0] = v; out[1] = 0; out[2] = q; break;
  }
}
