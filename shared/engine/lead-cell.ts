/**
 * The unit cell of a lead as a semi-infinite ribbon of the cavity's own lattice
 * (docs/physics-model.md, "Lead cells"): the input of the numerical lead solver.
 *
 * Cells are numbered k = 0, 1, 2, … away from the cavity; cell 0 touches the cavity. The
 * lead's Hamiltonian is block tridiagonal:
 *   H[cell k, cell k] = H0,  H[cell k+1, cell k] = H1,  H[cell k, cell k+1] = H1†,
 * and the cavity couples only to cell 0: H[cell 0 site r, cavity mouth site p] = V[r, p]
 * (H[p, r] = conj V[r, p]). With g(z) the surface Green function of the lead's cell 0,
 * the self-energy on the mouth is Σ(z) = V†·g(z)·V.
 *
 * Geometry: a left lead of width W on rows start..start+W−1 occupies grid columns
 * −P..−1 for cell 0 (−2P..−P−1 for cell 1, …), a right lead columns nx..nx+P−1, a bottom
 * lead rows −P..−1 on columns start..start+W−1, a top lead rows ny..ny+P−1; P is the
 * lattice's period along the lead in grid steps (1 on the square lattice, 2 on the
 * honeycomb, whose left/right leads are zigzag ribbons of W chains and top/bottom
 * leads armchair ribbons of W dimer lines). Sites of a cell are in lexicographic (i, j)
 * order. Every bond of the preset (nearest and next-nearest) between two lead sites, or
 * between a lead site and a cavity site, is kept.
 *
 * Field (docs/physics-model.md, "A field in the leads"): the cavity keeps the engine's Landau
 * gauge A = (−B·y, 0). Each lead has a gauge A_ℓ = A + ∇χ_ℓ on the cavity side, its bonds
 * carry θ = (q/ħ)∫A_ℓ·dl (q = −e, so q/ħ = −2π/(h/e) per T·nm²), and a lead–cavity bond from
 * contact p carries θ(p → r) = (q/ħ)[∫A_ℓ·dl + χ_ℓ(r_p)]: the lead is in its own gauge and the
 * jump χ_ℓ is put on the links, which is the gauge transformation e^{iqχ_ℓ/ħ} of the cavity's
 * sites seen from the lead (no flux is added or lost at the mouth).
 * - Field in the lead (`fieldInLead`): left/right leads keep A (translation-invariant along
 *   x, χ_ℓ = 0); top/bottom leads use A′ = (0, B·x) = A + ∇(B·x·y), χ_ℓ = B·x·y. Every plaquette,
 *   in the lead and at the mouth, holds the flux B·area.
 * - Field-free lead (the contract's): the field fills the half-plane on the cavity's side of
 *   the mouth line (x = x_m through the left/right edge column; y = y_m through the highest
 *   atoms of the top row or the lowest of the bottom row) and is 0 beyond it, A_ℓ = 0 in the
 *   lead, χ_ℓ = B·(x − x_m)·y (left/right) or B·y_m·x (top/bottom). A link from p to r then
 *   carries (q/ħ)[∫_{p→c}A·dl + χ_ℓ(c)], c where the bond crosses the line (c = p for every
 *   nearest-neighbour link). On the square lattice this is the contract's mouth phase
 *   (top/bottom θ_p = −2πφ·j_p·i_p, left/right 0); a honeycomb plaquette astride the line
 *   holds the flux of its part on the cavity side. Energies in meV, lengths nm.
 */
import { FLUX_QUANTUM_T_NM2 } from '../units/constants';
import { formatIssuePath, type CavityModel, type Lead, type LeadSide } from '../model/cavity-model';
import { validateCavityModel } from '../model/model-validation';
import { indexSites } from './lattice';
import { forEachPresetBond, landauPhase, modelTightBinding, presetOnsite, type TightBindingParameters } from './tight-binding';

