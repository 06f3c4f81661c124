/**
 * Semi-infinite, field-free, hard-walled leads (docs/physics-model.md, "Leads").
 * Transverse modes on the W mouth sites p = 1..W:
 *   χ_m(p) = sqrt(2/(W+1))·sin(mπp/(W+1)),  ε_m = V_L + 4t − 2t·cos(mπ/(W+1)).
 * Channel m is open for ε_m − 2t < E < ε_m + 2t. With w = (ε_m − z)/(2t), λ_m
 * solves λ² − 2wλ + 1 = 0 and the self-energy on the mouth is
 *   Σ(z)[p,p'] = e^{−iθ_p} Σ_m χ_m(p)(−t λ_m)χ_m(p') e^{iθ_p'},
 *   dΣ/dz     = e^{−iθ_p} Σ_m χ_m(p) λ_m²/(λ_m² − 1) χ_m(p') e^{iθ_p'}.
 * (dλ/dz = −λ²/(t(λ² − 1)) from differentiating the quadratic, so −t dλ/dz is
 * exactly the contract's factor; tests/engine/leads.test.ts checks it by finite
 * differences.) Energies in meV.
 */
import type { LeadSide } from '../model/cavity-model';

/** Transverse modes of a lead of width W: chi[(m−1)·W + (p−1)], energies[m−1] = ε_m. */
export interface LeadChannels {
  width: number;
  hopping: number;
  offset: number;
  chi: Float64Array;
  energies: Float64Array;
}

/** Modes and channel energies of a lead. Cost O(W²). */
export function leadChannels(width: number, hopping: number, offset: number): LeadChannels {
  const chi = new Float64Array(width * width);
  const energies = new Float64Array(width);
  const norm = Math.sqrt(2 / (width + 1));
  for (let m = 1; m <= width; m++) {
    energies[m - 1] = offset + 4 * hopping - 2 * hopping * Math.cos((m * Math.PI) / (width + 1));
    for (let p = 1; p <= width; p++) chi[(m - 1) * width + (p - 1)] = norm * Math.sin((m * p * Math.PI) / (width + 1));
  }
  return { width, hopping, offset, chi, energies };
}

/** Open/closed flag of each channel at a real energy: open iff ε_m − 2t < E < ε_m + 2t (strict). */
export function channelFlags(ch: LeadChannels, reE: number): boolean[] {
  const t = ch.hopping;
  return Array.from(ch.energies, (e) => reE > e - 2 * t && reE < e + 2 * t);
}

// Principal square root into a two-slot scratch, no allocation in the hot loop.
const root = new Float64Array(2);
function sqrtInto(re: number, im: number): void {
  const r = Math.hypot(re, im);
  if (r === 0) {
    root[0] = 0;
    root[1] = 0;
    return;
  }
  if (re >= 0) {
    const s = Math.sqrt((r + re) / 2);
    root[0] = s;
    root[1] = im / (2 * s);
  } else {
    const s = Math.sqrt((r - re) / 2);
    root[0] = Math.abs(im) / (2 * s);
    root[1] = im < 0 ? -s : s;
  }
}

/**
 * λ_m(z) on the sheet given by `open` (contract's sheet rule), written to
 * out[2k], out[2k+1]. Open: λ = w + i·sqrt(1 − w²); closed: λ = w − sqrt(w−1)·sqrt(w+1),
 * principal roots, w = (ε − z)/(2t). Cost O(1).
 */
export function channelLambda(zRe: number, zIm: number, eps: number, t: number, open: boolean, out: Float64Array, k: number): void {
  const wr = (eps - zRe) / (2 * t);
  const wi = -zIm / (2 * t);
  if (open) {
    sqrtInto(1 - (wr * wr - wi * wi), -2 * wr * wi);
    // i·sqrt(...) = (−im, re)
    out[2 * k] = wr - root[1];
    out[2 * k + 1] = wi + root[0];
  } else {
    sqrtInto(wr - 1, wi);
    const ar = root[0];
    const ai = root[1];
    sqrtInto(wr + 1, wi);
    out[2 * k] = wr - (ar * root[0] - ai * root[1]);
    out[2 * k + 1] = wi - (ar * root[1] + ai * root[0]);
  }
}

