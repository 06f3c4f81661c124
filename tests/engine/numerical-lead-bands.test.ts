import { describe, expect, it } from 'vitest';
import type { CavityModel } from '../../shared/model/cavity-model';
import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian';
import { leadCellOf } from '../../shared/engine/lead-cell';
import { leadEdgesOf } from '../../shared/engine/numerical-lead-system';
import { leadBandEdges, leadBands } from '../../shared/engine/numerical-lead-bands';
import type { LeadCellBlocks } from '../../shared/engine/numerical-lead-modes';
import { squareLatticeLead } from '../../shared/engine/numerical-lead-square';
import { fluxPerPlaquette, hoppingEnergy } from '../../shared/units/constants';
import { squareRibbonCell, zigzagRibbonCell } from './numerical-lead-systems';

/**
 * Band edges found the slow way, independent of the product's search: the sorted bands
 * sampled at `samples` k (resolution 2π/samples: two extrema of one band closer than that
 * are missed), every sampled local extremum narrowed by golden-section search on the band
 * energy alone (no derivatives, to 1e-13 in k). A narrowed point whose one-sided difference
 * slopes (over 1e-6 in k) are both above 1e-3·scale is a sharp corner: it is an edge when it
 * is an avoided crossing, i.e. the gap to the band it meets (b+1 above a maximum, b−1 below a
 * minimum), minimised by golden section within 1e-6 of it, stays above 1e-11·scale; a smaller
 * gap is an exact crossing (a kink, no edge). An extremum touching a crossing band keeps one
 * flat side. A band's extremum at the energy of one already found on it (a flat band) is
 * skipped. Edges within 1e-10·scale of each other are one edge; `multiplicity` counts them.
 */
function denseEdges(cell: LeadCellBlocks, samples: number): { energies: number[]; multiplicity: number[]; scale: number } {
  const ks = Array.from({ length: samples }, (_, i) => -Math.PI + (2 * Math.PI * i) / samples);
  const bands = ks.map((k) => leadBands(cell, k));
  let scale = 1;
  for (const b of bands) for (const e of b) scale = Math.max(scale, Math.abs(e));
  const h = (2 * Math.PI) / samples;
  const golden = (Math.sqrt(5) - 1) / 2;
  const minimise = (f: (k: number) => number, lo: number, hi: number): { k: number; value: number } => {
    let a = lo;
    let d = hi;
    let x1 = d - golden * (d - a);
    let x2 = a + golden * (d - a);
    let f1 = f(x1);
    let f2 = f(x2);
    while (d - a > 1e-13) {
      if (f1 <= f2) {
        d = x2;
        x2 = x1;
        f2 = f1;
        x1 = d - golden * (d - a);
        f1 = f(x1);
      } else {
        a = x1;
        x1 = x2;
        f1 = f2;
        x2 = a + golden * (d - a);
        f2 = f(x2);
      }
    }
    return f1 <= f2 ? { k: x1, value: f1 } : { k: x2, value: f2 };
  };
  const found: number[] = [];
  for (let b = 0; b < cell.size; b++) {
    const ofBand: number[] = [];
    for (let i = 0; i < samples; i++) {
      const e0 = bands[(i + samples - 1) % samples][b];
      const e1 = bands[i][b];
      const e2 = bands[(i + 1) % samples][b];
      const sign = e1 <= e0 && e1 < e2 ? 1 : e1 >= e0 && e1 > e2 ? -1 : 0;
      if (sign === 0) continue;
      // a flat band holds an extremum at every sample, at the same energy to rounding
      if (ofBand.some((e) => Math.abs(e - e1) <= 1e-10 * scale)) continue;
      const f = (k: number) => sign * leadBands(cell, k)[b];
      const { k, value } = minimise(f, ks[i] - h, ks[i] + h);
      const dk = 1e-6;
      const left = Math.abs(f(k) - f(k - dk)) / dk;
      const right = Math.abs(f(k + dk) - f(k)) / dk;
      if (Math.min(left, right) > 1e-3 * scale) {
        const other = b - sign;
        if (other < 0 || other >= cell.size) continue;
        const gap = minimise((q) => Math.abs(leadBands(cell, q)[other] - leadBands(cell, q)[b]), k - dk, k + dk).value;
        if (gap <= 1e-11 * scale) continue;
      }
      found.push(sign * value);
      ofBand.push(sign * value);
    }
  }
  return { ...mergeEdges(found, 1e-10 * scale), scale };
}

