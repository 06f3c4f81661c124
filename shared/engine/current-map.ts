/**
 * Probability current of a state ψ on the cavity (docs/physics-model.md,
 * "Current and Husimi maps"). On every bond s → s' (both in the cavity)
 *   J(s → s') = (2/ħ)·Im[ψ*(s')·H[s',s]·ψ(s)],  H[s',s] = −t·exp(iθ(s → s')),
 * positive when probability flows from s to s' (a plane wave e^{ikn} along +x gives
 * J = 2t·sin k/ħ > 0, the contract's check). The Peierls phases of H enter, so the
 * current is the gauge-invariant kinetic one.
 * Each mouth site p of a lead has one bond into the lead; its current is
 *   J(p → lead) = −(2/ħ)·Im[ψ*_p·((Σ_ℓ(z)ψ)_p + s_p)],
 * from the site equation zψ = Hψ + (lead terms), where the lead terms are Σψ + s
 * (s: the source of an injected wave, zero for a pole). Units: 1/ps for a state
 * with Σ|ψ|² = 1 (ħ = 0.6582119569 meV·ps), times `scale`.
 * Per-site vector: j_x(s) = ½[J((i−1,j) → s) + J(s → (i+1,j))], j_y likewise; a bond
 * that does not exist counts 0, a lead bond counts with its direction (left lead −x,
 * right +x, bottom −y, top +y). On another lattice (honeycomb) each bond adds
 * ½·J·ê_b at both ends, ê_b its unit vector from `from` to `to`, which is the same rule
 * written for bonds in any direction. Cost O(n + bonds + Σ W²).
 */
import { HBAR_MEV_PS } from '../units/constants';
import type { CavityLattice } from './lattice';
import type { EffectiveHamiltonian } from './effective-hamiltonian';
import type { Complex, SheetFlags } from './operator';
import type { LeadSide } from '../model/cavity-model';

/** A lead as the current needs it: its mouth and Σ_ℓ(z) there (dense W×W, row-major, interleaved). */
export interface LeadCoupling {
  name: string;
  side: LeadSide;
  mouth: Int32Array;
  selfEnergy: Float64Array;
}

interface CurrentMap {
  /** J(from → to) on each lattice bond (lattice.bonds order). */
  bonds: Float64Array;
  /** (j_x, j_y) per site, interleaved. */
  siteVectors: Float64Array;
  /** Per lead, the current from each mouth site into the lead (p = 1..W order). */
  mouthCurrents: Float64Array[];
  /** Per lead, the total current from the cavity into the lead (negative: flowing in). */
  leadCurrents: number[];
  /** Σ|ψ|² over the cavity. */
  norm: number;
}

/** Σ_ℓ(z) of every lead of the operator on the given sheet (by default the sheet at Re z). */
export function leadCouplings(op: EffectiveHamiltonian, z: Complex, sheet: SheetFlags = op.sheetAt(z.re)): LeadCoupling[] {
  return op.system.leads.map((l, k) => ({ name: l.name, side: l.side, mouth: l.mouth, selfEnergy: op.selfEnergy(k, z, sheet) }));
}

const SIDE_AXIS: Record<LeadSide, { axis: 0 | 1; sign: number }> = {
  left: { axis: 0, sign: -1 },
  right: { axis: 0, sign: 1 },
  bottom: { axis: 1, sign: -1 },
  top: { axis: 1, sign: 1 },
};

/**
 * The current map of ψ (interleaved re, im over the lattice sites).
 * @param source the injected source s on the sites (interleaved), for a scattering state
 * @param scale multiplies every current (ħ gives currents in units of an incoming flux 1/ħ)
 */
