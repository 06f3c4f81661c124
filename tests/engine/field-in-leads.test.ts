/**
 * A magnetic field in the leads as a model-document option (`fieldInLeads`): the gauge of
 * each lead and its join to the cavity's (docs/physics-model.md, "A field in the leads"),
 * on the square and the honeycomb lattice, through buildCavitySystem.
 */
import { describe, expect, it } from 'vitest';
import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian';
import { transmissionAt } from '../../shared/engine/transmission';
import { presetLeadCell } from '../../shared/engine/lead-cell';
import { squareLatticeLead } from '../../shared/engine/numerical-lead-square';
import { buildTightBinding, type TightBindingParameters } from '../../shared/engine/tight-binding';
import { honeycombPlacement, squarePlacement } from '../../shared/model/lattice-geometry';
import { validateCavityModel } from '../../shared/model/model-validation';
import { deriveFiguresWithLeads } from '../../shared/engine/lead-channel-ranges';
import { FLUX_QUANTUM_T_NM2, fluxPerPlaquette } from '../../shared/units/constants';
import type { CavityModelInput, LeadSide } from '../../shared/model/cavity-model';

const ACC = 0.142;
const DX = (Math.sqrt(3) / 2) * ACC;
const DY = 1.5 * ACC;

function squareDoc(extra: Partial<CavityModelInput>): CavityModelInput {
  return {
    name: 'square',
    spacing: 5,
    material: 'gaas',
    grid: { nx: 20, ny: 24 },
    shape: { kind: 'rectangle', x0: 0, y0: 0, width: 100, height: 120 },
    ...extra,
  };
}

function honeycombDoc(nx: number, ny: number, extra: Partial<CavityModelInput>): CavityModelInput {
  return {
    name: 'graphene',
    spacing: ACC,
    lattice: { kind: 'honeycomb', hopping: 2.7 },
    grid: { nx, ny },
    shape: { kind: 'rectangle', x0: -0.01, y0: -0.01, width: nx * DX, height: ny * DY },
    ...extra,
  };
}

describe('the model option', () => {
  it('is refused in the microwave mode, naming the field path', () => {
    const doc = {
      name: 'box',
      physics: { kind: 'microwave', height: 5 },
      spacing: 1,
      grid: { nx: 10, ny: 8 },
      shape: { kind: 'rectangle', x0: 0, y0: 0, width: 10, height: 8 },
      leads: [{ side: 'left', start: 2, width: 4 }],
      fieldInLeads: true,
    };
    const checked = validateCavityModel(doc);
    expect(checked.ok).toBe(false);
    if (checked.ok) return;
    expect(checked.issues.map((i) => i.path)).toEqual([['fieldInLeads']]);
    expect(checked.issues[0].message).toMatch(/microwave mode has no magnetic field/);
  });

  it('absent, false, or true at B = 0 leaves the square lattice’s results bit for bit (closed-form leads)', () => {
    const leads: CavityModelInput['leads'] = [
      { side: 'left', start: 3, width: 6 },
      { side: 'top', start: 4, width: 5 },
    ];
    const base = new EffectiveHamiltonian(buildCavitySystem(squareDoc({ field: 1.2, leads })));
    const off = new EffectiveHamiltonian(buildCavitySystem(squareDoc({ field: 1.2, leads, fieldInLeads: false })));
    const noField = new EffectiveHamiltonian(buildCavitySystem(squareDoc({ field: 0, leads, fieldInLeads: true })));
    const noFieldBase = new EffectiveHamiltonian(buildCavitySystem(squareDoc({ field: 0, leads })));
    expect(off.system.leads.every((l) => !l.numerical)).toBe(true);
    expect(noField.system.leads.every((l) => !l.numerical)).toBe(true);
    for (const e of [3.1, 7.7, 12.4]) {
      expect(transmissionAt(off, e)).toEqual(transmissionAt(base, e));
      expect(transmissionAt(noField, e)).toEqual(transmissionAt(noFieldBase, e));
    }
    expect(off.thresholds).toEqual(base.thresholds);
  });

  it('gives a square lead the cell, hopping and mouth phases of numerical-lead-square.ts on every side', () => {
    // Two independent writings of the same rule: lead-cell.ts (any lattice, positions in nm)
    // and numerical-lead-square.ts (lattice units).
    const a = 5;
    const field = 2.3;
    const nx = 9;
    const ny = 7;
    const p: TightBindingParameters = { placement: squarePlacement(a), hopping: 22, onsiteOffset: 88, field };
    const phi = fluxPerPlaquette(field, a);
    for (const side of ['left', 'right', 'bottom', 'top'] as LeadSide[]) {
      for (const fieldInLead of [false, true]) {
        const cell = presetLeadCell(p, side, 2, 4, 0, nx, ny, () => true, { fieldInLead });
        const spec = squareLatticeLead({
          side,
          mouthI: cell.contacts.i,
          mouthJ: cell.contacts.j,
          hopping: 22,
          offset: 0,
          flux: phi,
          fieldInLead,
        });
        for (const [mine, theirs] of [
          [cell.h0, spec.cell.h0],
          [cell.h1, spec.cell.h1],
          [cell.coupling, spec.coupling],
        ])
          for (let e = 0; e < theirs.length; e++) expect(Math.abs(mine[e] - theirs[e]), `${side} ${fieldInLead}`).toBeLessThan(1e-12 * 88);
      }
    }
  });
});