/** Sorted energies with those within `tol` of the previous kept one merged into it, and how many each holds. */
function mergeEdges(list: number[], tol: number): { energies: number[]; multiplicity: number[] } {
  const sorted = [...list].sort((x, y) => x - y);
  const energies: number[] = [];
  const multiplicity: number[] = [];
  for (const e of sorted)
    if (energies.length && e - energies[energies.length - 1] <= tol) multiplicity[multiplicity.length - 1]++;
    else {
      energies.push(e);
      multiplicity.push(1);
    }
  return { energies, multiplicity };
}

/**
 * A square-lattice lead of `width` rows (GaAs, a = 5 nm: t ≈ 22.7 meV) along +x with the field
 * in the lead (numerical-lead-square.ts) and a linear potential from 0 on row 0 to `slope`
 * meV on the last row (an in-plane electric field across the lead).
 */
function slopedFieldLead(width: number, fieldT: number, slope: number): LeadCellBlocks {
  const a = 5;
  const mouthI = new Int32Array(width).fill(0);
  const mouthJ = Int32Array.from({ length: width }, (_, r) => 3 + r);
  const spec = squareLatticeLead({
    side: 'right',
    mouthI,
    mouthJ,
    hopping: hoppingEnergy(a, 0.067),
    offset: 0,
    flux: fluxPerPlaquette(fieldT, a),
    fieldInLead: true,
  });
  const h0 = Float64Array.from(spec.cell.h0);
  for (let r = 0; r < width; r++) h0[2 * (r * width + r)] += (slope * r) / (width - 1);
  return { size: width, h0, h1: spec.cell.h1 };
}

/** The cell of a honeycomb lead: left = zigzag ribbon of `width` chains, top = armchair ribbon of `width` dimer lines (t = 1). */
function honeycombLead(side: 'left' | 'top', width: number): LeadCellBlocks {
  const model = {
    name: 'ribbon lead',
    spacing: 0.142,
    lattice: { kind: 'honeycomb', hopping: 0.001 },
    grid: { nx: 2 * width + 6, ny: 2 * width + 6 },
    shape: { kind: 'rectangle', x0: -0.01, y0: -0.01, width: 100, height: 100 },
    leads: [{ side, start: 2, width }],
  } as unknown as CavityModel;
  return leadCellOf(model, 0);
}

describe('thresholds of numerical leads against dense sampling', () => {
  const cases: [string, () => LeadCellBlocks][] = [
    ['zigzag ribbon, 3 chains (test cell)', () => zigzagRibbonCell(3, 1)],
    ['zigzag ribbon, 6 chains (test cell)', () => zigzagRibbonCell(6, 1)],
    ['zigzag lead, 5 chains', () => honeycombLead('left', 5)],
    ['armchair lead, 4 dimer lines', () => honeycombLead('top', 4)],
    ['armchair lead, 5 dimer lines (metallic)', () => honeycombLead('top', 5)],
    ['armchair lead, 7 dimer lines', () => honeycombLead('top', 7)],
    ['square lead, 8 sites, φ = 0.1', () => squareRibbonCell(8, 1, 0.1)],
    ['square lead, 12 sites, φ = 0.05', () => squareRibbonCell(12, 1, 0.05)],
  ];
  for (const [name, make] of cases)
    it(`${name}: the same edges to 1e-12·scale`, () => {
      const cell = make();
      const reference = denseEdges(cell, 1024);
      const edges = leadBandEdges(cell, 128).map((e) => e.energy);
      const merged: number[] = [];
      for (const e of edges) if (!merged.length || e - merged[merged.length - 1] > 1e-9 * reference.scale) merged.push(e);
      expect(merged.length).toBe(reference.energies.length);
      for (let i = 0; i < merged.length; i++) expect(Math.abs(merged[i] - reference.energies[i])).toBeLessThanOrEqual(1e-12 * reference.scale);
    });
});

describe('thresholds of square leads in a field with a potential slope, against 8,192 samples', () => {
  // Issues 15 and 9: edges missed by 128 samples, and avoided crossings with gaps of
  // 1e-9..1e-7 of the band scale, which are a maximum of the lower band and a minimum of the upper.
  const cases: [string, () => LeadCellBlocks][] = [
    ['20 sites, 3 T, 4 meV slope', () => slopedFieldLead(20, 3, 4)],
    ['20 sites, 2 T, 10 meV slope', () => slopedFieldLead(20, 2, 10)],
    ['24 sites, 3.3 T, no slope', () => slopedFieldLead(24, 3.3, 0)],
    ['30 sites, 3 T, no slope', () => slopedFieldLead(30, 3, 0)],
    ['40 sites, 3 T, 4 meV slope', () => slopedFieldLead(40, 3, 4)],
  ];
  for (const [name, make] of cases)
    it(`${name}: every edge of the reference, to 1e-12·scale`, () => {
      const cell = make();
      const reference = denseEdges(cell, 8192);
      const product = mergeEdges(
        leadBandEdges(cell).map((e) => e.energy),
        1e-10 * reference.scale,
      );
      const missed = reference.energies.filter((e) => !product.energies.some((p) => Math.abs(p - e) <= 1e-12 * reference.scale));
      const extra = product.energies.filter((p) => !reference.energies.some((e) => Math.abs(p - e) <= 1e-12 * reference.scale));
      expect({ missed, extra }).toEqual({ missed: [], extra: [] });
      expect(product.energies.length).toBe(reference.energies.length);
    }, 120_000);
});