/** Self-energy coefficients c_m = −t·λ_m of every channel (interleaved, length 2W). */
export function selfEnergyCoefficients(ch: LeadChannels, zRe: number, zIm: number, flags: readonly boolean[], out: Float64Array): void {
  const t = ch.hopping;
  for (let m = 0; m < ch.width; m++) {
    channelLambda(zRe, zIm, ch.energies[m], t, flags[m], out, m);
    out[2 * m] *= -t;
    out[2 * m + 1] *= -t;
  }
}

/** dΣ/dz coefficients λ_m²/(λ_m² − 1) of every channel (interleaved, length 2W). */
export function selfEnergyDerivativeCoefficients(ch: LeadChannels, zRe: number, zIm: number, flags: readonly boolean[], out: Float64Array): void {
  for (let m = 0; m < ch.width; m++) {
    channelLambda(zRe, zIm, ch.energies[m], ch.hopping, flags[m], out, m);
    const lr = out[2 * m];
    const li = out[2 * m + 1];
    const sr = lr * lr - li * li;
    const si = 2 * lr * li;
    const dr = sr - 1;
    const den = dr * dr + si * si;
    out[2 * m] = (sr * dr + si * si) / den;
    out[2 * m + 1] = (si * dr - sr * si) / den;
  }
}

/**
 * Mouth phases θ_p of the lead-cavity bonds that leave the mouth plaquettes free
 * of flux: top/bottom lead with mouth row j0: θ_p = −2πφ·j0·i_p; left/right: 0.
 */
export function mouthPhases(side: LeadSide, mouthI: Int32Array, mouthJ: Int32Array, flux: number): Float64Array {
  const theta = new Float64Array(mouthI.length);
  if (side === 'top' || side === 'bottom') {
    for (let p = 0; p < mouthI.length; p++) theta[p] = -2 * Math.PI * flux * mouthJ[p] * mouthI[p];
  }
  return theta;
}

/**
 * The dense W×W mouth block B[p,p'] = e^{−iθ_p} Σ_m χ_m(p)·coef_m·χ_m(p') e^{iθ_p'}
 * (row-major, interleaved). With coef = −tλ it is Σ, with λ²/(λ²−1) it is dΣ/dz.
 * Cost O(W³).
 */
export function mouthBlock(ch: LeadChannels, theta: Float64Array, coef: Float64Array, out: Float64Array): Float64Array {
  const w = ch.width;
  const chi = ch.chi;
  for (let p = 0; p < w; p++) {
    for (let q = p; q < w; q++) {
      let re = 0;
      let im = 0;
      for (let m = 0; m < w; m++) {
        const xx = chi[m * w + p] * chi[m * w + q];
        re += xx * coef[2 * m];
        im += xx * coef[2 * m + 1];
      }
      // Σ0 is complex symmetric; the phases make Σ[p,q] = e^{i(θ_q − θ_p)}Σ0[p,q].
      const d = theta[q] - theta[p];
      const c = Math.cos(d);
      const s = Math.sin(d);
      out[2 * (p * w + q)] = re * c - im * s;
      out[2 * (p * w + q) + 1] = re * s + im * c;
      if (q !== p) {
        out[2 * (q * w + p)] = re * c + im * s;
        out[2 * (q * w + p) + 1] = im * c - re * s;
      }
    }
  }
  return out;
}

/** All thresholds ε_m ± 2t of one lead (unsorted). */
export function leadThresholds(ch: LeadChannels): number[] {
  const out: number[] = [];
  for (const e of ch.energies) out.push(e - 2 * ch.hopping, e + 2 * ch.hopping);
  return out;
}
