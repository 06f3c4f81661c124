/**
 * The honeycomb lattice of the general tight-binding builder (shared/engine/tight-binding.ts,
 * lead-cell.ts), against textbook tight-binding results, and the square preset of the same
 * builder against the engine's square fast path.
 */
import { describe, expect, it } from 'vitest';
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { blochHamiltonian, buildTightBinding, type TightBindingParameters } from '../../shared/engine/tight-binding';
import { leadBlochHamiltonian, leadCellOf, presetLeadCell } from '../../shared/engine/lead-cell';
import { validateCavityModel } from '../../shared/model/model-validation';
import { cavityModelSchema } from '../../shared/model/cavity-model';
import { deriveFigures } from '../../shared/model/derived-figures';
import { hamiltonianCsc } from '../../shared/engine/lattice';
import { closedCavityEigenvalues } from '../../shared/engine/closed-cavity';
import { honeycombPlacement, removeDanglingSites, squarePlacement, neighbourCount } from '../../shared/model/lattice-geometry';
import { rasteriseShape, connectedComponents } from '../../shared/model/geometry';
import { FLUX_QUANTUM_T_NM2 } from '../../shared/units/constants';
import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian';
import { transmissionSweep } from '../../shared/engine/transmission';
import type { CavityModelInput } from '../../shared/model/cavity-model';

/** Eigenvalues of a dense Hermitian matrix (row-major interleaved), from its real symmetric embedding. */
function hermitianEigenvalues(h: Float64Array, m: number): number[] {
  const big = new Matrix(2 * m, 2 * m);
  for (let r = 0; r < m; r++)
    for (let c = 0; c < m; c++) {
      const re = h[2 * (r * m + c)];
      const im = h[2 * (r * m + c) + 1];
      big.set(r, c, re);
      big.set(r + m, c + m, re);
      big.set(r, c + m, -im);
      big.set(r + m, c, im);
    }
  // [[Re, −Im], [Im, Re]] holds every eigenvalue twice.
  const all = new EigenvalueDecomposition(big, { assumeSymmetric: true }).realEigenvalues.sort((a, b) => a - b);
  return all.filter((_, k) => k % 2 === 0);
}

/** The CSC Hamiltonian of a lattice as a dense row-major interleaved matrix. */
function denseHamiltonian(lattice: Parameters<typeof hamiltonianCsc>[0]): { h: Float64Array; m: number } {
  const csc = hamiltonianCsc(lattice);
  const m = lattice.onsite.length;
  const h = new Float64Array(2 * m * m);
  for (let c = 0; c < m; c++)
    for (let e = csc.colPtr[c]; e < csc.colPtr[c + 1]; e++) {
      h[2 * (csc.rowIdx[e] * m + c)] = csc.values[2 * e];
      h[2 * (csc.rowIdx[e] * m + c) + 1] = csc.values[2 * e + 1];
    }
  return { h, m };
}

const ACC = 0.142;
const honey = (t = 1, extra: Partial<TightBindingParameters> = {}): TightBindingParameters => ({
  placement: honeycombPlacement(ACC),
  hopping: t,
  onsiteOffset: 0,
  field: 0,
  ...extra,
});

