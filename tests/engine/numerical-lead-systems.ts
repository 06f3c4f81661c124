/**
 * Small test systems for the numerical leads, built here with dense matrices and
 * independent of the engine's lattice: a square-lattice ribbon cell (optionally in a
 * field, Landau gauge A = (−B·y, 0) as in docs/physics-model.md), a zigzag graphene
 * ribbon cell, and a two-terminal scattering problem through a piece of ribbon.
 */
import { denseLu, denseLuSolve } from '../../shared/engine/dense-solve';
import { forwardHopping, type LeadCellBlocks } from '../../shared/engine/numerical-lead-modes';
import { NumericalLead } from '../../shared/engine/numerical-lead';
import type { Complex, NonlinearOperator, SheetFlags } from '../../shared/engine/operator';

/**
 * Column of a square-lattice ribbon, W sites (row r = 0..W−1, y = r·a), for a lead
 * along +x: H0 = 4t + V on the diagonal, −t between rows; H1 = H[(c+1, r), (c, r)] =
 * −t·e^{2πiφr} (the contract's bond phase θ((c,r)→(c+1,r)) = 2πφr).
 */
export function squareRibbonCell(width: number, t: number, flux = 0, onsite: (r: number) => number = () => 0): LeadCellBlocks {
  const n = width;
  const h0 = new Float64Array(2 * n * n);
  const h1 = new Float64Array(2 * n * n);
  for (let r = 0; r < n; r++) {
    h0[2 * (r * n + r)] = 4 * t + onsite(r);
    if (r + 1 < n) {
      h0[2 * (r * n + r + 1)] = -t;
      h0[2 * ((r + 1) * n + r)] = -t;
    }
    h1[2 * (r * n + r)] = -t * Math.cos(2 * Math.PI * flux * r);
    h1[2 * (r * n + r) + 1] = -t * Math.sin(2 * Math.PI * flux * r);
  }
  return { size: n, h0, h1 };
}

/**
 * Zigzag graphene ribbon of N zigzag chains, 2N sites per cell (period √3·a_CC):
 * site 2m is A_m, 2m+1 is B_m; bonds A_m(j)–B_m(j) and B_m(j)–A_{m+1}(j) inside the
 * cell and B_m(j)–A_m(j+1) to the next cell (H1[A_m, B_m] = H[cell j+1, cell j]), all −t. Edge sites A_0 and B_{N−1} have
 * two neighbours (zigzag edges). H1 has rank N: it is singular.
 */
export function zigzagRibbonCell(chains: number, t: number): LeadCellBlocks {
  const n = 2 * chains;
  const h0 = new Float64Array(2 * n * n);
  const h1 = new Float64Array(2 * n * n);
  const set = (m: Float64Array, i: number, j: number, v: number) => {
    m[2 * (i * n + j)] = v;
  };
  for (let m = 0; m < chains; m++) {
    set(h0, 2 * m, 2 * m + 1, -t);
    set(h0, 2 * m + 1, 2 * m, -t);
    if (m + 1 < chains) {
      set(h0, 2 * m + 1, 2 * m + 2, -t);
      set(h0, 2 * m + 2, 2 * m + 1, -t);
    }
    // H1 = H[cell j+1, cell j]: row A_m of cell j+1, column B_m of cell j
    set(h1, 2 * m, 2 * m + 1, -t);
  }
  return { size: n, h0, h1 };
}

/** The cell's Hermitian conjugate hopping: the cell of the same ribbon seen as a lead along −x. */
function reversedCell(cell: LeadCellBlocks): LeadCellBlocks {
  const n = cell.size;
  const h1 = new Float64Array(2 * n * n);
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      h1[2 * (i * n + j)] = cell.h1[2 * (j * n + i)];
      h1[2 * (i * n + j) + 1] = -cell.h1[2 * (j * n + i) + 1];
    }
  return { size: n, h0: cell.h0, h1 };
}

/** A piece of L cells of a ribbon (cells 0..L−1 along +x) with extra on-site energies, and its two leads. */
interface RibbonDevice {
  n: number;
  h: Float64Array;
  leads: { lead: NumericalLead; mouth: number[] }[];
}

/**
 * The ribbon piece: H = block tridiagonal with H0 (+ potential(cell, site)), H1 =
 * H[cell c+1, cell c] and its adjoint; lead 0 on the left (cells along −x: H1 → H1†,
 * coupling V = H[column −1, column 0] = H1†), lead 1 on the right (V = H[column L,
 * column L−1] = H1).
 */
