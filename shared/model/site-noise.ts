/**
 * Deterministic per-site random numbers for the disorder potential: a counter
 * hash of (seed, i, j) rather than a stream, so a site's value does not change
 * when the shape around it is edited, and every platform gives the same bits
 * (only Math.imul and 32-bit shifts are used). The mixing steps are the
 * splitmix/murmur3 finaliser pattern (common practice, no source).
 */

function mix32(h: number): number {
  h ^= h >>> 16;
  h = Math.imul(h, 0x7feb352d);
  h ^= h >>> 15;
  h = Math.imul(h, 0x846ca68b);
  h ^= h >>> 16;
  return h >>> 0;
}

/** A uniform number in [0, 1) for site (i, j) and an integer seed. Cost O(1). */
export function siteUniform(seed: number, i: number, j: number): number {
  let h = mix32((seed >>> 0) ^ 0x9e3779b9);
  h = mix32(h ^ Math.imul(i + 1, 0x85ebca6b));
  h = mix32(h ^ Math.imul(j + 1, 0xc2b2ae35));
  return h / 4294967296;
}
