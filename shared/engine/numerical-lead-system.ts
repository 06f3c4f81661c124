/**
 * Switches a cavity system's leads to numerical leads (numerical-lead.ts), built from
 * square-lattice cells (numerical-lead-square.ts): field-free (the contract's leads,
 * results unchanged to rounding) or with the field in the leads.
 */
import type { CavitySystem } from './effective-hamiltonian';
import { NumericalLead } from './numerical-lead';
import { squareLatticeLead } from './numerical-lead-square';

export interface NumericalLeadsOptions {
  /** Let the field act in the leads too (default false: the contract's field-free leads). */
  fieldInLeads?: boolean;
  /** k samples for the band edges (default 128). */
  kSamples?: number;
}

/** A copy of the system whose leads are numerical leads. Cost O(kSamples·W³) per lead. */
export function withNumericalLeads(system: CavitySystem, options: NumericalLeadsOptions = {}): CavitySystem {
  const leads = system.leads.map((lead) => {
    const mouthI = Int32Array.from(lead.mouth, (s) => system.sites.i[s]);
    const mouthJ = Int32Array.from(lead.mouth, (s) => system.sites.j[s]);
    const spec = squareLatticeLead({
      side: lead.side,
      mouthI,
      mouthJ,
      hopping: lead.channels.hopping,
      offset: lead.channels.offset,
      flux: system.flux,
      fieldInLead: options.fieldInLeads ?? false,
    });
    return { ...lead, numerical: new NumericalLead(spec, { kSamples: options.kSamples }) };
  });
  return { ...system, leads };
}