/** One lead's unit cell and its coupling to the cavity. Matrices are dense, row-major, interleaved (re, im). */
interface LeadCell {
  side: LeadSide;
  /** Number of sites m of one cell. */
  size: number;
  /** Cell 0's sites: grid labels (outside the grid) and positions (nm). */
  sites: { i: Int32Array; j: Int32Array; x: Float64Array; y: Float64Array };
  /** H0 (m × m): onsite energies (with the lead's offset V_L) and the hoppings inside a cell. */
  h0: Float64Array;
  /** H1 (m × m): H1[r, c] = H[site r of cell k+1, site c of cell k]. */
  h1: Float64Array;
  /** Displacement (nm) from cell k to cell k+1 (pointing away from the cavity). */
  translation: [number, number];
  /** Grid labels of the cavity sites bonded to cell 0 (lexicographic order). */
  contacts: { i: Int32Array; j: Int32Array };
  /** V (m × contacts): V[r, p] = H[cell-0 site r, contact p]. */
  coupling: Float64Array;
}

/** A lead cell on the model's cavity: the contacts as unknown indices of the cavity's lattice. */
interface AttachedLeadCell extends LeadCell {
  /** Unknown index of each contact (same order as `contacts`). */
  mouth: Int32Array;
}

function cellOrigin(
  side: LeadSide,
  start: number,
  period: number,
  nx: number,
  ny: number,
): { i0: number; j0: number; cols: number; rows: number; step: [number, number] } {
  switch (side) {
    case 'left':
      return { i0: -period, j0: start, cols: period, rows: 0, step: [-period, 0] };
    case 'right':
      return { i0: nx, j0: start, cols: period, rows: 0, step: [period, 0] };
    case 'bottom':
      return { i0: start, j0: -period, cols: 0, rows: period, step: [0, -period] };
    case 'top':
      return { i0: start, j0: ny, cols: 0, rows: period, step: [0, period] };
  }
}

/** (q/ħ) per T·nm² for the electron's charge q = −e: −2π/(h/e). */
const CHARGE_OVER_HBAR = (-2 * Math.PI) / FLUX_QUANTUM_T_NM2;

/**
 * The Peierls phases of one lead (see the file comment): `bond` for a bond between two lead
 * sites, `link` for the bond from a cavity contact (xp, yp) to a lead site (xr, yr). Positions nm.
 */
function leadGauge(
  p: TightBindingParameters,
  side: LeadSide,
  nx: number,
  ny: number,
  fieldInLead: boolean,
): { bond: (x0: number, y0: number, x1: number, y1: number) => number; link: (xp: number, yp: number, xr: number, yr: number) => number } {
  const b = p.field;
  const pl = p.placement;
  const across = side === 'left' || side === 'right';
  if (b === 0) return { bond: () => 0, link: () => 0 };
  if (fieldInLead) {
    // A_ℓ = A (left/right) or A′ = (0, B·x) (top/bottom); χ_ℓ = 0 or B·x·y.
    const bond = across
      ? (x0: number, y0: number, x1: number, y1: number) => landauPhase(b, x0, y0, x1, y1)
      : (x0: number, y0: number, x1: number, y1: number) => CHARGE_OVER_HBAR * b * 0.5 * (x0 + x1) * (y1 - y0);
    const chi = (x: number, y: number) => (across ? 0 : b * x * y);
    return { bond, link: (xp, yp, xr, yr) => bond(xp, yp, xr, yr) + CHARGE_OVER_HBAR * chi(xp, yp) };
  }
  // Field-free lead: the field stops at the mouth line.
  const line = side === 'left' ? 0 : side === 'right' ? pl.x(nx - 1, 0) : side === 'bottom' ? 0 : (ny - 1) * pl.dy + pl.rowLift;
  const chi = (x: number, y: number) => (across ? b * (x - line) * y : b * line * x);
  return {
    bond: () => 0,
    link: (xp, yp, xr, yr) => {
      const from = across ? xp : yp;
      const to = across ? xr : yr;
      const s = Math.abs(from - line) <= 1e-12 * Math.max(1, Math.abs(line)) ? 0 : Math.min(1, Math.max(0, (line - from) / (to - from)));
      const xc = xp + s * (xr - xp);
      const yc = yp + s * (yr - yp);
      return landauPhase(b, xp, yp, xc, yc) + CHARGE_OVER_HBAR * chi(xc, yc);
    },
  };
}

/**
 * The cell of a lead of `width` sites along the side from `start`, on an nx × ny grid
 * whose cavity is `inCavity(i, j)`. `offset` is V_L (meV). Cost O(m² + m·z).
 */
