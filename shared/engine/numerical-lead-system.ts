/**
 * Numerical leads (numerical-lead.ts) in a cavity system: a square-lattice system's leads
 * switched to them (numerical-lead-square.ts), field-free (the contract's leads, results
 * unchanged to rounding) or with the field in the leads; and the leads of any other lattice,
 * built from their cells as ribbons of the cavity's lattice (lead-cell.ts).
 */
import type { CavityModel, LeadSide } from '../model/cavity-model';
import { InvalidModelError, type CavitySystem, type SystemLead } from './cavity-system';
import { presetLeadCell } from './lead-cell';
import type { TightBindingParameters } from './tight-binding';
import { leadChannels } from './leads';
import { NumericalLead, type NumericalLeadOptions, type NumericalLeadSpec } from './numerical-lead';
import type { BandEdge } from './numerical-lead-bands';
import { squareLatticeLead } from './numerical-lead-square';

interface NumericalLeadsOptions {
  /** Let the field act in the leads too (default false: the contract's field-free leads). */
  fieldInLeads?: boolean;
  /** k samples for the band edges (default 128). */
  kSamples?: number;
  /** Band edges found before for each lead (leadEdgesOf of the same model's system); null: search. */
  edges?: readonly (readonly BandEdge[] | null)[];
}

/** A copy of the system whose leads are numerical leads. Cost O(kSamples·W³) per lead. */
export function withNumericalLeads(system: CavitySystem, options: NumericalLeadsOptions = {}): CavitySystem {
  const leads = system.leads.map((lead, k) => {
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
    return { ...lead, numerical: new NumericalLead(spec, { kSamples: options.kSamples, edges: options.edges?.[k] ?? undefined }) };
  });
  return { ...system, leads };
}

/**
 * A system lead computed from any cell (e.g. a honeycomb lead cell from the lattice's
 * lead cells): `mouth` holds the unknown index of each contact, in the order of the
 * coupling's columns. The closed-form fields are left empty (width 0): nothing reads
 * them once `numerical` is set.
 */
function numericalSystemLead(name: string, side: LeadSide, mouth: Int32Array, spec: NumericalLeadSpec, options: NumericalLeadOptions = {}): SystemLead {
  if (mouth.length !== spec.mouthSize) throw new RangeError(`numericalSystemLead: ${mouth.length} mouth sites for a coupling to ${spec.mouthSize}`);
  return { name, side, channels: leadChannels(0, 0, 0), mouth, theta: new Float64Array(mouth.length), numerical: new NumericalLead(spec, options) };
}

/**
 * The leads of a model on any lattice as numerical system leads: each lead's cell from the
 * preset (presetLeadCell), with the field in the lead when the model asks for it
 * (`fieldInLeads`), its contacts as unknown indices. Throws InvalidModelError (path
 * leads.k) for a lead bonded to no cavity site. Cost O(kSamples·m³) per lead, m the cell's sites.
 */
export function latticeLeads(
  model: CavityModel,
  mask: Uint8Array,
  siteIndex: Int32Array,
  p: TightBindingParameters,
  edges?: readonly (readonly BandEdge[] | null)[],
): SystemLead[] {
  const { nx, ny } = model.grid;
  const inCavity = (i: number, j: number) => mask[i * ny + j] === 1;
  return model.leads.map((lead, k) => {
    const cell = presetLeadCell(p, lead.side, lead.start, lead.width, lead.offset, nx, ny, inCavity, { fieldInLead: model.fieldInLeads === true });
    const name = lead.name ?? `${lead.side}${k}`;
    if (cell.contacts.i.length === 0) {
      throw new InvalidModelError([
        {
          path: ['leads', k, 'width'],
          message: `lead '${name}' is bonded to no atom of the cavity (on the honeycomb a top or bottom lead touches every other atom of the edge row): widen it or move it by one site`,
        },
      ]);
    }
    const mouth = Int32Array.from(cell.contacts.i, (i, q) => siteIndex[i * ny + cell.contacts.j[q]]);
    return numericalSystemLead(
      name,
      lead.side,
      mouth,
      { cell: { size: cell.size, h0: cell.h0, h1: cell.h1 }, mouthSize: mouth.length, coupling: cell.coupling },
      { edges: edges?.[k] ?? undefined },
    );
  });
}

/**
 * The band edges of each of a system's leads (null for a closed-form lead): what
 * buildCavitySystem needs (its `leadEdges`) to build the same leads again without their
 * threshold search, e.g. on the threads of a pole-search pool. Plain objects (structured-clone).
 */
export function leadEdgesOf(system: CavitySystem): (BandEdge[] | null)[] {
  return system.leads.map((lead) => (lead.numerical ? lead.numerical.edges.map((e) => ({ ...e })) : null));
}
