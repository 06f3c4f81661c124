/**
 * Where the channels of a numerical lead are open (docs/physics-model.md, "Lattices with
 * leads"): the lead's thresholds are its band edges (numerical-lead-bands.ts); inside each
 * piece between two of them the number N of outgoing channels is fixed, and it is counted
 * at the piece's middle from the modes (numerical-lead-modes.ts: propagating modes with
 * v > 0). Channels of a numerical lead are numbered 1..N(E) at each energy, so channel c is
 * open wherever N(E) ≥ c: one range per maximal run of pieces with N ≥ c. For the square
 * lattice without field this is the closed form's channel m = c open on
 * (ε_c − 2t, ε_c + 2t) only for the lowest channels; in general a channel number may be open
 * on several separate ranges (a band with two minima, as in a zigzag ribbon, adds two channels).
 * Energies in meV.
 */
import type { CavityModel } from '../model/cavity-model';
import { modelLattice } from '../model/cavity-model';
import { deriveFigures, type DerivedFigures } from '../model/derived-figures';
import { presetLeadCell } from './lead-cell';
import { leadBandEdges, pieceThresholds } from './numerical-lead-bands';
import { realModes, type LeadCellBlocks } from './numerical-lead-modes';
import { modelTightBinding } from './tight-binding';

/** Channel `channel` (1-based) is open for opens < E < closes. */
interface ChannelRange {
  channel: number;
  opens: number;
  closes: number;
}

/** The open ranges of every channel number of a lead cell, and its thresholds. Cost O(kSamples·n³ + pieces·n³). */
function leadChannelRanges(cell: LeadCellBlocks, kSamples = 128): { thresholds: number[]; ranges: ChannelRange[] } {
  const thresholds = pieceThresholds(leadBandEdges(cell, kSamples));
  const counts: number[] = [];
  for (let p = 0; p + 1 < thresholds.length; p++) {
    // N is the same anywhere inside the piece: away from its middle when bands cross exactly
    // there (E = 0 of a metallic armchair ribbon, by electron–hole symmetry).
    for (const f of [0.5, 0.3719, 0.6281]) {
      try {
        const e = thresholds[p] + f * (thresholds[p + 1] - thresholds[p]);
        counts.push(realModes(cell, e).propagating.filter((m) => m.velocity > 0).length);
        break;
      } catch (err) {
        if (!(err instanceof Error && /move both ways|singular matrix/.test(err.message)) || f !== 0.5) throw err;
      }
    }
  }
  const ranges: ChannelRange[] = [];
  const most = Math.max(0, ...counts);
  for (let c = 1; c <= most; c++) {
    let p = 0;
    while (p < counts.length) {
      if (counts[p] < c) {
        p++;
        continue;
      }
      let q = p;
      while (q + 1 < counts.length && counts[q + 1] >= c) q++;
      ranges.push({ channel: c, opens: thresholds[p], closes: thresholds[q + 1] });
      p = q + 1;
    }
  }
  return { thresholds, ranges };
}

/** Whether a model's leads are numerical ones in the engine: every lead off the square lattice, and square leads carrying a field. */
function hasNumericalLeads(model: Pick<CavityModel, 'lattice' | 'field' | 'fieldInLeads' | 'leads'>): boolean {
  if (model.leads.length === 0) return false;
  return modelLattice(model).kind !== 'square' || (model.fieldInLeads === true && model.field !== 0);
}

/**
 * The channel ranges of lead k of a parsed model as the engine computes its numerical lead
 * (lead-cell.ts; the cavity is not needed: the bands are the ribbon's). Cost as leadChannelRanges.
 */
function modelLeadChannelRanges(model: CavityModel, k: number): ChannelRange[] {
  const lead = model.leads[k];
  const { nx, ny } = model.grid;
  const cell = presetLeadCell(modelTightBinding(model), lead.side, lead.start, lead.width, lead.offset, nx, ny, () => false, {
    fieldInLead: model.fieldInLeads === true,
  });
  return cell.size <= FIGURE_CELL_LIMIT ? leadChannelRanges(cell).ranges : [];
}

/**
 * Largest lead cell (sites) whose channel ranges the figures compute: the band edges and one
 * mode solve per piece take seconds at 24 sites (a 20-chain zigzag or 20-line armchair lead, 40
 * sites, 2.2–2.5 s CPU since the faster band edges; a 40-site square lead in a field 17 s, most
 * of it the mode solves of its many Landau pieces). Wider leads list none; the engine still
 * checks a scattering state's channel when it computes the map.
 */
const FIGURE_CELL_LIMIT = 24;

/**
 * The model's derived figures (shared/model/derived-figures.ts) with the channel ranges of its
 * numerical leads filled in: what the server stores with a model version and the CLI's `info`
 * prints. Cost: deriveFigures, plus leadChannelRanges per numerical lead.
 */
export function deriveFiguresWithLeads(model: CavityModel, siteCount: number, energy?: number): DerivedFigures {
  const numerical = hasNumericalLeads(model)
    ? model.leads.map((_, k) =>
        modelLeadChannelRanges(model, k).map((r) => ({ channel: r.channel, transverse: 0.5 * (r.opens + r.closes), opens: r.opens, closes: r.closes })),
      )
    : undefined;
  return deriveFigures(model, siteCount, energy, numerical);
}