describe('honeycomb geometry', () => {
  it('puts every nearest neighbour at a_CC and every next-nearest at √3·a_CC, three and six of them', () => {
    // Geometry of graphene (Castro Neto et al., Rev. Mod. Phys. 81, 109 (2009), §II.A: δ = a_CC, next-nearest √3·a_CC).
    const pl = honeycombPlacement(ACC);
    for (const [i, j] of [
      [4, 4],
      [5, 4],
      [7, 2],
    ]) {
      expect(pl.nearestAll(i, j)).toHaveLength(3);
      for (const [di, dj] of pl.nearestAll(i, j)) {
        expect(Math.hypot(pl.x(i + di, j + dj) - pl.x(i, j), pl.y(i + di, j + dj) - pl.y(i, j))).toBeCloseTo(ACC, 12);
        expect(pl.sublattice(i + di, j + dj)).not.toBe(pl.sublattice(i, j));
      }
      for (const [di, dj] of pl.nextForward(i, j)) {
        expect(Math.hypot(pl.x(i + di, j + dj) - pl.x(i, j), pl.y(i + di, j + dj) - pl.y(i, j))).toBeCloseTo(Math.sqrt(3) * ACC, 12);
        expect(pl.sublattice(i + di, j + dj)).toBe(pl.sublattice(i, j));
      }
    }
  });

  it('removes dangling sites until every site has two neighbours, and keeps the flake connected', () => {
    const pl = honeycombPlacement(ACC);
    const nx = 40,
      ny = 30;
    const mask = rasteriseShape({ kind: 'disk', cx: 2.8, cy: 3.2, radius: 2.2 }, nx, ny, ACC, pl);
    let before = 0;
    let dangling = 0;
    for (let s = 0; s < mask.length; s++) {
      if (!mask[s]) continue;
      before++;
      if (neighbourCount(mask, nx, ny, pl, Math.floor(s / ny), s % ny) < 2) dangling++;
    }
    expect(dangling).toBeGreaterThan(0); // a disk cut from the sheet has dangling rim atoms
    const removed = removeDanglingSites(mask, nx, ny, pl);
    expect(removed).toBeGreaterThanOrEqual(dangling);
    let after = 0;
    for (let s = 0; s < mask.length; s++) {
      if (!mask[s]) continue;
      after++;
      expect(neighbourCount(mask, nx, ny, pl, Math.floor(s / ny), s % ny)).toBeGreaterThanOrEqual(2);
    }
    expect(after).toBe(before - removed);
    expect(connectedComponents(mask, nx, ny, pl)).toHaveLength(1);
  });
});

