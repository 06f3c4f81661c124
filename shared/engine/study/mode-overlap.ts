/**
 * Overlap of two modes that may come from different models: a swept dimension or
 * a roughened edge changes the site set, and a swept field changes the gauge
 * picture of the same physical state. Both modes are first written in the
 * symmetric gauge about the grid's centre (c = ((nx−1)/2, (ny−1)/2)): the engine's
 * Landau gauge A = (−B·y, 0) and the symmetric one A = (B/2)(−(y−y_c), x−x_c)
 * differ by ∇f with f = −B(x−x_c)(y+y_c)/2, so ψ_sym = e^{−iπφ(i−i_c)(j+j_c)}·ψ_Landau
 * (φ the flux per plaquette; docs/physics-model.md, "Gauge"). Without this, a mode
 * at B and the same mode at B + ΔB differ by a phase ramp of ΔB·y_c along x, and
 * Newton from it mixes symmetry classes that a field sweep keeps apart.
 * Overlap = |Σ_s conj(a_s)·b_s| / (‖a‖‖b‖) over the lattice positions both hold:
 * 1 for the same mode, 0 for orthogonal ones. Cost O(n).
 */

/** The sites of a step: column i and row j of each unknown, the grid, and the flux per plaquette. */
export interface SiteList {
  i: Int32Array;
  j: Int32Array;
  nx: number;
  ny: number;
  flux: number;
  /**
   * Off the square lattice (the honeycomb), where (i, j) are labels, not positions: each site's
   * position (nm), the grid's centre (nm) and the flux per nm², B/Φ0 with the sign of `flux`.
   */
  positions?: { x: Float64Array; y: Float64Array; xc: number; yc: number; perNm2: number };
}

/**
 * Phase taking the engine's Landau gauge to the symmetric gauge about the grid's centre, at
 * site s: −π(B/Φ0)(x − x_c)(y + y_c), which on the square lattice (x = i·a) is
 * −πφ(i − i_c)(j + j_c); the honeycomb's Peierls phases come from the same Landau gauge
 * (tight-binding.ts), so the same function with the atoms' positions applies there.
 */
function symmetricGaugePhase(sites: SiteList, s: number): number {
  if (sites.flux === 0) return 0;
  const p = sites.positions;
  if (p) return -Math.PI * p.perNm2 * (p.x[s] - p.xc) * (p.y[s] + p.yc);
  return -Math.PI * sites.flux * (sites.i[s] - (sites.nx - 1) / 2) * (sites.j[s] + (sites.ny - 1) / 2);
}

/** The mode in the symmetric gauge about the grid's centre (a new array). */
export function inSymmetricGauge(mode: ArrayLike<number>, sites: SiteList, inverse = false): Float64Array {
  const out = new Float64Array(2 * sites.i.length);
  for (let s = 0; s < sites.i.length; s++) {
    const g = (inverse ? -1 : 1) * symmetricGaugePhase(sites, s);
    const c = Math.cos(g),
      d = Math.sin(g),
      re = mode[2 * s],
      im = mode[2 * s + 1];
    out[2 * s] = c * re - d * im;
    out[2 * s + 1] = d * re + c * im;
  }
  return out;
}

function siteKey(i: number, j: number): number {
  return i * 100_003 + j;
}

/**
 * The mode moved onto other sites (same lattice positions; sites missing there
 * are dropped, new ones start at 0) and into the other model's Landau gauge.
 */
export function moveMode(mode: ArrayLike<number>, from: SiteList, to: SiteList): Float64Array {
  const sym = inSymmetricGauge(mode, from);
  const moved = new Float64Array(2 * to.i.length);
  const index = new Map<number, number>();
  for (let s = 0; s < to.i.length; s++) index.set(siteKey(to.i[s], to.j[s]), s);
  for (let s = 0; s < from.i.length; s++) {
    const t = index.get(siteKey(from.i[s], from.j[s]));
    if (t === undefined) continue;
    moved[2 * t] = sym[2 * s];
    moved[2 * t + 1] = sym[2 * s + 1];
  }
  return inSymmetricGauge(moved, to, true);
}

export function modeOverlap(a: ArrayLike<number>, sitesA: SiteList, b: ArrayLike<number>, sitesB: SiteList): number {
  const moved = moveMode(a, sitesA, sitesB);
  let re = 0;
  let im = 0;
  let na = 0;
  let nb = 0;
  for (let s = 0; s < sitesA.i.length; s++) na += a[2 * s] ** 2 + a[2 * s + 1] ** 2;
  for (let s = 0; s < sitesB.i.length; s++) {
    const ar = moved[2 * s],
      ai = moved[2 * s + 1],
      br = b[2 * s],
      bi = b[2 * s + 1];
    nb += br * br + bi * bi;
    re += ar * br + ai * bi;
    im += ar * bi - ai * br;
  }
  if (!(na > 0) || !(nb > 0)) return 0;
  return Math.hypot(re, im) / Math.sqrt(na * nb);
}
