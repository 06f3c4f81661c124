/**
 * A cavity built from a model document, as the operator (effective-hamiltonian.ts) and the
 * maps read it: the lattice and its leads, closed-form or numerical.
 */
import type { CavityModel, LeadSide, ModelIssue } from '../model/cavity-model';
import { formatIssuePath } from '../model/cavity-model';
import type { SitePlacement } from '../model/lattice-geometry';
import type { CavityLattice } from './lattice';
import type { LeadChannels } from './leads';
import type { NumericalLead } from './numerical-lead';

/** Thrown when a model document fails validation; carries the field-tagged issues. */
export class InvalidModelError extends Error {
  constructor(readonly issues: ModelIssue[]) {
    super(`invalid cavity model: ${issues.map((i) => `${formatIssuePath(i.path)}: ${i.message}`).join('; ')}`);
    this.name = 'InvalidModelError';
  }
}

/** One lead attached to the cavity. */
export interface SystemLead {
  name: string;
  side: LeadSide;
  channels: LeadChannels;
  /** Unknown index of each mouth site, p = 1..W order. */
  mouth: Int32Array;
  /** Phase θ_p of each lead-cavity bond. */
  theta: Float64Array;
  /**
   * When set, the lead is computed from its unit cell (numerical-lead.ts) instead of the
   * closed form: its sheet flags are one per threshold of the lead (E above it), its
   * channels are numbered 1..N by the numerical modes, and `channels`/`theta` are unused
   * for Σ. Set by withNumericalLeads (numerical-lead-system.ts).
   */
  numerical?: NumericalLead;
}

/** Everything the operator needs, derived once from a model. */
export interface CavitySystem {
  model: CavityModel;
  massRatio: number;
  /** Lattice spacing a (nm; mm in the microwave mode); a_CC on the honeycomb. */
  spacing: number;
  /** Where the lattice's sites sit (lattice-geometry.ts). */
  placement: SitePlacement;
  mask: Uint8Array;
  lattice: CavityLattice;
  sites: { i: Int32Array; j: Int32Array };
  /** t (meV; mm⁻² in the microwave mode). */
  hopping: number;
  /** φ per plaquette. */
  flux: number;
  leads: SystemLead[];
}