describe('honeycomb bands', () => {
  it('gives the bulk dispersion E(k) = ±t|1 + e^{ik·a1} + e^{ik·a2}| at sampled k', () => {
    // Castro Neto et al., Rev. Mod. Phys. 81, 109 (2009), eq. 5 (t' = 0), with this lattice's
    // a1 = (√3/2, 3/2)a_CC, a2 = (−√3/2, 3/2)a_CC (the bond vectors differences δ1 − δ3, δ2 − δ3).
    // The 2×2 grid cell holds two primitive cells, so H(k) also holds the band at k + Q,
    // Q = (0, 2π/(3a_CC)) (e^{iQ·a2} = −1 on the doubled cell).
    const t = 2.7;
    const f = (kx: number, ky: number) => {
      const p1 = kx * (Math.sqrt(3) / 2) * ACC + ky * 1.5 * ACC;
      const p2 = -kx * (Math.sqrt(3) / 2) * ACC + ky * 1.5 * ACC;
      return Math.hypot(1 + Math.cos(p1) + Math.cos(p2), Math.sin(p1) + Math.sin(p2));
    };
    const q = (2 * Math.PI) / (3 * ACC);
    for (const [kx, ky] of [
      [0, 0],
      [1.3, 2.1],
      [-7.7, 4.4],
      [17.03, 0.02],
      [10, -12],
    ]) {
      const e = hermitianEigenvalues(blochHamiltonian(honey(t), 2, 2, kx, ky), 4);
      const expected = [t * f(kx, ky), -t * f(kx, ky), t * f(kx, ky + q), -t * f(kx, ky + q)].sort((a, b) => a - b);
      e.forEach((v, k) => expect(Math.abs(v - expected[k])).toBeLessThan(1e-12 * t));
    }
  });

  it("adds t' as E = ±t|f| − t'(|f|² − 3) and the sublattice potential as ±sqrt(Δ² + t²|f|²)", () => {
    // Castro Neto et al. 2009, eq. 6 (t'); a staggered potential ±Δ opens a gap 2Δ at the
    // Dirac points (common practice, no source: the 2×2 block [[Δ, −tf], [−tf*, −Δ]]).
    const t = 2.7,
      t2 = 0.2,
      delta = 0.1;
    const k = [3.1, -5.2];
    const fk = (kx: number, ky: number) => {
      const p1 = kx * (Math.sqrt(3) / 2) * ACC + ky * 1.5 * ACC;
      const p2 = -kx * (Math.sqrt(3) / 2) * ACC + ky * 1.5 * ACC;
      return Math.hypot(1 + Math.cos(p1) + Math.cos(p2), Math.sin(p1) + Math.sin(p2));
    };
    const q = (2 * Math.PI) / (3 * ACC);
    const withT2 = hermitianEigenvalues(blochHamiltonian(honey(t, { nextHopping: t2 }), 2, 2, k[0], k[1]), 4);
    const expT2 = [k[1], k[1] + q].flatMap((ky) => [1, -1].map((s) => s * t * fk(k[0], ky) - t2 * (fk(k[0], ky) ** 2 - 3))).sort((a, b) => a - b);
    withT2.forEach((v, n) => expect(Math.abs(v - expT2[n])).toBeLessThan(1e-12 * t));
    const withDelta = hermitianEigenvalues(blochHamiltonian(honey(t, { sublattice: delta }), 2, 2, k[0], k[1]), 4);
    const expDelta = [k[1], k[1] + q].flatMap((ky) => [1, -1].map((s) => s * Math.hypot(delta, t * fk(k[0], ky)))).sort((a, b) => a - b);
    withDelta.forEach((v, n) => expect(Math.abs(v - expDelta[n])).toBeLessThan(1e-12 * t));
  });

  it('has Dirac cones at K with the velocity v_F = 3·t·a_CC/(2ħ)', () => {
    // Castro Neto et al. 2009, eq. 7: v_F = 3ta/2 (ħ = 1), a the carbon–carbon distance.
    const t = 2.7;
    const kDirac = (4 * Math.PI) / (3 * Math.sqrt(3) * ACC);
    const atK = hermitianEigenvalues(blochHamiltonian(honey(t), 2, 2, kDirac, 0), 4);
    expect(Math.min(...atK.map(Math.abs))).toBeLessThan(1e-12 * t);
    const hbarVf = 1.5 * t * ACC; // eV·nm
    const dq = 1e-5 / ACC;
    for (const angle of [0, 0.7, 1.9, 3.3, 5.1]) {
      const e = hermitianEigenvalues(blochHamiltonian(honey(t), 2, 2, kDirac + dq * Math.cos(angle), dq * Math.sin(angle)), 4);
      // The two levels nearest zero are ±ħv_F|q| (the folded band at K + Q is far away).
      const slope = Math.min(...e.filter((v) => v > 0)) / dq;
      expect(Math.abs(slope - hbarVf)).toBeLessThan(1e-4 * hbarVf);
    }
  });

  it('zigzag ribbons have the flat edge band between the Dirac points, 2π/3 < |ka| ≤ π', () => {
    // Nakada, Fujita, Dresselhaus & Dresselhaus, Phys. Rev. B 54, 17954 (1996): partly flat
    // bands at E = 0 for 2π/3 ≤ |k|a ≤ π on zigzag ribbons, the states localised on the
    // edges (from memory). Here the ribbon of N = 20 zigzag chains is a left lead's cell.
    const t = 1;
    const n = 20;
    const cell = presetLeadCell(honey(t), 'left', 0, n, 0, 10, n, () => true);
    expect(cell.size).toBe(2 * n);
    expect(Math.hypot(...cell.translation)).toBeCloseTo(Math.sqrt(3) * ACC, 12);
    for (const ka of [0.8 * Math.PI, 0.9 * Math.PI, Math.PI]) {
      const e = hermitianEigenvalues(leadBlochHamiltonian(cell, ka), cell.size)
        .map(Math.abs)
        .sort((a, b) => a - b);
      // Two edge states (one per edge), at 0 up to a splitting ~ (2cos(ka/2))^N.
      expect(e[1]).toBeLessThan(2 * Math.abs(2 * Math.cos(ka / 2)) ** n + 1e-12);
      expect(e[2]).toBeGreaterThan(0.1 * t);
    }
    for (const ka of [0, 0.3 * Math.PI, 0.5 * Math.PI]) {
      const e = hermitianEigenvalues(leadBlochHamiltonian(cell, ka), cell.size).map(Math.abs);
      expect(Math.min(...e)).toBeGreaterThan(0.2 * t);
    }
  });

  it('armchair ribbons are metallic when N = 3m − 1 dimer lines and gapped otherwise', () => {
    // Brey & Fertig, Phys. Rev. B 73, 235411 (2006): in the tight-binding model armchair
    // ribbons are metallic for N = 3M − 1 and semiconducting otherwise (from memory).
    // The ribbon of N dimer lines is a top lead's cell of N columns.
    const t = 1;
    for (let n = 4; n <= 15; n++) {
      const cell = presetLeadCell(honey(t), 'top', 0, n, 0, n, 10, () => true);
      expect(cell.size).toBe(2 * n);
      let gap = Infinity;
      for (let k = -20; k <= 20; k++) {
        for (const v of hermitianEigenvalues(leadBlochHamiltonian(cell, (k / 20) * Math.PI), cell.size)) gap = Math.min(gap, Math.abs(v));
      }
      if ((n + 1) % 3 === 0) expect(gap).toBeLessThan(1e-12 * t);
      else expect(gap).toBeGreaterThan(0.05 * t);
    }
  });
});

