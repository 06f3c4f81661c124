import { PNG } from 'pngjs';

/** Where a mode lives on the lattice: its sites and the grid they sit on. */
export interface ModeLattice {
  nx: number;
  ny: number;
  /** Column i and row j of each unknown, in the order of the mode vector. */
  i: ArrayLike<number>;
  j: ArrayLike<number>;
  /** The lattice the labels are on (absent: square); the honeycomb's atoms are drawn where they sit. */
  kind?: 'square' | 'honeycomb';
}

/**
 * Where grid site (i, j) is drawn, in units of the lattice length, and the size of the block
 * each site fills: the square lattice's unit squares, or on the honeycomb (shared/model/
 * lattice-geometry.ts) x = i·√3/2, y = 1.5·j (+ ½ on sublattice B) with blocks of one column
 * pitch √3/2 by 2 (a row pitch and a half a_CC) above and right of the atom (every atom one block).
 */
function drawing(lattice: ModeLattice): { width: number; height: number; block: [number, number]; at: (i: number, j: number) => [number, number] } {
  if (lattice.kind !== 'honeycomb') return { width: lattice.nx, height: lattice.ny, block: [1, 1], at: (i, j) => [i, j] };
  const dx = Math.sqrt(3) / 2;
  const dy = 1.5;
  // Blocks half an a_CC taller than the row pitch, so that the two heights of a row's atoms leave no seam.
  return {
    width: lattice.nx * dx,
    height: lattice.ny * dy + 1,
    block: [dx, dy + 0.5],
    at: (i, j) => [i * dx, j * dy + (((i + j) & 1) === 1 ? 0.5 : 0)],
  };
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
  const d = drawing(lattice);
  // Pixels per lattice length: whole pixels per site on the square lattice, as before.
  const square = lattice.kind !== 'honeycomb';
  const scale = square ? Math.max(1, Math.floor(options.maxSide / Math.max(lattice.nx, lattice.ny))) : Math.max(1, options.maxSide / Math.max(d.width, d.height));
  const width = Math.max(1, Math.round(d.width * scale));
  const height = Math.max(1, Math.round(d.height * scale));
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
    const dens = psi[2 * s] ** 2 + psi[2 * s + 1] ** 2;
    if (dens > maxDensity) maxDensity = dens;
  }
  const rgb: [number, number, number] = [0, 0, 0];
  const bw = Math.max(1, Math.round(d.block[0] * scale));
  const bh = Math.max(1, Math.round(d.block[1] * scale));
  for (let s = 0; s < n; s++) {
    const re = psi[2 * s];
    const im = psi[2 * s + 1];
    const value = maxDensity > 0 ? Math.sqrt((re * re + im * im) / maxDensity) : 0;
    phaseColour(Math.atan2(im, re), value, rgb);
    const [cx, cy] = d.at(lattice.i[s], lattice.j[s]);
    // Row j = 0 at the bottom: image rows count down from the top.
    const x0 = square ? cx * scale : Math.round(cx * scale);
    const y0 = square ? (lattice.ny - 1 - cy) * scale : Math.round((d.height - cy - d.block[1]) * scale);
    for (let dy = 0; dy < bh; dy++) {
      const y = y0 + dy;
      if (y < 0 || y >= height) continue;
      for (let dx = 0; dx < bw; dx++) {
        const x = x0 + dx;
        if (x < 0 || x >= width) continue;
        const p = 4 * (y * width + x);
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
