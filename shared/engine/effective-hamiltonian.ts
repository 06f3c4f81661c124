/**
 * The open cavity as a nonlinear operator T(z) = z − H − Σ_ℓ Σ_ℓ(z)
 * (docs/physics-model.md, "Observables"), built from a model document.
 * The pattern is H's plus one dense W×W block per lead mouth, fixed for all z.
 */
import { fluxPerPlaquette } from '../units/constants';
import { modelHopping, modelLattice, modelMassRatio } from '../model/cavity-model';
import { placementOf } from '../model/lattice-geometry';
import { buildTightBinding, modelTightBinding } from './tight-binding';
import { validateCavityModel } from '../model/model-validation';
import { mouthSites } from '../model/geometry';
import { evaluatePotential } from '../model/potential';
import { buildLattice, hamiltonianEntries, addHamiltonian, indexSites } from './lattice';
import { channelFlags, leadChannels, leadThresholds, mouthBlock, mouthPhases, selfEnergyCoefficients, selfEnergyDerivativeCoefficients } from './leads';
import { InvalidModelError, type CavitySystem, type SystemLead } from './cavity-system';
import { latticeLeads, withNumericalLeads } from './numerical-lead-system';
import type { BandEdge } from './numerical-lead-bands';
import { buildPattern, patternSlot } from './sparsity-pattern';
import type { Complex, NonlinearOperator, SheetFlags } from './operator';

export { InvalidModelError, type CavitySystem } from './cavity-system';

/** Σ of a numerical lead at one z and sheet; dΣ/dz computed on first read. */
interface NumericalBlocks {
  readonly sigma: Float64Array;
  readonly derivative: Float64Array;
}

/** How many (z, sheet) blocks each numerical lead keeps. */
const NUMERICAL_CACHE_SIZE = 8;

/** What a caller may hand buildCavitySystem from an earlier build of the same document. */
interface PrebuiltLeads {
  /** leadEdgesOf(system) of the earlier build: its numerical leads' band edges, one entry per lead. */
  leadEdges?: readonly (readonly BandEdge[] | null)[];
}

/**
 * Validates a model document and builds its lattice and leads. Throws
 * InvalidModelError with field paths when the document is invalid.
 * Cost O(nx·ny + Σ W²), plus each numerical lead's threshold search (O(kSamples·W³)) unless
 * `prebuilt.leadEdges` holds its edges from an earlier build of the same document.
 */
export function buildCavitySystem(doc: unknown, prebuilt: PrebuiltLeads = {}): CavitySystem {
  const checked = validateCavityModel(doc);
  if (!checked.ok) throw new InvalidModelError(checked.issues);
  const { model, mask } = checked;
  const { nx, ny } = model.grid;
  const massRatio = modelMassRatio(model);
  // meV for electrons, 1/a² (mm⁻²) for the microwave mode: the same operator either way.
  const hopping = modelHopping(model);
  const flux = fluxPerPlaquette(model.field, model.spacing);
  const placement = placementOf(modelLattice(model).kind, model.spacing);
  const { siteIndex, sites } = indexSites(mask, nx, ny);
  const potential = evaluatePotential(model.potential, sites, siteIndex, ny, model.spacing, placement);
  if (placement.kind !== 'square') {
    const tb = modelTightBinding(model);
    const lattice = buildTightBinding(mask, nx, ny, tb, potential);
    // Leads of any lattice: the lead's cell as a ribbon of the same lattice, solved numerically.
    const leads = latticeLeads(model, mask, lattice.siteIndex, tb, prebuilt.leadEdges);
    return { model, massRatio, spacing: model.spacing, placement, mask, lattice, sites: lattice.sites, hopping, flux: lattice.flux, leads };
  }
  const lattice = buildLattice(mask, nx, ny, hopping, flux, potential, model.spacing);
  const leads = model.leads.map((lead, k): SystemLead => {
    const m = mouthSites(lead, nx, ny);
    const mouth = new Int32Array(lead.width);
    for (let p = 0; p < lead.width; p++) mouth[p] = lattice.siteIndex[m.i[p] * ny + m.j[p]];
    return {
      name: lead.name ?? `${lead.side}${k}`,
      side: lead.side,
      channels: leadChannels(lead.width, hopping, lead.offset),
      mouth,
      theta: mouthPhases(lead.side, m.i, m.j, flux),
    };
  });
  const system: CavitySystem = { model, massRatio, spacing: model.spacing, placement, mask, lattice, sites: lattice.sites, hopping, flux, leads };
  // The field in the leads needs the numerical leads; without a field they are the closed form's (the same Σ).
  return model.fieldInLeads === true && flux !== 0 ? withNumericalLeads(system, { fieldInLeads: true, edges: prebuilt.leadEdges }) : system;
}