describe('the square preset of the general builder', () => {
  it('reproduces the square fast path: the same bonds, onsite energies and phases, and the same transmission', () => {
    // The general path must give today's results to rounding (issue 15).
    const doc: CavityModelInput = {
      name: 'square check',
      spacing: 5,
      material: 'gaas',
      grid: { nx: 24, ny: 20 },
      shape: {
        kind: 'union',
        of: [
          { kind: 'disk', cx: 60, cy: 50, radius: 48 },
          { kind: 'rectangle', x0: 0, y0: 30, width: 120, height: 40 },
        ],
      },
      potential: [{ kind: 'disorder', strength: 0.3, seed: 7 }],
      field: 0.8,
      leads: [
        { side: 'left', start: 6, width: 8 },
        { side: 'right', start: 6, width: 8 },
      ],
    };
    const system = buildCavitySystem(doc);
    const fast = system.lattice;
    const potential = Float64Array.from(fast.onsite, (v) => v - 4 * system.hopping);
    const general = buildTightBinding(
      system.mask,
      24,
      20,
      { placement: squarePlacement(5), hopping: system.hopping, onsiteOffset: 4 * system.hopping, field: 0.8 },
      potential,
    );
    expect(general.kind).toBe('square');
    expect(Array.from(general.bonds.from)).toEqual(Array.from(fast.bonds.from));
    expect(Array.from(general.bonds.to)).toEqual(Array.from(fast.bonds.to));
    general.bonds.hopping.forEach((t, b) => expect(t).toBe(fast.bonds.hopping[b]));
    general.onsite.forEach((e, s) => expect(Math.abs(e - fast.onsite[s])).toBeLessThan(1e-14 * system.hopping));
    general.bonds.phase.forEach((th, b) => expect(Math.abs(th - fast.bonds.phase[b])).toBeLessThan(1e-13 * Math.max(1, Math.abs(th))));
    expect(Math.abs(general.flux - fast.flux)).toBeLessThan(1e-15);
    const t = system.hopping;
    const request = { emin: 0.05 * t, emax: 0.3 * t, points: 7 };
    const a = transmissionSweep(new EffectiveHamiltonian(system), request);
    const b = transmissionSweep(new EffectiveHamiltonian({ ...system, lattice: general }), request);
    a.points.forEach((p, k) => {
      expect(Math.abs(p.transmission[0][1] - b.points[k].transmission[0][1])).toBeLessThan(1e-10);
      expect(Math.abs(p.reflection[0] - b.points[k].reflection[0])).toBeLessThan(1e-10);
    });
  });
});

