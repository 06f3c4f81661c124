import { PNG } from 'pngjs';
import { ApiError } from '../http/error-handler.js';

export interface BitmapMask {
  shape: { kind: 'bitmap'; width: number; height: number; data: string };
  grid: { nx: number; ny: number };
  siteCount: number;
}

/** Drawings larger than this are refused before decoding (pixels). */
const MAX_PIXELS = 4096 * 4096;

/**
 * Turns a drawn outline (PNG, dark = inside the cavity) into a lattice mask at
 * spacing a: the drawing is `widthNm` wide, and each site samples the pixel
 * under its centre. Dark means luminance below half and alpha above half.
 * Rows are packed bottom row first, most significant bit = leftmost site, as
 * the model document's bitmap shape expects. Cost O(nx·ny).
 */
export function maskFromBitmap(file: Buffer, spacingNm: number, widthNm: number, maxSites: number): BitmapMask {
  let png: PNG;
  try {
    png = PNG.sync.read(file);
  } catch {
    throw new ApiError(400, 'validation_failed', 'The uploaded file is not a readable PNG image.', [
      { path: 'file', message: 'not a PNG image' },
    ]);
  }
  if (png.width * png.height > MAX_PIXELS) {
    throw new ApiError(400, 'validation_failed', `The drawing is ${png.width}×${png.height} pixels; at most 4096×4096 are accepted.`, [
      { path: 'file', message: 'image too large' },
    ]);
  }
  const nx = Math.round(widthNm / spacingNm);
  const ny = Math.round((widthNm * png.height) / png.width / spacingNm);
  if (nx < 3 || ny < 3) {
    throw new ApiError(400, 'validation_failed', `At ${spacingNm} nm spacing a ${widthNm} nm wide drawing gives a ${nx}×${ny} grid; it needs at least 3×3 sites.`, [
      { path: 'widthNm', message: 'too small for this spacing' },
    ]);
  }
  if (nx * ny > maxSites * 2.5) {
    throw new ApiError(400, 'validation_failed', `A ${nx}×${ny} grid is too large; use a coarser spacing or a smaller width.`, [
      { path: 'spacingNm', message: 'grid too large' },
    ]);
  }
  const rowBytes = Math.ceil(nx / 8);
  const bytes = new Uint8Array(rowBytes * ny);
  let siteCount = 0;
  for (let j = 0; j < ny; j++) {
    const py = Math.min(png.height - 1, Math.floor(png.height - ((j + 0.5) * png.height) / ny));
    for (let i = 0; i < nx; i++) {
      const px = Math.min(png.width - 1, Math.floor(((i + 0.5) * png.width) / nx));
      const o = 4 * (py * png.width + px);
      const lum = 0.299 * png.data[o] + 0.587 * png.data[o + 1] + 0.114 * png.data[o + 2];
      if (lum < 128 && png.data[o + 3] > 127) {
        bytes[j * rowBytes + (i >> 3)] |= 0x80 >> (i & 7);
        siteCount++;
      }
    }
  }
  if (siteCount === 0) {
    throw new ApiError(400, 'validation_failed', 'The drawing has no dark pixels: draw the cavity in black on a white background.', [
      { path: 'file', message: 'no cavity drawn' },
    ]);
  }
  return {
    shape: { kind: 'bitmap', width: nx, height: ny, data: Buffer.from(bytes).toString('base64') },
    grid: { nx, ny },
    siteCount,
  };
}