/** Open-channel coupling vectors W (columns sqrt(2t sin k_m)·e^{−iθ_p}χ_m(p) on each mouth). */
interface CouplingColumns {
  /** Total number of open channels (columns). */
  count: number;
  /** Column-major n × count (M × count on the mouths), interleaved complex. */
  values: Float64Array;
  /** Lead of each column. */
  lead: Int32Array;
  /** Channel m (1-based) of each column. */
  channel: Int32Array;
  /** Open channel count per lead. */
  perLead: number[];
}

/** T(z) = z − H − Σ(z) for a cavity with leads; implements the engine's operator contract. */
export class EffectiveHamiltonian implements NonlinearOperator {
  readonly n: number;
  readonly colPtr: Int32Array;
  readonly rowIdx: Int32Array;
  readonly sites: { i: Int32Array; j: Int32Array };
  readonly thresholds: readonly number[];
  readonly leadCount: number;
  readonly hopping: number;
  readonly system: CavitySystem;

  private readonly minusH: Float64Array;
  private readonly diagSlot: Int32Array;
  private readonly blockSlots: Int32Array[];
  private readonly coef: Float64Array;
  private readonly block: Float64Array;
  /** Per numerical lead, its last NUMERICAL_CACHE_SIZE blocks by z and sheet (oldest first). */
  private readonly numericalCache: Map<string, NumericalBlocks>[];

  constructor(system: CavitySystem) {
    this.system = system;
    const lattice = system.lattice;
    this.n = lattice.onsite.length;
    this.sites = system.sites;
    this.hopping = system.hopping;
    this.leadCount = system.leads.length;
    const { rows, cols } = hamiltonianEntries(lattice);
    for (const lead of system.leads) {
      for (const p of lead.mouth)
        for (const q of lead.mouth) {
          rows.push(p);
          cols.push(q);
        }
    }
    const pattern = buildPattern(this.n, rows, cols);
    this.colPtr = pattern.colPtr;
    this.rowIdx = pattern.rowIdx;
    this.minusH = new Float64Array(2 * pattern.rowIdx.length);
    addHamiltonian(lattice, pattern, -1, this.minusH);
    this.diagSlot = new Int32Array(this.n);
    for (let s = 0; s < this.n; s++) this.diagSlot[s] = patternSlot(pattern, s, s);
    let widest = 0;
    this.blockSlots = system.leads.map((lead) => {
      const w = lead.mouth.length;
      widest = Math.max(widest, w);
      const slots = new Int32Array(w * w);
      for (let p = 0; p < w; p++) for (let q = 0; q < w; q++) slots[p * w + q] = patternSlot(pattern, lead.mouth[p], lead.mouth[q]);
      return slots;
    });
    this.coef = new Float64Array(2 * widest);
    this.block = new Float64Array(2 * widest * widest);

    this.numericalCache = system.leads.map(() => new Map());
    const all = system.leads.flatMap((l) => (l.numerical ? [...l.numerical.thresholds] : leadThresholds(l.channels))).sort((x, y) => x - y);
    const merged: number[] = [];
    const tol = 1e-12 * Math.max(1, system.hopping);
    for (const e of all) if (!merged.length || e - merged[merged.length - 1] > tol) merged.push(e);
    this.thresholds = merged;
  }

  /** Open flags of every channel of every lead for the threshold interval containing reE. */
  sheetAt(reE: number): SheetFlags {
    return this.system.leads.map((l) => (l.numerical ? l.numerical.sheetAt(reE) : channelFlags(l.channels, reE)));
  }

  assemble(z: Complex, sheet: SheetFlags, out: Float64Array): void {
    this.checkArguments('assemble', sheet, out);
    out.set(this.minusH);
    for (let s = 0; s < this.n; s++) {
      out[2 * this.diagSlot[s]] += z.re;
      out[2 * this.diagSlot[s] + 1] += z.im;
    }
    this.system.leads.forEach((lead, l) => {
      if (lead.numerical) return this.subtractNumerical(l, this.numericalBlocks(l, z, sheet).sigma, out);
      selfEnergyCoefficients(lead.channels, z.re, z.im, sheet[l], this.coef);
      this.subtractBlock(l, out);
    });
  }

  assembleDerivative(z: Complex, sheet: SheetFlags, out: Float64Array): void {
    this.checkArguments('assembleDerivative', sheet, out);
    out.fill(0);
    for (let s = 0; s < this.n; s++) out[2 * this.diagSlot[s]] = 1;
    this.system.leads.forEach((lead, l) => {
      if (lead.numerical) return this.subtractNumerical(l, this.numericalBlocks(l, z, sheet).derivative, out);
      selfEnergyDerivativeCoefficients(lead.channels, z.re, z.im, sheet[l], this.coef);
      this.subtractBlock(l, out);
    });
  }

