/**
 * The device layout of a cavity model for the fabrication package: polygons in nm on a fixed
 * layer map, from which the GDSII, DXF, SVG and the spec sheet's drawing are written.
 *
 * Frame: x to the right, y up, in nm, origin at the lower-left corner of the grid, so the
 * cell of site (i, j) is [i·a, (i+1)·a] × [j·a, (j+1)·a] (model coordinates + a/2: the model
 * puts site (i, j) at (i·a, j·a)).
 *
 * Layer map (datatype 0 throughout):
 *   1      cavity, traced from the site mask (the union of the lattice cells)
 *   2      cavity, the drawn shape, where the model is one drawn primitive
 *   3      leads: a stub LEAD_STUB_SPACINGS lattice spacings long on each mouth (the modelled
 *          lead is semi-infinite)
 *   10 + k gate k: potential term k of the model, a block as its rectangle, a Gaussian as its
 *          1σ circle (disorder and per-site terms have no outline and are listed as not drawn)
 */
import type { CavityModel } from '../model/cavity-model';
import { drawnOutline, segmentsFor } from './drawn-outline';
import { traceMaskOutline, type TracedOutline } from './outline-trace';
import { bridgeHoles, ellipseRing, rectangleRing, type Ring } from './polygon';

export const LAYERS = { cavityTraced: 1, cavityDrawn: 2, leads: 3, firstGate: 10 } as const;
export const LEAD_STUB_SPACINGS = 10;

export interface LayoutLayer {
  layer: number;
  datatype: number;
  name: string;
  description: string;
  polygons: Ring[];
}

export interface DeviceLayout {
  spacingNm: number;
  grid: { nx: number; ny: number };
  siteCount: number;
  /** 'traced' only, or 'traced and drawn' when layer 2 holds the drawn shape too. */
  outline: 'traced' | 'traced and drawn';
  /** Area of the traced cavity (nm²) = sites·a². */
  cavityAreaNm2: number;
  /** Bounding box of the traced cavity (nm). */
  cavityBox: { xmin: number; ymin: number; xmax: number; ymax: number };
  /** Bounding box of everything drawn (nm). */
  extent: { xmin: number; ymin: number; xmax: number; ymax: number };
  layers: LayoutLayer[];
  /** Potential terms with no outline (disorder, per-site values). */
  notDrawn: string[];
}

function boxOf(rings: Ring[]) {
  let xmin = Infinity,
    ymin = Infinity,
    xmax = -Infinity,
    ymax = -Infinity;
  for (const r of rings)
    for (const [x, y] of r) {
      xmin = Math.min(xmin, x);
      xmax = Math.max(xmax, x);
      ymin = Math.min(ymin, y);
      ymax = Math.max(ymax, y);
    }
  return { xmin, ymin, xmax, ymax };
}

/** Lays out a parsed, valid model and its site mask. Cost O(nx·ny + vertices). */
export function buildDeviceLayout(model: CavityModel, mask: Uint8Array): DeviceLayout {
  let siteCount = 0;
  for (let s = 0; s < mask.length; s++) siteCount += mask[s];
  return layoutOfOutline(model, traceMaskOutline(mask, model.grid.nx, model.grid.ny, model.spacing), siteCount);
}

/**
 * Lays out a parsed, valid model from its outline already traced (the one stored with the
 * model version) and its site count: no rasterising, no tracing. Cost O(vertices).
 */
export function layoutOfOutline(model: CavityModel, traced: TracedOutline, siteCount: number): DeviceLayout {
  const a = model.spacing;
  const { nx, ny } = model.grid;
  const cavity = traced.parts.map((p) => bridgeHoles(p.outer, p.holes));
  const layers: LayoutLayer[] = [
    {
      layer: LAYERS.cavityTraced,
      datatype: 0,
      name: 'cavity-traced',
      description: `cavity traced from the site mask: the union of ${siteCount} lattice cells of ${a} nm`,
      polygons: cavity,
    },
  ];
  const drawn = drawnOutline(model.shape, a);
  if (drawn)
    layers.push({
      layer: LAYERS.cavityDrawn,
      datatype: 0,
      name: 'cavity-drawn',
      description: `cavity as drawn (${model.shape.kind}), which the lattice approximates`,
      polygons: drawn,
    });

  const L = LEAD_STUB_SPACINGS * a;
  const leads = model.leads.map((lead) => {
    const lo = lead.start * a;
    const hi = (lead.start + lead.width) * a;
    switch (lead.side) {
      case 'left':
        return rectangleRing(-L, lo, 0, hi);
      case 'right':
        return rectangleRing(nx * a, lo, nx * a + L, hi);
      case 'bottom':
        return rectangleRing(lo, -L, hi, 0);
      case 'top':
        return rectangleRing(lo, ny * a, hi, ny * a + L);
    }
  });
  if (leads.length) {
    const names = model.leads.map((l, k) => `${l.name ?? `lead ${k}`} (${l.side}, ${l.width} sites)`).join(', ');
    layers.push({
      layer: LAYERS.leads,
      datatype: 0,
      name: 'leads',
      description: `lead stubs ${LEAD_STUB_SPACINGS}·a long (the modelled leads are semi-infinite): ${names}`,
      polygons: leads,
    });
  }

  const notDrawn: string[] = [];
  const d = a / 2;
  model.potential.forEach((term, k) => {
    const layer = LAYERS.firstGate + k;
    if (term.kind === 'block') {
      layers.push({
        layer,
        datatype: 0,
        name: `gate-${k}`,
        description: `gate ${k}: block potential ${term.value} meV`,
        polygons: [rectangleRing(term.x0 + d, term.y0 + d, term.x0 + term.width + d, term.y0 + term.height + d)],
      });
    } else if (term.kind === 'gaussian') {
      layers.push({
        layer,
        datatype: 0,
        name: `gate-${k}`,
        description: `gate ${k}: Gaussian potential, peak ${term.amplitude} meV, drawn at its 1σ circle (σ = ${term.sigma} nm)`,
        polygons: [ellipseRing(term.cx + d, term.cy + d, term.sigma, term.sigma, segmentsFor(term.sigma))],
      });
    } else {
      notDrawn.push(
        term.kind === 'disorder'
          ? `potential ${k}: disorder of strength ${term.strength} meV (no outline)`
          : `potential ${k}: ${term.values.length} per-site values (no outline)`,
      );
    }
  });

  return {
    spacingNm: a,
    grid: { nx, ny },
    siteCount,
    outline: drawn ? 'traced and drawn' : 'traced',
    cavityAreaNm2: traced.area,
    cavityBox: boxOf(cavity),
    extent: boxOf(layers.flatMap((l) => l.polygons)),
    layers,
    notDrawn,
  };
}