describe('honeycomb flakes', () => {
  it('threads B·A_hex/(h/e) through every hexagon (Peierls phases of the Landau gauge)', () => {
    // Peierls substitution: the phases around a loop add up to −2π·B·A/(h/e), A the signed
    // (counterclockwise positive) area, for charge −e: the contract's square plaquette sum
    // θ(i→i+1, j) − θ(i→i+1, j+1) = −2πφ, here on a hexagon of area (3√3/2)a_CC².
    const pl = honeycombPlacement(ACC);
    const field = 25;
    const mask = new Uint8Array(12 * 10).fill(1);
    const lat = buildTightBinding(mask, 12, 10, honey(2700, { field }), undefined);
    const phase = (s: number, r: number) => {
      for (let b = 0; b < lat.bonds.from.length; b++) {
        if (lat.bonds.from[b] === s && lat.bonds.to[b] === r) return lat.bonds.phase[b];
        if (lat.bonds.from[b] === r && lat.bonds.to[b] === s) return -lat.bonds.phase[b];
      }
      throw new Error(`no bond ${s}–${r}`);
    };
    // The hexagon between the vertical bonds (2, 3)–(2, 4) and (4, 3)–(4, 4) (i + j odd at the
    // lower ends). Walked in this order the loop is clockwise; the signed area carries the sign.
    const ring: [number, number][] = [
      [4, 3],
      [3, 3],
      [2, 3],
      [2, 4],
      [3, 4],
      [4, 4],
    ];
    let area = 0;
    let sum = 0;
    for (let k = 0; k < ring.length; k++) {
      const [i0, j0] = ring[k];
      const [i1, j1] = ring[(k + 1) % ring.length];
      area += pl.x(i0, j0) * pl.y(i1, j1) - pl.x(i1, j1) * pl.y(i0, j0);
      sum += phase(lat.siteIndex[i0 * 10 + j0], lat.siteIndex[i1 * 10 + j1]);
    }
    area /= 2;
    expect(Math.abs(Math.abs(area) - ((3 * Math.sqrt(3)) / 2) * ACC * ACC)).toBeLessThan(1e-14);
    expect(Math.abs(sum - (-2 * Math.PI * field * area) / FLUX_QUANTUM_T_NM2)).toBeLessThan(1e-12);
  });

  it("finds a closed disk's levels (with t', Δ, a field and its dangling atoms removed) as a dense eigen-solve of the same H does", () => {
    const pl = honeycombPlacement(ACC);
    const nx = 18,
      ny = 12;
    const mask = rasteriseShape({ kind: 'disk', cx: 1.1, cy: 0.85, radius: 0.8 }, nx, ny, ACC, pl);
    removeDanglingSites(mask, nx, ny, pl);
    const lattice = buildTightBinding(mask, nx, ny, honey(2700, { nextHopping: 200, sublattice: 50, field: 40 }));
    const { h, m } = denseHamiltonian(lattice);
    expect(m).toBeGreaterThan(60);
    const dense = hermitianEigenvalues(h, m);
    const target = 700;
    const count = 8;
    const nearest = [...dense]
      .sort((a, b) => Math.abs(a - target) - Math.abs(b - target))
      .slice(0, count)
      .sort((a, b) => a - b);
    const res = closedCavityEigenvalues(lattice, { target, count });
    res.energies.forEach((e, k) => expect(Math.abs(e - nearest[k])).toBeLessThan(1e-9 * 2700));
  });

  it('shows the graphene Landau levels E_n = sgn(n)·sqrt(2eħv_F²B|n|), with the zero level, in a wide zigzag ribbon', () => {
    // McClure, Phys. Rev. 104, 666 (1956); Castro Neto et al. 2009, eq. 63 (from memory):
    // E_n = sgn(n)·sqrt(2|n|)·ħv_F/ℓ_B, ℓ_B = sqrt(ħ/(eB)), ħv_F = 3t·a_CC/2, and a level at 0.
    // A ribbon of 80 zigzag chains (11.5 ℓ_B wide) periodic along x in the Landau gauge, at the
    // wavevector whose guiding centre is the ribbon's middle (valley K), ℓ_B = 10.4 a_CC at 300 T.
    // The lattice lowers E_n by about 0.4·n·(a_CC/ℓ_B)² (seen); the check allows n·(a_CC/ℓ_B)².
    const t = 2.7;
    const field = 300;
    const rows = 80;
    const lB = Math.sqrt(FLUX_QUANTUM_T_NM2 / (2 * Math.PI * field));
    expect(lB / ACC).toBeGreaterThan(10);
    const e1 = (Math.SQRT2 * 1.5 * t * ACC) / lB;
    const kDirac = (4 * Math.PI) / (3 * Math.sqrt(3) * ACC);
    const middle = (rows * 1.5 * ACC) / 2;
    const e = hermitianEigenvalues(blochHamiltonian(honey(t, { field }), 2, rows, kDirac + middle / lB ** 2, 0, true), 2 * rows);
    const near = (x: number) => Math.min(...e.map((v) => Math.abs(v - x)));
    expect(near(0)).toBeLessThan(1e-9 * t);
    for (const n of [1, 2, 3]) {
      const en = Math.sqrt(n) * e1;
      const tol = n * (ACC / lB) ** 2 * en;
      expect(near(en)).toBeLessThan(tol);
      expect(near(-en)).toBeLessThan(tol);
    }
    // No level between the plateaus: (0, E_1) holds nothing at the guiding centre's wavevector.
    expect(e.filter((v) => Math.abs(v) > 0.05 * e1 && Math.abs(v) < 0.9 * e1)).toHaveLength(0);
  });
});