  /** ψ†Γ_ℓψ = −2·Im(ψ†Σ_ℓψ) = Σ_m 2t·Im(λ_m)·|Σ_p χ_m(p) e^{iθ_p} ψ_p|². Cost O(W²). */
  leadWidthForm(z: Complex, sheet: SheetFlags, lead: number, psi: Float64Array): number {
    const l = this.system.leads[lead];
    if (!l) throw new RangeError(`leadWidthForm: lead ${lead} does not exist (the cavity has ${this.leadCount} leads)`);
    if (psi.length < 2 * this.n) throw new RangeError(`leadWidthForm: psi has length ${psi.length}, expected 2·n = ${2 * this.n}`);
    if (l.numerical) {
      // −2·Im(ψ_m†Σψ_m) over the mouth
      const sigma = this.numericalBlocks(lead, z, sheet).sigma;
      const w = l.mouth.length;
      let im = 0;
      for (let p = 0; p < w; p++)
        for (let q = 0; q < w; q++) {
          const a = l.mouth[p];
          const b = l.mouth[q];
          const sr = sigma[2 * (p * w + q)];
          const si = sigma[2 * (p * w + q) + 1];
          const xr = sr * psi[2 * b] - si * psi[2 * b + 1];
          const xi = sr * psi[2 * b + 1] + si * psi[2 * b];
          im += psi[2 * a] * xi - psi[2 * a + 1] * xr;
        }
      return -2 * im;
    }
    const ch = l.channels;
    const w = ch.width;
    selfEnergyCoefficients(ch, z.re, z.im, sheet[lead], this.coef);
    let sum = 0;
    for (let m = 0; m < w; m++) {
      let ar = 0;
      let ai = 0;
      for (let p = 0; p < w; p++) {
        const s = l.mouth[p];
        const c = Math.cos(l.theta[p]);
        const sn = Math.sin(l.theta[p]);
        const x = ch.chi[m * w + p];
        ar += x * (c * psi[2 * s] - sn * psi[2 * s + 1]);
        ai += x * (c * psi[2 * s + 1] + sn * psi[2 * s]);
      }
      // coef = −tλ, so 2t·Im λ = −2·Im coef.
      sum += -2 * this.coef[2 * m + 1] * (ar * ar + ai * ai);
    }
    return sum;
  }

  /** −H on the pattern (interleaved complex, length 2·nnz, a copy): T(z) without z and Σ. */
  minusHamiltonian(): Float64Array {
    return this.minusH.slice();
  }

  /** Unknown indices of lead ℓ's mouth sites (p = 1..W). */
  mouthSites(lead: number): Int32Array {
    return this.system.leads[lead].mouth;
  }

  /** 1-based indices of lead ℓ's open channels at a real energy E (meV). */
  openChannels(lead: number, energy: number): number[] {
    const out: number[] = [];
    const numerical = this.system.leads[lead].numerical;
    if (numerical) return Array.from({ length: numerical.channels(energy).count }, (_, c) => c + 1);
    channelFlags(this.system.leads[lead].channels, energy).forEach((open, m) => open && out.push(m + 1));
    return out;
  }

  /** Σ_ℓ(z) on lead ℓ's mouth, dense W×W row-major interleaved. */
  selfEnergy(lead: number, z: Complex, sheet: SheetFlags = this.sheetAt(z.re)): Float64Array {
    const l = this.system.leads[lead];
    const w = l.mouth.length;
    if (l.numerical) return this.numericalBlocks(lead, z, sheet).sigma.slice();
    const coef = new Float64Array(2 * w);
    selfEnergyCoefficients(l.channels, z.re, z.im, sheet[lead], coef);
    return mouthBlock(l.channels, l.theta, coef, new Float64Array(2 * w * w));
  }