/** Area of a polygon (shoelace) and its part on one side of a line (Sutherland–Hodgman clipping). */
function clippedArea(poly: [number, number][], inside: (x: number, y: number) => number): number {
  const out: [number, number][] = [];
  for (let k = 0; k < poly.length; k++) {
    const [ax, ay] = poly[k];
    const [bx, by] = poly[(k + 1) % poly.length];
    const fa = inside(ax, ay);
    const fb = inside(bx, by);
    if (fa >= 0) out.push([ax, ay]);
    if (fa * fb < 0) {
      const s = fa / (fa - fb);
      out.push([ax + s * (bx - ax), ay + s * (by - ay)]);
    }
  }
  let area = 0;
  for (let k = 0; k < out.length; k++) area += out[k][0] * out[(k + 1) % out.length][1] - out[(k + 1) % out.length][0] * out[k][1];
  return Math.abs(area) / 2;
}

describe('the gauge join on the honeycomb', () => {
  /**
   * The phase sum around every hexagon that holds a lead atom, for a 12×10 flake with a lead of
   * two cells: cavity bonds from the lattice builder (engine gauge), lead bonds from H0 and H1,
   * links from V. Returns each hexagon's flux (phase sum over −2π) and its expected flux:
   * B·area/(h/e) with the field in the lead, B·(area on the cavity's side of the mouth line)/(h/e)
   * for a field-free lead.
   */
  function hexagonFluxes(side: LeadSide, field: number, fieldInLead: boolean): { got: number; want: number }[] {
    const nx = 12;
    const ny = 10;
    const pl = honeycombPlacement(ACC);
    const p: TightBindingParameters = { placement: pl, hopping: 1, onsiteOffset: 0, field };
    const mask = new Uint8Array(nx * ny).fill(1);
    const lattice = buildTightBinding(mask, nx, ny, p);
    const across = side === 'left' || side === 'right';
    const cell = presetLeadCell(p, side, across ? 3 : 4, 5, 0, nx, ny, () => true, { fieldInLead });
    const phase = new Map<string, number>();
    const bond = (a: string, b: string, theta: number) => {
      phase.set(`${a}>${b}`, theta);
      phase.set(`${b}>${a}`, -theta);
    };
    const key = (i: number, j: number) => `${i},${j}`;
    for (let b = 0; b < lattice.bonds.from.length; b++) {
      const s = lattice.bonds.from[b];
      const r = lattice.bonds.to[b];
      bond(key(lattice.sites.i[s], lattice.sites.j[s]), key(lattice.sites.i[r], lattice.sites.j[r]), lattice.bonds.phase[b]);
    }
    const m = cell.size;
    const step = { left: [-2, 0], right: [2, 0], bottom: [0, -2], top: [0, 2] }[side];
    const label = (r: number, k: number) => key(cell.sites.i[r] + k * step[0], cell.sites.j[r] + k * step[1]);
    // H[v, u] = −t·e^{iθ(u → v)}
    const arg = (mat: Float64Array, cols: number, r: number, c: number) => Math.atan2(-mat[2 * (r * cols + c) + 1], -mat[2 * (r * cols + c)]);
    for (let u = 0; u < m; u++)
      for (let v = 0; v < m; v++) {
        const h0 = Math.hypot(cell.h0[2 * (v * m + u)], cell.h0[2 * (v * m + u) + 1]);
        if (u !== v && h0 > 0.5) for (const k of [0, 1]) bond(label(u, k), label(v, k), arg(cell.h0, m, v, u));
        if (Math.hypot(cell.h1[2 * (v * m + u)], cell.h1[2 * (v * m + u) + 1]) > 0.5) bond(label(u, 0), label(v, 1), arg(cell.h1, m, v, u));
      }
    const w = cell.contacts.i.length;
    for (let r = 0; r < m; r++)
      for (let q = 0; q < w; q++)
        if (Math.hypot(cell.coupling[2 * (r * w + q)], cell.coupling[2 * (r * w + q) + 1]) > 0.5)
          bond(key(cell.contacts.i[q], cell.contacts.j[q]), label(r, 0), arg(cell.coupling, w, r, q));
    const leadAtoms = new Set(Array.from({ length: m }, (_, r) => [label(r, 0), label(r, 1)]).flat());
    const line = side === 'left' ? 0 : side === 'right' ? (nx - 1) * DX : side === 'bottom' ? 0 : (ny - 1) * DY + ACC / 2;
    const cavitySide = (x: number, y: number) => (side === 'left' ? x - line : side === 'right' ? line - x : side === 'bottom' ? y - line : line - y);
    const out: { got: number; want: number }[] = [];
    for (let i = -6; i < nx + 6; i++)
      for (let j = -6; j < ny + 6; j++) {
        if (((i + j) & 1) === 0) continue; // (i, j) on sublattice B: its hexagon spans columns i..i+2, rows j, j+1
        const loop = [key(i, j), key(i + 1, j), key(i + 2, j), key(i + 2, j + 1), key(i + 1, j + 1), key(i, j + 1), key(i, j)];
        if (!loop.some((s) => leadAtoms.has(s))) continue;
        let sum = 0;
        let ok = true;
        for (let k = 0; k < 6 && ok; k++) {
          const ph = phase.get(`${loop[k]}>${loop[k + 1]}`);
          if (ph === undefined) ok = false;
          else sum += ph;
        }
        if (!ok) continue;
        const poly = loop.slice(0, 6).map((s) => {
          const [a, b] = s.split(',').map(Number);
          return [pl.x(a, b), pl.y(a, b)] as [number, number];
        });
        const area = fieldInLead ? clippedArea(poly, () => 1) : clippedArea(poly, cavitySide);
        out.push({ got: -sum / (2 * Math.PI), want: (field * area) / FLUX_QUANTUM_T_NM2 });
      }
    return out;
  }

  it('with the field in the lead every hexagon in the lead and at the mouth holds B·A_hex; field-free, only its part on the cavity side of the mouth line', () => {
    const field = 3000; // a large field, so that a wrong phase cannot hide under the tolerance
    const hexagon = (3 * Math.sqrt(3) * ACC * ACC) / 2;
    for (const side of ['left', 'right', 'bottom', 'top'] as LeadSide[]) {
      for (const fieldInLead of [true, false]) {
        const fluxes = hexagonFluxes(side, field, fieldInLead);
        expect(fluxes.length, side).toBeGreaterThanOrEqual(6);
        for (const f of fluxes) {
          const d = f.got - f.want;
          expect(Math.abs(d - Math.round(d)), `${side} ${fieldInLead}`).toBeLessThan(1e-9);
        }
        if (fieldInLead) expect(fluxes.every((f) => Math.abs(f.want - (field * hexagon) / FLUX_QUANTUM_T_NM2) < 1e-12)).toBe(true);
        // Field-free: hexagons wholly in the lead hold nothing, those astride the line a part.
        else expect(fluxes.some((f) => f.want === 0) && fluxes.some((f) => f.want > 0)).toBe(true);
      }
    }
  });
});