const GRAPHENE_DISK = {
  name: 'graphene disk',
  spacing: ACC,
  lattice: { kind: 'honeycomb', hopping: 2.7, removeDangling: true },
  grid: { nx: 40, ny: 24 },
  shape: { kind: 'disk', cx: 2.8, cy: 2.6, radius: 2.2 },
} as const;

describe('honeycomb model documents', () => {
  it('leaves a square document as it was (no lattice key is added) and reads a honeycomb one', () => {
    const square = { name: 'old', spacing: 5, material: 'gaas', grid: { nx: 10, ny: 10 }, shape: { kind: 'rectangle', x0: 0, y0: 0, width: 50, height: 50 } };
    expect('lattice' in cavityModelSchema.parse(square)).toBe(false);
    const checked = validateCavityModel(GRAPHENE_DISK);
    expect(checked.ok).toBe(true);
    if (!checked.ok) return;
    // Cut without clean-up, the same disk has more atoms: the dangling rim ones.
    const raw = validateCavityModel({ ...GRAPHENE_DISK, lattice: { kind: 'honeycomb', hopping: 2.7 } });
    expect(raw.ok && raw.siteCount > checked.siteCount).toBe(true);
    const figures = deriveFigures(checked.model, checked.siteCount, 300);
    expect(figures.hopping).toBe(2700);
    // v_F = 3t·a_CC/(2ħ) (Castro Neto et al. 2009, eq. 7): about 8.7·10⁵ m/s for t = 2.7 eV.
    expect(figures.dirac!.velocity).toBeGreaterThan(8.6e5);
    expect(figures.dirac!.velocity).toBeLessThan(8.8e5);
    expect(figures.validity!.warnings).toHaveLength(0);
    expect(deriveFigures(checked.model, checked.siteCount, 1500).validity!.warnings).toHaveLength(1);
  });

  it('refuses a material on the honeycomb, and attaches its leads as numerical leads bonded to every edge atom they face', () => {
    const withMaterial = validateCavityModel({ ...GRAPHENE_DISK, material: 'gaas' });
    expect(!withMaterial.ok && withMaterial.issues[0].path).toEqual(['material']);
    const ribbon = {
      ...GRAPHENE_DISK,
      shape: { kind: 'rectangle', x0: 0, y0: 0, width: 40 * 0.123, height: 24 * 0.213 },
      leads: [{ side: 'left', start: 4, width: 10 }],
    };
    expect(validateCavityModel(ribbon).ok).toBe(true);
    const system = buildCavitySystem(ribbon);
    expect(system.leads).toHaveLength(1);
    expect(system.leads[0].numerical).toBeDefined();
    // A zigzag lead of 10 chains: every atom of column 0 on rows 4..13 is bonded to it.
    expect(Array.from(system.leads[0].mouth, (s) => [system.sites.i[s], system.sites.j[s]])).toEqual(Array.from({ length: 10 }, (_, p) => [0, 4 + p]));
  });
});

