import { type CavityModelInput, type Lead, MAX_GRID_POINTS, type Shape } from '../../../shared/model/cavity-model';
import { type LatticeKind, placementOf } from '../../../shared/model/lattice-geometry';
import { addLeadStub } from './lead-stub';
import { graphene, starterModel } from './model-form';

/** The square lattice's spacing when a honeycomb model turns square: the form's starting value (nm). */
const SQUARE_SPACING = starterModel.spacing;

/**
 * A new graphene model's starting point: a dot of radius 4.5 nm on the honeycomb of the
 * graphene preset (a_CC = 0.142 nm, t = 2.7 eV), joined by stubs to a zigzag lead of 8 chains
 * on each side, with dangling atoms removed (the usual clean-up of an etched edge).
 */
export function grapheneStarter(): CavityModelInput {
  const nx = 100;
  const ny = 60;
  const placement = placementOf('honeycomb', graphene.acc);
  const leads: Lead[] = [
    { side: 'left', start: 26, width: 8, offset: 0 },
    { side: 'right', start: 26, width: 8, offset: 0 },
  ];
  // Centred in the 12.3 nm × 12.9 nm grid.
  let shape: Shape = { kind: 'disk', cx: 6.15, cy: 6.4, radius: 4.5 };
  for (const lead of leads) {
    const joined = addLeadStub(shape, lead, nx, ny, placement);
    if (joined.ok) shape = joined.shape;
  }
  return {
    name: '',
    spacing: graphene.acc,
    lattice: { kind: 'honeycomb', hopping: graphene.hopping, removeDangling: true },
    grid: { nx, ny },
    shape,
    field: 0,
    leads,
    potential: [],
  };
}

/** The parts of a document a lattice switch may replace wholesale while the user has not touched them. */
const layout = (d: CavityModelInput) => JSON.stringify([d.spacing, d.grid?.nx, d.grid?.ny, d.shape, d.leads]);

/**
 * The document after the user picks another lattice, and what to tell them. An untouched new
 * model starts over from that lattice's starter (a GaAs rectangle, or a graphene dot). Otherwise
 * lengths keep their meaning: the shape (nm) stays, the spacing becomes the preset's (a_CC =
 * 0.142 nm, or a = 5 nm), and the grid and the lead mouths are re-counted to keep their extent
 * in nm, unless that would pass the cap on grid points, in which case they keep their counts and
 * the note says so.
 */
export function switchLattice(doc: CavityModelInput, to: LatticeKind, saved: boolean): { document: CavityModelInput; note: string | null } {
  const keep = { name: doc.name ?? '', ...(doc.notes ? { notes: doc.notes } : {}) };
  const untouched = !saved && (layout(doc) === layout(starterModel) || layout(doc) === layout(grapheneStarter()));
  if (untouched) {
    const start = to === 'honeycomb' ? grapheneStarter() : starterModel;
    const note =
      to === 'honeycomb'
        ? `Started from a graphene dot: a_CC = ${graphene.acc} nm, t = ${graphene.hopping} eV, two zigzag leads of 8 chains.`
        : 'Started from the GaAs rectangle.';
    return { document: { ...structuredClone(start), ...keep }, note };
  }
  // Two lattices: the one left is the other one (the document may already name the new one, as the form's select changes first).
  const from: LatticeKind = to === 'honeycomb' ? 'square' : 'honeycomb';
  const oldSpacing = Number(doc.spacing);
  const newSpacing = to === 'honeycomb' ? graphene.acc : SQUARE_SPACING;
  const rest = { ...doc };
  delete rest.lattice;
  delete rest.material;
  const next: CavityModelInput = {
    ...rest,
    spacing: newSpacing,
    ...(to === 'honeycomb' ? { lattice: { kind: 'honeycomb', hopping: graphene.hopping } } : { material: 'gaas' }),
  };
  const nx = Number(doc.grid?.nx);
  const ny = Number(doc.grid?.ny);
  if (!(oldSpacing > 0) || !(nx > 0) || !(ny > 0)) return { document: next, note: null };
  const before = placementOf(from, oldSpacing);
  const after = placementOf(to, newSpacing);
  const sx = before.dx / after.dx;
  const sy = before.dy / after.dy;
  const nx2 = Math.max(1, Math.round(nx * sx));
  const ny2 = Math.max(1, Math.round(ny * sy));
  const widthNm = (nx * before.dx).toPrecision(3);
  const heightNm = (ny * before.dy).toPrecision(3);
  if (nx2 * ny2 > MAX_GRID_POINTS) {
    return {
      document: next,
      note:
        `Keeping the ${widthNm} nm × ${heightNm} nm extent would take a ${nx2} × ${ny2} grid, above the cap of ${MAX_GRID_POINTS} points: ` +
        `the grid keeps its ${nx} × ${ny} sites (now ${(nx * after.dx).toPrecision(3)} nm × ${(ny * after.dy).toPrecision(3)} nm); shrink the shape to fit.`,
    };
  }
  const leads = (doc.leads ?? []).map((lead) => {
    const s = lead.side === 'left' || lead.side === 'right' ? sy : sx;
    return { ...lead, start: Math.round(lead.start * s), width: Math.max(1, Math.round(lead.width * s)) };
  });
  return {
    document: { ...next, grid: { nx: nx2, ny: ny2 }, leads },
    note: `The grid became ${nx2} × ${ny2} sites to keep its ${widthNm} nm × ${heightNm} nm extent; the lead mouths were re-counted to match.`,
  };
}