export function presetLeadCell(
  p: TightBindingParameters,
  side: LeadSide,
  start: number,
  width: number,
  offset: number,
  nx: number,
  ny: number,
  inCavity: (i: number, j: number) => boolean,
  options: { fieldInLead?: boolean } = {},
): LeadCell {
  const pl = p.placement;
  const gauge = leadGauge(p, side, nx, ny, options.fieldInLead ?? false);
  const period = pl.kind === 'honeycomb' ? 2 : 1;
  const o = cellOrigin(side, start, period, nx, ny);
  const across = side === 'left' || side === 'right';
  const cols = across ? period : width;
  const rows = across ? width : period;
  const m = cols * rows;
  // Cell-0 labels in lexicographic order: index (i − i0)·rows + (j − j0).
  const ci = new Int32Array(m);
  const cj = new Int32Array(m);
  const x = new Float64Array(m);
  const y = new Float64Array(m);
  for (let a = 0; a < cols; a++) {
    for (let b = 0; b < rows; b++) {
      const s = a * rows + b;
      ci[s] = o.i0 + a;
      cj[s] = o.j0 + b;
      x[s] = pl.x(ci[s], cj[s]);
      y[s] = pl.y(ci[s], cj[s]);
    }
  }
  /** Cell number (0 or 1) and index of a label, or null when it is in neither (the cavity side is not a cell). */
  const locate = (i: number, j: number): { k: number; s: number } | null => {
    for (const k of [0, 1]) {
      const a = i - o.i0 - k * o.step[0];
      const b = j - o.j0 - k * o.step[1];
      if (a >= 0 && a < cols && b >= 0 && b < rows) return { k, s: a * rows + b };
    }
    return null;
  };
  const inGrid = (i: number, j: number) => i >= 0 && i < nx && j >= 0 && j < ny;
  const h0 = new Float64Array(2 * m * m);
  const h1 = new Float64Array(2 * m * m);
  for (let s = 0; s < m; s++) h0[2 * (s * m + s)] = presetOnsite(p, ci[s], cj[s]) + offset;
  /** out[r, c] += −t·e^{iθ} */
  const add = (out: Float64Array, r: number, c: number, t: number, theta: number) => {
    out[2 * (r * m + c)] -= t * Math.cos(theta);
    out[2 * (r * m + c) + 1] -= t * Math.sin(theta);
  };
  const links: { r: number; ci: number; cj: number; t: number; theta: number }[] = [];
  // Every bond with an end in cell 0: scan the forward bonds of every site near the cell.
  const reach = 2 * period + 2;
  const iMin = o.i0 - reach,
    iMax = o.i0 + cols - 1 + reach;
  const jMin = o.j0 - reach,
    jMax = o.j0 + rows - 1 + reach;
  for (let i = iMin; i <= iMax; i++) {
    for (let j = jMin; j <= jMax; j++) {
      forEachPresetBond(p, i, j, (di, dj, t) => {
        const u = locate(i, j);
        const v = locate(i + di, j + dj);
        const x0 = pl.x(i, j),
          y0 = pl.y(i, j),
          x1 = pl.x(i + di, j + dj),
          y1 = pl.y(i + di, j + dj);
        if (u && v) {
          // θ(u → v) in the lead's gauge; H[v, u] = −t·e^{iθ}, H[u, v] its conjugate.
          const theta = gauge.bond(x0, y0, x1, y1);
          if (u.k === 0 && v.k === 0) {
            add(h0, v.s, u.s, t, theta);
            add(h0, u.s, v.s, t, -theta);
          } else if (u.k === 0 && v.k === 1) add(h1, v.s, u.s, t, theta);
          else if (u.k === 1 && v.k === 0) add(h1, u.s, v.s, t, -theta);
          return;
        }
        // A bond between cell 0 and the cavity: θ(contact → lead site).
        if (u && u.k === 0 && !v && inGrid(i + di, j + dj) && inCavity(i + di, j + dj))
          links.push({ r: u.s, ci: i + di, cj: j + dj, t, theta: gauge.link(x1, y1, x0, y0) });
        if (v && v.k === 0 && !u && inGrid(i, j) && inCavity(i, j)) links.push({ r: v.s, ci: i, cj: j, t, theta: gauge.link(x0, y0, x1, y1) });
      });
    }
  }
  const keys = [...new Set(links.map((l) => l.ci * ny + l.cj))].sort((a, b) => a - b);
  const contactI = Int32Array.from(keys, (k) => Math.floor(k / ny));
  const contactJ = Int32Array.from(keys, (k) => k % ny);
  const w = keys.length;
  const coupling = new Float64Array(2 * m * w);
  for (const l of links) {
    const q = keys.indexOf(l.ci * ny + l.cj);
    coupling[2 * (l.r * w + q)] += -l.t * Math.cos(l.theta);
    coupling[2 * (l.r * w + q) + 1] += -l.t * Math.sin(l.theta);
  }
  const d: [number, number] = [pl.x(o.i0 + o.step[0], o.j0 + o.step[1]) - pl.x(o.i0, o.j0), pl.y(o.i0 + o.step[0], o.j0 + o.step[1]) - pl.y(o.i0, o.j0)];
  return { side, size: m, sites: { i: ci, j: cj, x, y }, h0, h1, translation: d, contacts: { i: contactI, j: contactJ }, coupling };
}