  /**
   * The coupling matrix W at a real energy E: one column per open channel,
   * sqrt(2t sin k_m)·e^{−iθ_p}χ_m(p) on its lead's mouth, so Γ_ℓ = W_ℓW_ℓ†.
   * sin k_m = sqrt(1 − w_m²), w_m = (ε_m − E)/(2t). Cost O(n·N_open).
   * onMouth: the columns' rows on the mouth sites only, in mouthOrder (every lead's
   * mouth in turn; M rows instead of n), where they vanish nowhere else. Cost O(M·N_open).
   */
  couplingColumns(energy: number, onMouth = false): CouplingColumns {
    const t = this.hopping;
    const leadOf: number[] = [];
    const channelOf: number[] = [];
    const perLead: number[] = [];
    // a numerical lead's channels are computed once here and serve both its open list and its columns
    const numericalColumns = this.system.leads.map((l) => (l.numerical ? l.numerical.channels(energy) : undefined));
    for (let k = 0; k < this.leadCount; k++) {
      const num = numericalColumns[k];
      const open = num ? Array.from({ length: num.count }, (_, c) => c + 1) : this.openChannels(k, energy);
      perLead.push(open.length);
      for (const m of open) {
        leadOf.push(k);
        channelOf.push(m);
      }
    }
    const count = leadOf.length;
    // row of lead ℓ's p-th mouth site: the site itself, or with onMouth its place in mouthOrder
    const rowStart: number[] = [];
    let rows = 0;
    for (const l of this.system.leads) {
      rowStart.push(rows);
      rows += l.mouth.length;
    }
    const height = onMouth ? rows : this.n;
    const values = new Float64Array(2 * height * count);
    for (let c = 0; c < count; c++) {
      const l = this.system.leads[leadOf[c]];
      const num = numericalColumns[leadOf[c]];
      if (num) {
        for (let p = 0; p < l.mouth.length; p++) {
          const s = onMouth ? rowStart[leadOf[c]] + p : l.mouth[p];
          values[2 * (c * height + s)] = num.columns[2 * (p * num.count + channelOf[c] - 1)];
          values[2 * (c * height + s) + 1] = num.columns[2 * (p * num.count + channelOf[c] - 1) + 1];
        }
        continue;
      }
      const ch = l.channels;
      const m = channelOf[c] - 1;
      const w = (ch.energies[m] - energy) / (2 * t);
      const amp = Math.sqrt(2 * t * Math.sqrt(Math.max(0, 1 - w * w)));
      for (let p = 0; p < ch.width; p++) {
        const x = amp * ch.chi[m * ch.width + p];
        const s = onMouth ? rowStart[leadOf[c]] + p : l.mouth[p];
        values[2 * (c * height + s)] = x * Math.cos(l.theta[p]);
        values[2 * (c * height + s) + 1] = -x * Math.sin(l.theta[p]);
      }
    }
    return { count, values, lead: Int32Array.from(leadOf), channel: Int32Array.from(channelOf), perLead };
  }

  private checkArguments(where: string, sheet: SheetFlags, out: Float64Array): void {
    if (out.length < 2 * this.rowIdx.length) throw new RangeError(`${where}: out has length ${out.length}, expected 2·nnz = ${2 * this.rowIdx.length}`);
    if (sheet.length !== this.leadCount) throw new RangeError(`${where}: sheet has flags for ${sheet.length} leads, the cavity has ${this.leadCount}`);
    this.system.leads.forEach((l, k) => {
      if (l.numerical) {
        if (sheet[k].length !== l.numerical.thresholds.length)
          throw new RangeError(`${where}: sheet[${k}] has ${sheet[k].length} flags, numerical lead ${k} has ${l.numerical.thresholds.length} thresholds`);
        return;
      }
      if (sheet[k].length !== l.mouth.length)
        throw new RangeError(`${where}: sheet[${k}] has ${sheet[k].length} flags, lead ${k} has ${l.mouth.length} channels`);
    });
  }

  /** Σ and dΣ/dz of a numerical lead at (z, sheet), cached for the last point (assemble and its derivative share it). */
  /**
   * Σ of a numerical lead at z on the sheet, with dΣ/dz computed on first use; the last few are
   * kept (a search comes back to a node's z for its derivative, its refinement or the
   * certificate). Only a cache: the numbers are those of a fresh computation.
   */
  private numericalBlocks(lead: number, z: Complex, sheet: SheetFlags): NumericalBlocks {
    const key = `${z.re},${z.im},${sheet[lead].map(Number).join('')}`;
    const cache = this.numericalCache[lead];
    const cached = cache.get(key);
    if (cached) return cached;
    const parts = this.system.leads[lead].numerical!.selfEnergyParts(z.re, z.im, sheet[lead]);
    let derivative: Float64Array | undefined;
    const fresh: NumericalBlocks = {
      sigma: parts.sigma,
      get derivative() {
        derivative ??= parts.derivative();
        return derivative;
      },
    };
    if (cache.size >= NUMERICAL_CACHE_SIZE) cache.delete(cache.keys().next().value!);
    cache.set(key, fresh);
    return fresh;
  }

  private subtractNumerical(lead: number, block: Float64Array, out: Float64Array): void {
    const w = this.system.leads[lead].mouth.length;
    const slots = this.blockSlots[lead];
    for (let e = 0; e < w * w; e++) {
      out[2 * slots[e]] -= block[2 * e];
      out[2 * slots[e] + 1] -= block[2 * e + 1];
    }
  }

  private subtractBlock(lead: number, out: Float64Array): void {
    const l = this.system.leads[lead];
    const w = l.mouth.length;
    mouthBlock(l.channels, l.theta, this.coef, this.block);
    const slots = this.blockSlots[lead];
    for (let e = 0; e < w * w; e++) {
      out[2 * slots[e]] -= this.block[2 * e];
      out[2 * slots[e] + 1] -= this.block[2 * e + 1];
    }
  }
}