describe('lead cells (leadCellOf)', () => {
  it('gives the square lead of the contract: H0 tridiagonal (4t + V_L, −t), H1 = −t·1, V = −t on the mouth', () => {
    const doc = {
      name: 'wire',
      spacing: 4,
      material: 'gaas',
      grid: { nx: 12, ny: 9 },
      shape: { kind: 'rectangle', x0: 0, y0: 0, width: 48, height: 36 },
      leads: [{ side: 'left', start: 2, width: 5, offset: 0.7 }],
    };
    const system = buildCavitySystem(doc);
    const t = system.hopping;
    const cell = leadCellOf(system.model, 0);
    const w = 5;
    expect(cell.size).toBe(w);
    expect(Array.from(cell.mouth)).toEqual(Array.from(system.leads[0].mouth));
    expect(cell.translation[0]).toBeCloseTo(-4, 12);
    for (let r = 0; r < w; r++)
      for (let c = 0; c < w; c++) {
        const h0 = r === c ? 4 * t + 0.7 : Math.abs(r - c) === 1 ? -t : 0;
        expect(Math.abs(cell.h0[2 * (r * w + c)] - h0)).toBeLessThan(1e-12 * t);
        expect(Math.abs(cell.h1[2 * (r * w + c)] - (r === c ? -t : 0))).toBeLessThan(1e-12 * t);
        expect(Math.abs(cell.coupling[2 * (r * w + c)] - (r === c ? -t : 0))).toBeLessThan(1e-12 * t);
      }
  });

  it('gives a honeycomb top lead (an armchair ribbon) its 2W sites, bonded to the B atoms of the top row', () => {
    const doc = { ...GRAPHENE_DISK, shape: { kind: 'rectangle', x0: 0, y0: 0, width: 5, height: 5 }, leads: [{ side: 'top', start: 6, width: 8 }] };
    const checked = validateCavityModel(doc);
    expect(checked.ok).toBe(true);
    if (!checked.ok) return;
    const cell = leadCellOf(checked.model, 0);
    expect(cell.size).toBe(16);
    // Nearest-neighbour only: the vertical bonds from (i, ny−1) with i + ny − 1 odd, 4 of the 8 columns.
    expect(cell.contacts.j.every((j) => j === 23)).toBe(true);
    expect(cell.contacts.i.every((i) => (i + 23) % 2 === 1)).toBe(true);
    expect(cell.mouth).toHaveLength(4);
    expect(Math.hypot(...cell.translation)).toBeCloseTo(3 * ACC, 12);
  });
});