export function ribbonDevice(cell: LeadCellBlocks, length: number, potential: (c: number, s: number) => number = () => 0, kSamples = 128): RibbonDevice {
  const w = cell.size;
  const n = w * length;
  const h = new Float64Array(2 * n * n);
  const fwd = forwardHopping(cell); // H[cell c, cell c+1]
  for (let c = 0; c < length; c++)
    for (let i = 0; i < w; i++) {
      for (let j = 0; j < w; j++) {
        h[2 * ((c * w + i) * n + c * w + j)] = cell.h0[2 * (i * w + j)];
        h[2 * ((c * w + i) * n + c * w + j) + 1] = cell.h0[2 * (i * w + j) + 1];
        if (c + 1 < length) {
          h[2 * ((c * w + i) * n + (c + 1) * w + j)] = fwd[2 * (i * w + j)];
          h[2 * ((c * w + i) * n + (c + 1) * w + j) + 1] = fwd[2 * (i * w + j) + 1];
          h[2 * (((c + 1) * w + j) * n + c * w + i)] = fwd[2 * (i * w + j)];
          h[2 * (((c + 1) * w + j) * n + c * w + i) + 1] = -fwd[2 * (i * w + j) + 1];
        }
      }
      h[2 * ((c * w + i) * n + c * w + i)] += potential(c, i);
    }
  const left = reversedCell(cell);
  const leftLead = new NumericalLead({ cell: left, mouthSize: w, coupling: fwd }, { kSamples });
  const rightLead = new NumericalLead({ cell, mouthSize: w, coupling: cell.h1 }, { kSamples });
  const range = (o: number) => Array.from({ length: w }, (_, i) => o + i);
  return {
    n,
    h,
    leads: [
      { lead: leftLead, mouth: range(0) },
      { lead: rightLead, mouth: range((length - 1) * w) },
    ],
  };
}

/** S-matrix, transmissions and residuals at a real energy (contract's S = −1 + i·W†GW). */
interface DeviceScattering {
  open: number[];
  s: Float64Array;
  transmission: number;
  reflection: number;
  unitarity: number;
}

/** Solves the device at E with dense matrices. */
export function deviceScattering(dev: RibbonDevice, energy: number): DeviceScattering {
  const { n, h } = dev;
  const a = new Float64Array(2 * n * n);
  for (let e = 0; e < a.length; e++) a[e] = -h[e];
  for (let i = 0; i < n; i++) a[2 * (i * n + i)] += energy;
  const cols: { lead: number; w: Float64Array }[] = [];
  const open: number[] = [];
  dev.leads.forEach(({ lead, mouth }, l) => {
    const m = mouth.length;
    const sigma = lead.selfEnergy(energy, 0);
    for (let p = 0; p < m; p++)
      for (let q = 0; q < m; q++) {
        a[2 * (mouth[p] * n + mouth[q])] -= sigma[2 * (p * m + q)];
        a[2 * (mouth[p] * n + mouth[q]) + 1] -= sigma[2 * (p * m + q) + 1];
      }
    const ch = lead.channels(energy);
    open.push(ch.count);
    for (let c = 0; c < ch.count; c++) {
      const w = new Float64Array(2 * n);
      for (let p = 0; p < m; p++) {
        w[2 * mouth[p]] = ch.columns[2 * (p * ch.count + c)];
        w[2 * mouth[p] + 1] = ch.columns[2 * (p * ch.count + c) + 1];
      }
      cols.push({ lead: l, w });
    }
  });
  const nc = cols.length;
  const wm = new Float64Array(2 * n * nc);
  cols.forEach((c, k) => {
    for (let i = 0; i < n; i++) {
      wm[2 * (i * nc + k)] = c.w[2 * i];
      wm[2 * (i * nc + k) + 1] = c.w[2 * i + 1];
    }
  });
  const gw = denseLuSolve(denseLu(n, a), wm, nc);
  const s = new Float64Array(2 * nc * nc);
  for (let x = 0; x < nc; x++)
    for (let y = 0; y < nc; y++) {
      let re = 0;
      let im = 0;
      for (let i = 0; i < n; i++) {
        const wr = wm[2 * (i * nc + x)];
        const wi = -wm[2 * (i * nc + x) + 1];
        re += wr * gw[2 * (i * nc + y)] - wi * gw[2 * (i * nc + y) + 1];
        im += wr * gw[2 * (i * nc + y) + 1] + wi * gw[2 * (i * nc + y)];
      }
      // S = −1 + i·(W†GW)
      s[2 * (x * nc + y)] = -im - (x === y ? 1 : 0);
      s[2 * (x * nc + y) + 1] = re;
    }
  let transmission = 0;
  let reflection = 0;
  for (let x = 0; x < nc; x++)
    for (let y = 0; y < nc; y++) {
      const p = s[2 * (x * nc + y)] ** 2 + s[2 * (x * nc + y) + 1] ** 2;
      if (cols[y].lead === 0 && cols[x].lead === 1) transmission += p;
      if (cols[y].lead === 0 && cols[x].lead === 0) reflection += p;
    }
  let unitarity = 0;
  for (let x = 0; x < nc; x++)
    for (let y = 0; y < nc; y++) {
      let re = 0;
      let im = 0;
      for (let k = 0; k < nc; k++) {
        const ar = s[2 * (k * nc + x)];
        const ai = -s[2 * (k * nc + x) + 1];
        re += ar * s[2 * (k * nc + y)] - ai * s[2 * (k * nc + y) + 1];
        im += ar * s[2 * (k * nc + y) + 1] + ai * s[2 * (k * nc + y)];
      }
      unitarity = Math.max(unitarity, Math.hypot(re - (x === y ? 1 : 0), im));
    }
  return { open, s, transmission, reflection, unitarity };
}

