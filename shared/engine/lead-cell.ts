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
 * Field: the leads are field-free (H0, H1 real) as in the contract; on the square lattice
 * the lead–cavity bonds carry the contract's mouth phase (top/bottom lead: θ_p = −2πφ·j_p·i_p,
 * V[r, p] = −t·e^{iθ_p}), which reproduces leads.ts. A honeycomb lead in a field is refused
 * (the interface rule for its slanted bonds is not written yet). Energies in meV, lengths nm.
 */
import { FLUX_QUANTUM_T_NM2 } from '../units/constants';
import { formatIssuePath, type CavityModel, type Lead, type LeadSide } from '../model/cavity-model';
import { validateCavityModel } from '../model/model-validation';
import { indexSites } from './lattice';
import { forEachPresetBond, modelTightBinding, presetOnsite, type TightBindingParameters } from './tight-binding';

/** One lead's unit cell and its coupling to the cavity. Matrices are dense, row-major, interleaved (re, im). */
export interface LeadCell {
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
export interface AttachedLeadCell extends LeadCell {
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
): LeadCell {
  const pl = p.placement;
  if (p.field !== 0 && pl.kind !== 'square') throw new Error('a lead on the honeycomb lattice in a magnetic field is not available yet: set the field to 0');
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
  const links: { r: number; ci: number; cj: number; t: number }[] = [];
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
        if (u && v) {
          if (u.k === 0 && v.k === 0) {
            h0[2 * (v.s * m + u.s)] -= t;
            h0[2 * (u.s * m + v.s)] -= t;
          } else if (u.k === 0 && v.k === 1) h1[2 * (v.s * m + u.s)] -= t;
          else if (u.k === 1 && v.k === 0) h1[2 * (u.s * m + v.s)] -= t;
          return;
        }
        // A bond between cell 0 and the cavity.
        if (u && u.k === 0 && !v && inGrid(i + di, j + dj) && inCavity(i + di, j + dj)) links.push({ r: u.s, ci: i + di, cj: j + dj, t });
        if (v && v.k === 0 && !u && inGrid(i, j) && inCavity(i, j)) links.push({ r: v.s, ci: i, cj: j, t });
      });
    }
  }
  const keys = [...new Set(links.map((l) => l.ci * ny + l.cj))].sort((a, b) => a - b);
  const contactI = Int32Array.from(keys, (k) => Math.floor(k / ny));
  const contactJ = Int32Array.from(keys, (k) => k % ny);
  const w = keys.length;
  const coupling = new Float64Array(2 * m * w);
  // The contract's mouth phase (square lattice, top/bottom leads): θ_p = −2πφ·j_p·i_p with φ = B a²/(h/e).
  const phi = (p.field * pl.length * pl.length) / FLUX_QUANTUM_T_NM2;
  for (const l of links) {
    const q = keys.indexOf(l.ci * ny + l.cj);
    const theta = side === 'top' || side === 'bottom' ? -2 * Math.PI * phi * l.cj * l.ci : 0;
    coupling[2 * (l.r * w + q)] += -l.t * Math.cos(theta);
    coupling[2 * (l.r * w + q) + 1] += -l.t * Math.sin(theta);
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
  const cell = presetLeadCell(modelTightBinding(checked.model), l.side, l.start, l.width, l.offset, nx, ny, (i, j) => mask[i * ny + j] === 1);
  const mouth = new Int32Array(cell.contacts.i.length);
  for (let p = 0; p < mouth.length; p++) mouth[p] = siteIndex[cell.contacts.i[p] * ny + cell.contacts.j[p]];
  return { ...cell, mouth };
}