describe('transport with the field in the leads', () => {
  it('a clean square ribbon at high field transmits the number of Landau levels below E, along x and along y (Datta, Electronic Transport in Mesoscopic Systems, 1995, ch. 4: edge states)', () => {
    // GaAs, a = 5 nm; φ = B·a²/(h/e) ≈ 0.02, so ℓ_B ≈ 2.8a against a 24-site ribbon.
    const field = 3.3;
    const along: [string, CavityModelInput['leads']][] = [
      [
        'x',
        [
          { side: 'left', start: 0, width: 24 },
          { side: 'right', start: 0, width: 24 },
        ],
      ],
      [
        'y',
        [
          { side: 'bottom', start: 0, width: 20 },
          { side: 'top', start: 0, width: 20 },
        ],
      ],
    ];
    for (const [axis, leads] of along) {
      const op = new EffectiveHamiltonian(buildCavitySystem(squareDoc({ field, leads, fieldInLeads: true })));
      const t = op.hopping;
      // ħω_c = 4πφt on the lattice (t = ħ²/2m*a²); E midway between Landau levels ħω_c(n + ½).
      const hw = 4 * Math.PI * fluxPerPlaquette(field, 5) * t;
      for (const levels of [1, 2, 3]) {
        const p = transmissionAt(op, hw * levels);
        expect(p.channels, axis).toEqual([levels, levels]);
        expect(Math.abs(p.transmission[0][1] - levels), `${axis}, ${levels} levels`).toBeLessThan(1e-8);
        expect(p.unitarityResidual).toBeLessThan(1e-10);
      }
    }
  });

  it('Onsager: G(B) = G(−B) through an asymmetric square dot and an asymmetric graphene dot with the field in the leads (Büttiker, PRL 57, 1761 (1986))', () => {
    const square = (field: number) =>
      squareDoc({
        field,
        fieldInLeads: true,
        shape: { kind: 'subtract', from: { kind: 'rectangle', x0: 0, y0: 0, width: 100, height: 120 }, remove: [{ kind: 'disk', cx: 62, cy: 41, radius: 14 }] },
        leads: [
          { side: 'left', start: 3, width: 6 },
          { side: 'top', start: 11, width: 5 },
        ],
      });
    const graphene = (field: number) =>
      honeycombDoc(16, 10, {
        field,
        fieldInLeads: true,
        lattice: { kind: 'honeycomb', hopping: 2.7, removeDangling: true },
        shape: {
          kind: 'subtract',
          from: { kind: 'rectangle', x0: -0.01, y0: -0.01, width: 16 * DX, height: 10 * DY },
          remove: [{ kind: 'disk', cx: 10 * DX, cy: 3 * DY, radius: 0.25 }],
        },
        leads: [
          { side: 'left', start: 2, width: 5 },
          { side: 'bottom', start: 6, width: 8 },
        ],
      });
    for (const [label, doc, field, energies] of [
      ['square', square, 1.5, [9, 13, 19]],
      ['graphene', graphene, 60, [450, 900, -700]],
    ] as const) {
      const plus = new EffectiveHamiltonian(buildCavitySystem(doc(field)));
      const minus = new EffectiveHamiltonian(buildCavitySystem(doc(-field)));
      const none = new EffectiveHamiltonian(buildCavitySystem(doc(0)));
      let changed = 0;
      for (const e of energies) {
        const a = transmissionAt(plus, e);
        const b = transmissionAt(minus, e);
        expect(a.channels, label).toEqual(b.channels);
        expect(a.channels[0] * a.channels[1], `${label} at ${e}`).toBeGreaterThan(0);
        expect(Math.abs(a.transmission[0][1] - b.transmission[0][1]), `${label} at ${e}`).toBeLessThan(1e-9);
        expect(Math.abs(a.transmission[1][0] - b.transmission[1][0]), `${label} at ${e}`).toBeLessThan(1e-9);
        changed = Math.max(changed, Math.abs(a.transmission[0][1] - transmissionAt(none, e).transmission[0][1]));
      }
      expect(changed, label).toBeGreaterThan(1e-3);
    }
  });

  it('no spurious flux: clean graphene ribbons in a field transmit whole numbers, and moving the flake on the grid changes nothing', () => {
    const field = 80;
    for (const leads of [
      [
        { side: 'left', start: 0, width: 8 },
        { side: 'right', start: 0, width: 8 },
      ],
      [
        { side: 'bottom', start: 0, width: 11 },
        { side: 'top', start: 0, width: 11 },
      ],
    ] as NonNullable<CavityModelInput['leads']>[]) {
      const op = new EffectiveHamiltonian(buildCavitySystem(honeycombDoc(11, 8, { field, fieldInLeads: true, leads })));
      let open = 0;
      for (const f of [0.13, 0.37, 0.61, -0.45]) {
        const p = transmissionAt(op, f * op.hopping);
        open += p.channels[0];
        expect(Math.abs(p.transmission[0][1] - p.channels[0]), `${leads[0].side} at ${f}t`).toBeLessThan(1e-8);
        expect(p.reflection[0]).toBeLessThan(1e-8);
      }
      expect(open).toBeGreaterThan(2);
    }
    // A graphene dot with right and top leads, and the same dot 2 columns and 2 rows further from
    // the origin in a larger grid (the Landau gauge is not translation invariant: only a right
    // join of the lead gauges gives the same numbers).
    const dot = (shift: number, fieldInLeads: boolean) =>
      honeycombDoc(16 + shift, 10 + shift, {
        field,
        fieldInLeads,
        shape: {
          kind: 'subtract',
          from: { kind: 'rectangle', x0: shift * DX - 0.01, y0: shift * DY - 0.01, width: 16 * DX, height: 10 * DY },
          remove: [{ kind: 'disk', cx: (6 + shift) * DX, cy: (6 + shift) * DY, radius: 0.25 }],
        },
        lattice: { kind: 'honeycomb', hopping: 2.7, removeDangling: true },
        leads: [
          { side: 'right', start: 2 + shift, width: 5 },
          { side: 'top', start: 3 + shift, width: 6 },
        ],
      });
    for (const fieldInLeads of [true, false]) {
      const near = new EffectiveHamiltonian(buildCavitySystem(dot(0, fieldInLeads)));
      const far = new EffectiveHamiltonian(buildCavitySystem(dot(2, fieldInLeads)));
      expect(far.n).toBe(near.n);
      let open = 0;
      for (const e of [420, 910, -650]) {
        const a = transmissionAt(near, e);
        const b = transmissionAt(far, e);
        expect(b.channels).toEqual(a.channels);
        open += a.channels[0] * a.channels[1];
        expect(Math.abs(a.transmission[0][1] - b.transmission[0][1]), `fieldInLeads ${fieldInLeads} at ${e}`).toBeLessThan(1e-9);
      }
      expect(open).toBeGreaterThan(0);
    }
  });

  it('mirror symmetry on the honeycomb: T(left→top, B) = T(left→bottom, −B), with field-free leads and with the field in the leads', () => {
    // With an even number of rows the brick wall is symmetric under (i, j) → (i, ny − 1 − j),
    // which maps the top row's B atoms onto the bottom row's A atoms and B onto −B (docs/physics-model.md).
    const doc = (field: number, fieldInLeads: boolean) =>
      honeycombDoc(12, 8, {
        field,
        fieldInLeads,
        leads: [
          { side: 'left', start: 2, width: 4 },
          { side: 'top', start: 4, width: 5 },
          { side: 'bottom', start: 4, width: 5 },
        ],
      });
    for (const fieldInLeads of [false, true]) {
      const plus = new EffectiveHamiltonian(buildCavitySystem(doc(70, fieldInLeads)));
      const minus = new EffectiveHamiltonian(buildCavitySystem(doc(-70, fieldInLeads)));
      let differs = 0;
      for (const e of [380, 760, 1240, -900]) {
        const a = transmissionAt(plus, e);
        const b = transmissionAt(minus, e);
        expect(a.unitarityResidual).toBeLessThan(1e-10);
        expect(Math.abs(a.transmission[0][1] - b.transmission[0][2]), `fieldInLeads ${fieldInLeads} at ${e}`).toBeLessThan(1e-9);
        expect(Math.abs(a.transmission[0][2] - b.transmission[0][1]), `fieldInLeads ${fieldInLeads} at ${e}`).toBeLessThan(1e-9);
        differs = Math.max(differs, Math.abs(a.transmission[0][1] - a.transmission[0][2]));
      }
      // and the field matters: the two outputs differ at +B
      expect(differs).toBeGreaterThan(1e-3);
    }
  });

  it('the model figures list the Landau bands of a square lead in a field as its channel ranges', () => {
    const doc = squareDoc({ field: 3.3, fieldInLeads: true, leads: [{ side: 'left', start: 0, width: 24 }] });
    const checked = validateCavityModel(doc);
    if (!checked.ok) throw new Error('invalid');
    const figures = deriveFiguresWithLeads(checked.model, checked.siteCount);
    const op = new EffectiveHamiltonian(buildCavitySystem(doc));
    const t = op.hopping;
    for (const f of [0.05, 0.2, 0.45, 0.7, 1.3, 2.5]) {
      const open = new Set(figures.leads[0].thresholds.filter((r) => f * t > r.opens && f * t < r.closes).map((r) => r.channel));
      expect(open.size, `${f}t`).toBe(op.openChannels(0, f * t).length);
    }
    // A wider lead (a cell of more than 24 sites) is listed without ranges: computing them would take minutes.
    const wide = validateCavityModel(
      squareDoc({
        field: 3.3,
        fieldInLeads: true,
        grid: { nx: 20, ny: 30 },
        shape: { kind: 'rectangle', x0: 0, y0: 0, width: 100, height: 150 },
        leads: [{ side: 'left', start: 0, width: 25 }],
      }),
    );
    if (!wide.ok) throw new Error('invalid');
    expect(deriveFiguresWithLeads(wide.model, wide.siteCount).leads[0].thresholds).toEqual([]);
  });
});
