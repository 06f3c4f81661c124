import { PNG } from 'pngjs';
import { ApiError } from '../http/error-handler.js';
import { readPngHeader } from './png-header.js';
import type { BitmapMask } from '../../shared/api/models.js';

export type { BitmapMask } from '../../shared/api/models.js';

/** Largest side of a drawing accepted (pixels); larger ones are refused before decoding. */
const MAX_DRAWING_SIDE = 4096;
/** Largest drawing accepted (pixels): 4096×4096 decodes to 64 MiB of RGBA. */
const MAX_DRAWING_PIXELS = MAX_DRAWING_SIDE * MAX_DRAWING_SIDE;

/**
 * Checks a drawing's header without decoding it: 415 when it is not a PNG, 413 when
 * its declared size is above the caps (a small file can declare 20000×20000 pixels and
 * inflate to gigabytes). Cost O(1), so it runs on the API thread before the upload
 * goes to a compute thread.
 */
export function checkDrawingHeader(file: Uint8Array): { width: number; height: number } {
  const header = readPngHeader(file);
  if (!header) {
    throw new ApiError(415, 'unsupported_media_type', 'The uploaded file is not a PNG image (its first bytes are not the PNG signature).', [
      { path: 'file', message: 'not a PNG image' },
    ]);
  }
  const { width, height } = header;
  if (width === 0 || height === 0) {
    throw new ApiError(400, 'validation_failed', `The PNG declares a ${width}×${height} image; it has no pixels.`, [{ path: 'file', message: 'empty image' }]);
  }
  if (width > MAX_DRAWING_SIDE || height > MAX_DRAWING_SIDE || width * height > MAX_DRAWING_PIXELS) {
    throw new ApiError(
      413,
      'image_too_large',
      `The drawing is ${width}×${height} pixels; at most ${MAX_DRAWING_SIDE}×${MAX_DRAWING_SIDE} are accepted. Scale it down and upload it again.`,
      [{ path: 'file', message: `image larger than ${MAX_DRAWING_SIDE}×${MAX_DRAWING_SIDE} pixels` }],
    );
  }
  return header;
}

/**
 * Turns a drawn outline (PNG, dark = inside the cavity) into a lattice mask at
 * spacing a: the drawing is `widthNm` wide, and each site samples the pixel
 * under its centre. Dark means luminance below half and alpha above half.
 * Rows are packed bottom row first, most significant bit = leftmost site, as
 * the model document's bitmap shape expects. The header is checked before
 * decoding. Cost O(pixels + nx·ny); runs in a compute thread.
 */
export function maskFromBitmap(file: Buffer, spacingNm: number, widthNm: number, maxSites: number): BitmapMask {
  const header = checkDrawingHeader(file);
  const nx = Math.round(widthNm / spacingNm);
  const ny = Math.round((widthNm * header.height) / header.width / spacingNm);
  if (nx < 3 || ny < 3) {
    throw new ApiError(
      400,
      'validation_failed',
      `At ${spacingNm} nm spacing a ${widthNm} nm wide drawing gives a ${nx}×${ny} grid; it needs at least 3×3 sites.`,
      [{ path: 'widthNm', message: 'too small for this spacing' }],
    );
  }
  if (nx * ny > maxSites * 2.5) {
    throw new ApiError(400, 'validation_failed', `A ${nx}×${ny} grid is too large; use a coarser spacing or a smaller width.`, [
      { path: 'spacingNm', message: 'grid too large' },
    ]);
  }
  let png: PNG;
  try {
    png = PNG.sync.read(file);
  } catch {
    throw new ApiError(400, 'validation_failed', 'The uploaded file is not a readable PNG image (it is damaged or truncated).', [
      { path: 'file', message: 'not a readable PNG image' },
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
