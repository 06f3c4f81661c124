/** The 8 bytes every PNG file starts with (PNG specification, ISO/IEC 15948, 5.2). */
const SIGNATURE = [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a];

interface PngHeader {
  width: number;
  height: number;
}

/**
 * Reads the image size from a PNG's IHDR chunk, which the specification puts first
 * (ISO/IEC 15948, 5.6): signature, then length 13, "IHDR", width and height as
 * big-endian 32-bit integers. Returns null when the bytes are not a PNG. Cost O(1):
 * nothing is decompressed, so a drawing can be refused for its size before decoding.
 */
export function readPngHeader(file: Uint8Array): PngHeader | null {
  if (file.length < 24) return null;
  for (let k = 0; k < 8; k++) if (file[k] !== SIGNATURE[k]) return null;
  const view = new DataView(file.buffer, file.byteOffset, file.byteLength);
  const type = String.fromCharCode(file[12], file[13], file[14], file[15]);
  if (type !== 'IHDR') return null;
  return { width: view.getUint32(16), height: view.getUint32(20) };
}