describe('the edges of a field cell do not depend on the k grid (rounding near narrow crossings)', () => {
  // A previous search kept or dropped edges next to narrow avoided crossings by the rounding of
  // the gap at the points it happened to reach: 65 edges of a 20-site cell against 63.
  for (const [name, make] of [
    ['20 sites, 3 T, 4 meV slope', () => slopedFieldLead(20, 3, 4)],
    ['24 sites, 3.3 T, no slope', () => slopedFieldLead(24, 3.3, 0)],
  ] as [string, () => LeadCellBlocks][])
    it(`${name}: 96, 128 and 200 samples give the same edges to 1e-12·scale`, () => {
      const cell = make();
      const runs = [96, 128, 200].map((samples) => leadBandEdges(cell, samples).map((e) => e.energy));
      const scale = Math.max(1, ...runs[1].map(Math.abs));
      const [a, b, c] = runs.map((r) => mergeEdges(r, 1e-10 * scale).energies);
      for (const other of [a, c]) {
        expect(other.length).toBe(b.length);
        other.forEach((e, i) => expect(Math.abs(e - b[i])).toBeLessThanOrEqual(1e-12 * scale));
      }
    });
});

describe('building the leads again from their band edges (pole-search threads)', () => {
  // A graphene dot with armchair leads and a square dot with the field in its leads.
  const documents: [string, unknown][] = [
    [
      'graphene, armchair leads',
      {
        name: 'armchair dot',
        spacing: 0.142,
        lattice: { kind: 'honeycomb', hopping: 2.7 },
        grid: { nx: 8, ny: 6 },
        // covers grid columns 0..7 and rows 0..5 exactly (column step √3/2·a_CC, row step 3/2·a_CC)
        shape: { kind: 'rectangle', x0: -0.01, y0: -0.01, width: 8 * 0.5 * Math.sqrt(3) * 0.142, height: 6 * 1.5 * 0.142 },
        leads: [
          { side: 'bottom', start: 0, width: 8 },
          { side: 'top', start: 0, width: 8 },
        ],
      },
    ],
    [
      'square, field in the leads',
      {
        name: 'field dot',
        spacing: 5,
        material: 'gaas',
        grid: { nx: 12, ny: 10 },
        shape: { kind: 'rectangle', x0: 0, y0: 0, width: 60, height: 50 },
        field: 2,
        fieldInLeads: true,
        leads: [
          { side: 'left', start: 2, width: 6 },
          { side: 'right', start: 3, width: 6 },
        ],
      },
    ],
  ];
  for (const [name, doc] of documents)
    it(`${name}: the same thresholds and T(z), and the edges handed over are the ones used`, () => {
      const system = buildCavitySystem(doc);
      const edges = leadEdgesOf(system);
      expect(edges.every((e) => e !== null && e.length > 0)).toBe(true);
      const again = buildCavitySystem(doc, { leadEdges: edges });
      again.leads.forEach((lead, k) => expect(lead.numerical!.thresholds).toEqual(system.leads[k].numerical!.thresholds));
      const a = new EffectiveHamiltonian(system);
      const b = new EffectiveHamiltonian(again);
      const z = { re: 0.5 * (a.thresholds[0] + a.thresholds[1]), im: -0.01 * Math.abs(a.thresholds[1] - a.thresholds[0]) };
      const sheet = a.sheetAt(z.re);
      const va = new Float64Array(2 * a.colPtr[a.n]);
      const vb = new Float64Array(2 * b.colPtr[b.n]);
      a.assemble(z, sheet, va);
      b.assemble(z, sheet, vb);
      expect(Array.from(vb)).toEqual(Array.from(va));
      // edges handed over are taken as they are, not searched again
      const shifted = edges.map((list) => list!.map((e) => ({ ...e, energy: e.energy + 1 })));
      const moved = buildCavitySystem(doc, { leadEdges: shifted });
      moved.leads.forEach((lead, k) => expect(lead.numerical!.thresholds).toEqual(shifted[k].map((e) => e.energy)));
    });
});