/**
 * The device as the engine's nonlinear operator T(z) = z − H − Σ_ℓ(z) with a dense
 * pattern (every entry stored), so the pole search runs on numerical leads of any cell.
 * Sites are labelled (cell, site in cell) for the search's geometric ordering.
 */
export class DeviceOperator implements NonlinearOperator {
  readonly n: number;
  readonly colPtr: Int32Array;
  readonly rowIdx: Int32Array;
  readonly sites: { i: Int32Array; j: Int32Array };
  readonly thresholds: readonly number[];
  readonly leadCount: number;
  readonly hopping: number;

  constructor(
    readonly device: RibbonDevice,
    hopping: number,
  ) {
    const n = device.n;
    this.n = n;
    this.hopping = hopping;
    this.leadCount = device.leads.length;
    this.colPtr = Int32Array.from({ length: n + 1 }, (_, c) => c * n);
    this.rowIdx = Int32Array.from({ length: n * n }, (_, e) => e % n);
    const w = device.leads[0].mouth.length;
    this.sites = { i: Int32Array.from({ length: n }, (_, s) => Math.floor(s / w)), j: Int32Array.from({ length: n }, (_, s) => s % w) };
    const all = device.leads.flatMap((l) => [...l.lead.thresholds]).sort((x, y) => x - y);
    this.thresholds = all.filter((e, k) => k === 0 || e - all[k - 1] > 1e-12 * Math.max(1, hopping));
  }

  sheetAt(reE: number): SheetFlags {
    return this.device.leads.map((l) => l.lead.sheetAt(reE));
  }

  /** Values in CSC order: entry (r, c) at slot c·n + r. */
  assemble(z: Complex, sheet: SheetFlags, out: Float64Array): void {
    const n = this.n;
    for (let c = 0; c < n; c++)
      for (let r = 0; r < n; r++) {
        out[2 * (c * n + r)] = -this.device.h[2 * (r * n + c)] + (r === c ? z.re : 0);
        out[2 * (c * n + r) + 1] = -this.device.h[2 * (r * n + c) + 1] + (r === c ? z.im : 0);
      }
    this.device.leads.forEach((l, k) => this.subtract(l.mouth, l.lead.selfEnergy(z.re, z.im, sheet[k]), out));
  }

  assembleDerivative(z: Complex, sheet: SheetFlags, out: Float64Array): void {
    const n = this.n;
    out.fill(0);
    for (let s = 0; s < n; s++) out[2 * (s * n + s)] = 1;
    this.device.leads.forEach((l, k) => this.subtract(l.mouth, l.lead.selfEnergyDerivative(z.re, z.im, sheet[k]), out));
  }

  leadWidthForm(z: Complex, sheet: SheetFlags, lead: number, psi: Float64Array): number {
    const { mouth, lead: l } = this.device.leads[lead];
    const sigma = l.selfEnergy(z.re, z.im, sheet[lead]);
    const m = mouth.length;
    let im = 0;
    for (let p = 0; p < m; p++)
      for (let q = 0; q < m; q++) {
        const sr = sigma[2 * (p * m + q)];
        const si = sigma[2 * (p * m + q) + 1];
        const xr = sr * psi[2 * mouth[q]] - si * psi[2 * mouth[q] + 1];
        const xi = sr * psi[2 * mouth[q] + 1] + si * psi[2 * mouth[q]];
        im += psi[2 * mouth[p]] * xi - psi[2 * mouth[p] + 1] * xr;
      }
    return -2 * im;
  }

  private subtract(mouth: number[], block: Float64Array, out: Float64Array): void {
    const n = this.n;
    const m = mouth.length;
    for (let p = 0; p < m; p++)
      for (let q = 0; q < m; q++) {
        out[2 * (mouth[q] * n + mouth[p])] -= block[2 * (p * m + q)];
        out[2 * (mouth[q] * n + mouth[p]) + 1] -= block[2 * (p * m + q) + 1];
      }
  }
}