/**
 * The Bloch Hamiltonian of a lead: H(κ) = H0 + H1·e^{−iκ} + H1†·e^{iκ} for ψ(cell k) =
 * e^{iκk}·u, κ the phase per cell. Dense m × m, row-major interleaved. Cost O(m²).
 */
export function leadBlochHamiltonian(cell: Pick<LeadCell, 'size' | 'h0' | 'h1'>, kappa: number): Float64Array {
  const m = cell.size;
  const h = Float64Array.from(cell.h0);
  const c = Math.cos(kappa);
  const s = Math.sin(kappa);
  for (let r = 0; r < m; r++) {
    for (let q = 0; q < m; q++) {
      // H1[r,q]·e^{−iκ}
      const ar = cell.h1[2 * (r * m + q)];
      const ai = cell.h1[2 * (r * m + q) + 1];
      h[2 * (r * m + q)] += ar * c + ai * s;
      h[2 * (r * m + q) + 1] += ai * c - ar * s;
      // (H1†)[r,q]·e^{iκ} = conj(H1[q,r])·e^{iκ}
      const br = cell.h1[2 * (q * m + r)];
      const bi = -cell.h1[2 * (q * m + r) + 1];
      h[2 * (r * m + q)] += br * c - bi * s;
      h[2 * (r * m + q) + 1] += bi * c + br * s;
    }
  }
  return h;
}

/**
 * The unit cell of one of a model's leads, attached to the model's cavity: `lead` is the
 * lead's index in model.leads or the lead itself (its side, start, width and offset are
 * used). Rasterises the cavity (O(nx·ny)); throws on an invalid model. The contacts are
 * the cavity sites bonded to cell 0, `mouth` their unknown indices in the cavity's
 * lexicographic order (the order of every engine vector). Energies in meV.
 */
export function leadCellOf(model: CavityModel, lead: number | Lead): AttachedLeadCell {
  const checked = validateCavityModel(model);
  if (!checked.ok) throw new Error(`leadCellOf: invalid model: ${checked.issues.map((i) => `${formatIssuePath(i.path)}: ${i.message}`).join('; ')}`);
  const l = typeof lead === 'number' ? checked.model.leads[lead] : lead;
  if (!l) throw new RangeError(`leadCellOf: lead ${String(lead)} does not exist (the model has ${checked.model.leads.length} leads)`);
  const { nx, ny } = checked.model.grid;
  const mask = checked.mask;
  const { siteIndex } = indexSites(mask, nx, ny);
  const cell = presetLeadCell(modelTightBinding(checked.model), l.side, l.start, l.width, l.offset, nx, ny, (i, j) => mask[i * ny + j] === 1, {
    fieldInLead: checked.model.fieldInLeads === true,
  });
  const mouth = new Int32Array(cell.contacts.i.length);
  for (let p = 0; p < mouth.length; p++) mouth[p] = siteIndex[cell.contacts.i[p] * ny + cell.contacts.j[p]];
  return { ...cell, mouth };
}
