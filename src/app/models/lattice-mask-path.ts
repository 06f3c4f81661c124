/**
 * The cavity mask as SVG path data: one rectangle per horizontal run of cavity sites,
 * so a 500×500 disk is about 500 sub-paths in one element instead of 200 000 nodes.
 * Site (i, j) is the unit square [i, i+1) × [ny−1−j, ny−j) in SVG coordinates (row 0
 * at the bottom, as in the model). Mask index i·ny + j, as shared/model/geometry.ts.
 * Cost O(nx·ny) time, output O(number of runs).
 */
export function maskPath(mask: Uint8Array, nx: number, ny: number): string {
  const parts: string[] = [];
  for (let j = 0; j < ny; j++) {
    const y = ny - 1 - j;
    let i = 0;
    while (i < nx) {
      if (!mask[i * ny + j]) {
        i++;
        continue;
      }
      const start = i;
      while (i < nx && mask[i * ny + j]) i++;
      parts.push(`M${start} ${y}h${i - start}v1h${start - i}z`);
    }
  }
  return parts.join('');
}

/** Number of cavity sites (set entries) in a mask. */
export function countSites(mask: Uint8Array): number {
  let n = 0;
  for (let s = 0; s < mask.length; s++) n += mask[s] ? 1 : 0;
  return n;
}