export function currentMap(
  lattice: CavityLattice,
  psi: Float64Array,
  leads: readonly LeadCoupling[] = [],
  options: { source?: Float64Array; scale?: number } = {},
): CurrentMap {
  const n = lattice.onsite.length;
  if (psi.length !== 2 * n) throw new RangeError(`currentMap: psi has length ${psi.length}, expected 2·sites = ${2 * n}`);
  const factor = (2 / HBAR_MEV_PS) * (options.scale ?? 1);
  const { from, to, phase, hopping } = lattice.bonds;
  const bonds = new Float64Array(from.length);
  const siteVectors = new Float64Array(2 * n);
  const sj = lattice.sites.j;
  const square = lattice.kind === 'square';
  const { x: px, y: py } = lattice.positions;
  for (let b = 0; b < from.length; b++) {
    const s = from[b];
    const r = to[b];
    const t = hopping[b];
    // H[r,s]ψ_s = −t e^{iθ} ψ_s; J = factor·Im(conj(ψ_r)·H[r,s]ψ_s)
    const c = -t * Math.cos(phase[b]);
    const sn = -t * Math.sin(phase[b]);
    const hr = c * psi[2 * s] - sn * psi[2 * s + 1];
    const hi = c * psi[2 * s + 1] + sn * psi[2 * s];
    const j = factor * (psi[2 * r] * hi - psi[2 * r + 1] * hr);
    bonds[b] = j;
    if (!square) {
      const dx = px[r] - px[s];
      const dy = py[r] - py[s];
      const len = Math.hypot(dx, dy);
      siteVectors[2 * s] += (0.5 * j * dx) / len;
      siteVectors[2 * s + 1] += (0.5 * j * dy) / len;
      siteVectors[2 * r] += (0.5 * j * dx) / len;
      siteVectors[2 * r + 1] += (0.5 * j * dy) / len;
      continue;
    }
    // Bonds point in +x or +y: the same sign is the flow along that axis at both ends.
    const axis = sj[r] !== sj[s] ? 1 : 0;
    siteVectors[2 * s + axis] += 0.5 * j;
    siteVectors[2 * r + axis] += 0.5 * j;
  }
  const mouthCurrents: Float64Array[] = [];
  const leadCurrents: number[] = [];
  const src = options.source;
  for (const lead of leads) {
    const w = lead.mouth.length;
    const sigma = lead.selfEnergy;
    const out = new Float64Array(w);
    let total = 0;
    for (let p = 0; p < w; p++) {
      const s = lead.mouth[p];
      let ar = src ? src[2 * s] : 0;
      let ai = src ? src[2 * s + 1] : 0;
      for (let q = 0; q < w; q++) {
        const sr = sigma[2 * (p * w + q)];
        const sv = sigma[2 * (p * w + q) + 1];
        const x = lead.mouth[q];
        ar += sr * psi[2 * x] - sv * psi[2 * x + 1];
        ai += sr * psi[2 * x + 1] + sv * psi[2 * x];
      }
      // −factor·Im(conj(ψ_p)·a)
      const j = -factor * (psi[2 * s] * ai - psi[2 * s + 1] * ar);
      out[p] = j;
      total += j;
      const { axis, sign } = SIDE_AXIS[lead.side];
      siteVectors[2 * s + axis] += 0.5 * sign * j;
    }
    mouthCurrents.push(out);
    leadCurrents.push(total);
  }
  let norm = 0;
  for (let k = 0; k < 2 * n; k++) norm += psi[k] * psi[k];
  return { bonds, siteVectors, mouthCurrents, leadCurrents, norm };
}

/**
 * Net current out of every site: Σ over its bonds (lead bonds included) of the current
 * leaving it. Zero at every site for a state at a real energy without source there
 * (Kirchhoff's rule); (Γ/ħ)·|ψ_s|² for a pole z = E − iΓ/2. Cost O(n + bonds).
 */
export function siteOutflow(lattice: CavityLattice, map: CurrentMap, leads: readonly LeadCoupling[] = []): Float64Array {
  const out = new Float64Array(lattice.onsite.length);
  const { from, to } = lattice.bonds;
  for (let b = 0; b < from.length; b++) {
    out[from[b]] += map.bonds[b];
    out[to[b]] -= map.bonds[b];
  }
  leads.forEach((lead, l) => lead.mouth.forEach((s, p) => (out[s] += map.mouthCurrents[l][p])));
  return out;
}
