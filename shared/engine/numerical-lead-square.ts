/**
 * The square-lattice leads of the contract as numerical leads (numerical-lead.ts),
 * field-free or with the field in the lead (docs/physics-model.md, "Numerical leads",
 * "A field in the leads").
 *
 * Cell site r is the lead site next to mouth site p = r (mouth order of
 * model/geometry.ts: ascending along the edge). The cavity uses the Landau gauge
 * A = (−B·y, 0), bond phase θ((i,j)→(i+1,j)) = 2πφj (charge −e).
 * Cells as in numerical-lead-modes.ts: H1 = H[cell k+1, cell k].
 * - Field-free lead: H1 = −t·1, and the mouth bonds carry the contract's phases θ_p
 *   (top/bottom: −2πφ·j0·i_p; left/right: 0), V[p,p] = H[lead, mouth] = −t·e^{iθ_p}.
 * - Field in the lead: every plaquette, in the lead and at the mouth, holds the flux φ.
 *   Left and right leads run along x, along which A = (−B·y, 0) is already
 *   translation-invariant: they keep the cavity's gauge (H1 = −t·e^{±2πiφj}, mouth bond
 *   θ = 2πφj along +x). Top and bottom leads run along y and use A′ = (0, B·x) =
 *   A + ∇(B·x·y): the lead's sites are multiplied by e^{iχ}, χ(i, j) = −2πφ·i·j, an exact
 *   gauge transformation of the whole system restricted to the lead, so the vertical
 *   bonds in the lead carry −2πφ·i (the same in every cell), the horizontal ones none,
 *   and the mouth bond (i, j0) → (i, j0 ± 1) carries χ(i, j0 ± 1) = −2πφ·i·(j0 ± 1).
 *   Nothing physical depends on this choice: it is a unitary diagonal change of the
 *   basis on the lead sites, which leaves Σ on the mouth (the lead's sites are
 *   eliminated) and so poles, widths, T, |S| and the gauge-covariant currents unchanged.
 */
import type { LeadSide } from '../model/cavity-model';
import { mouthPhases } from './leads';
import type { NumericalLeadSpec } from './numerical-lead';

interface SquareLeadGeometry {
  side: LeadSide;
  /** Lattice column and row of each mouth site, p = 1..W order. */
  mouthI: Int32Array;
  mouthJ: Int32Array;
  /** t (meV). */
  hopping: number;
  /** Lead potential offset V_L (meV). */
  offset: number;
  /** φ = B·a²/(h/e) per plaquette. */
  flux: number;
  /** True: the field also acts in the lead; false: the contract's field-free lead. */
  fieldInLead: boolean;
}

/** Cell and coupling of one square-lattice lead. Cost O(W²). */
export function squareLatticeLead(g: SquareLeadGeometry): NumericalLeadSpec {
  const w = g.mouthI.length;
  const t = g.hopping;
  const h0 = new Float64Array(2 * w * w);
  const h1 = new Float64Array(2 * w * w);
  const v = new Float64Array(2 * w * w);
  const twoPiPhi = 2 * Math.PI * g.flux;
  const theta = mouthPhases(g.side, g.mouthI, g.mouthJ, g.flux);
  for (let r = 0; r < w; r++) {
    h0[2 * (r * w + r)] = 4 * t + g.offset;
    if (r + 1 < w) {
      h0[2 * (r * w + r + 1)] = -t;
      h0[2 * ((r + 1) * w + r)] = -t;
    }
    const i = g.mouthI[r];
    const j = g.mouthJ[r];
    // phase of H1[r,r] = H[cell k+1, cell k] = −t·e^{iθ(cell k → cell k+1)} and of
    // V[r,r] = H[lead site, mouth site] = −t·e^{iθ(mouth → lead)}
    let hop = 0;
    let mouth = theta[r];
    if (g.fieldInLead) {
      switch (g.side) {
        case 'right':
          hop = twoPiPhi * j;
          mouth = twoPiPhi * j;
          break;
        case 'left':
          hop = -twoPiPhi * j;
          mouth = -twoPiPhi * j;
          break;
        case 'top':
          hop = -twoPiPhi * i;
          mouth = -twoPiPhi * i * (j + 1);
          break;
        case 'bottom':
          hop = twoPiPhi * i;
          mouth = -twoPiPhi * i * (j - 1);
          break;
      }
    }
    h1[2 * (r * w + r)] = -t * Math.cos(hop);
    h1[2 * (r * w + r) + 1] = -t * Math.sin(hop);
    v[2 * (r * w + r)] = -t * Math.cos(mouth);
    v[2 * (r * w + r) + 1] = -t * Math.sin(mouth);
  }
  return { cell: { size: w, h0, h1 }, mouthSize: w, coupling: v };
}
