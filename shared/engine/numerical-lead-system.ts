/**
 * Switches a cavity system's leads to numerical leads (numerical-lead.ts), built from
 * square-lattice cells (numerical-lead-square.ts): field-free (the contract's leads,
 * results unchanged to rounding) or with the field in the leads.
 */
import type { LeadSide } from '../model/cavity-model';
import type { CavitySystem, SystemLead } from './effective-hamiltonian';
import { leadChannels } from './leads';
import { NumericalLead, type NumericalLeadOptions, type NumericalLeadSpec } from './numerical-lead';
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

/**
 * A system lead computed from any cell (e.g. a honeycomb lead cell from the lattice's
 * lead cells): `mouth` holds the unknown index of each contact, in the order of the
 * coupling's columns. The closed-form fields are left empty (width 0): nothing reads
 * them once `numerical` is set.
 */
export function numericalSystemLead(name: string, side: LeadSide, mouth: Int32Array, spec: NumericalLeadSpec, options: NumericalLeadOptions = {}): SystemLead {
  if (mouth.length !== spec.mouthSize) throw new RangeError(`numericalSystemLead: ${mouth.length} mouth sites for a coupling to ${spec.mouthSize}`);
  return { name, side, channels: leadChannels(0, 0, 0), mouth, theta: new Float64Array(mouth.length), numerical: new NumericalLead(spec, options) };
}
