import { describe, expect, it } from 'vitest';
import type { CavityModel } from '../../shared/model/cavity-model';
import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian';
import { leadCellOf } from '../../shared/engine/lead-cell';
import { leadEdgesOf } from '../../shared/engine/numerical-lead-system';
import { leadBandEdges, leadBands } from '../../shared/engine/numerical-lead-bands';
import type { LeadCellBlocks } from '../../shared/engine/numerical-lead-modes';
import { squareRibbonCell, zigzagRibbonCell } from './numerical-lead-systems';

/**
 * Band edges found the slow way, independent of the Newton refinement: the sorted bands
 * sampled at `samples` k, every sampled local extremum narrowed by golden-section search on the
 * band energy alone (no derivatives, to 1e-13 in k), and dropped when it is a kink where two
 * sorted bands cross (both one-sided difference slopes over 1e-6 in k above 1e-3·scale; an
 * extremum touching a crossing band keeps one flat side). A band's extremum at the energy of
 * one already found on it (a flat band) is skipped. Merged at 1e-9·scale.
 */
function denseEdges(cell: LeadCellBlocks, samples: number): { energies: number[]; scale: number } {
  const ks = Array.from({ length: samples }, (_, i) => -Math.PI + (2 * Math.PI * i) / samples);
  const bands = ks.map((k) => leadBands(cell, k));
  let scale = 1;
  for (const b of bands) for (const e of b) scale = Math.max(scale, Math.abs(e));
  const h = (2 * Math.PI) / samples;
  const golden = (Math.sqrt(5) - 1) / 2;
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
      let a = ks[i] - h;
      let d = ks[i] + h;
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
      const k = f1 <= f2 ? x1 : x2;
      const dk = 1e-6;
      const left = Math.abs(f(k) - f(k - dk)) / dk;
      const right = Math.abs(f(k + dk) - f(k)) / dk;
      if (Math.min(left, right) > 1e-3 * scale) continue;
      found.push(sign * Math.min(f1, f2));
      ofBand.push(sign * Math.min(f1, f2));
    }
  }
  found.sort((x, y) => x - y);
  const energies: number[] = [];
  for (const e of found) if (!energies.length || e - energies[energies.length - 1] > 1e-9 * scale) energies.push(e);
  return { energies, scale };
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
