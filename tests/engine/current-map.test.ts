import { describe, expect, it } from 'vitest';
import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian';
import { currentMap, leadCouplings, siteOutflow } from '../../shared/engine/current-map';
import { localDensityOfStates, scatteringStates } from '../../shared/engine/scattering-state';
import { TransmissionSolver } from '../../shared/engine/transmission';
import { findPoles } from '../../shared/engine/poles';
import { closedCavityEigenvalues } from '../../shared/engine/closed-cavity';
import { landauGauge, latticeInGauge, symmetricGauge } from '../../shared/engine/gauge';
import { SparseLuPlan } from '../../shared/engine/sparse-lu';
import { HBAR_MEV_PS } from '../../shared/units/constants';
import { irregularCavity } from './irregular-cavity';

const spacing = 5;
const material = { effectiveMass: 0.067 };
const maxAbs = (a: ArrayLike<number>) => Array.from(a).reduce((m, x) => Math.max(m, Math.abs(x)), 0);

/** The irregular cavity with three leads. */
const irregular = (field: number) =>
  irregularCavity(field, [
    { side: 'left', start: 1, width: 5 },
    { side: 'right', start: 3, width: 4 },
    { side: 'top', start: 2, width: 6 },
  ]);

describe('probability current of scattering states', () => {
  it('a single open channel of a clean ribbon carries group velocity × density through every cross-section', () => {
    const ny = 8;
    const op = new EffectiveHamiltonian(
      buildCavitySystem({
        name: 'ribbon',
        spacing,
        material,
        grid: { nx: 30, ny },
        shape: { kind: 'rectangle', x0: 0, y0: 0, width: 150, height: 40 },
        leads: [
          { side: 'left', start: 0, width: ny },
          { side: 'right', start: 0, width: ny },
        ],
      }),
    );
    const t = op.hopping;
    const eps = (m: number) => 4 * t - 2 * t * Math.cos((m * Math.PI) / (ny + 1));
    const energy = 0.5 * (eps(1) - 2 * t + (eps(2) - 2 * t));
    expect(op.openChannels(0, energy)).toEqual([1]);
    const [state] = scatteringStates(op, energy, { lead: 0, channel: 1 }).states;
    const leads = leadCouplings(op, { re: energy, im: 0 });
    const map = currentMap(op.system.lattice, state.psi, leads, { source: state.source });
    // Contract: channel m moves with z = ε_m − 2t cos k, so v = (1/ħ)dE/dk = 2t sin k/ħ (slices per ps).
    const k = Math.acos((eps(1) - energy) / (2 * t));
    const v = (2 * t * Math.sin(k)) / HBAR_MEV_PS;
    const { i } = op.sites;
    for (let col = 0; col + 1 < 30; col++) {
      let cross = 0;
      for (let b = 0; b < map.bonds.length; b++) {
        const from = op.system.lattice.bonds.from[b];
        const to = op.system.lattice.bonds.to[b];
        if (i[from] === col && i[to] === col + 1) cross += map.bonds[b];
      }
      let density = 0;
      for (let s = 0; s < op.n; s++) if (i[s] === col) density += state.psi[2 * s] ** 2 + state.psi[2 * s + 1] ** 2;
      expect(cross / (v * density)).toBeCloseTo(1, 10);
      // Unit incoming flux (1/ħ) and T = 1 in a clean ribbon: ħ·(current) = 1.
      expect(cross * HBAR_MEV_PS).toBeCloseTo(1, 10);
    }
  });

  for (const field of [0, 2.5]) {
    it(`obeys Kirchhoff's rule at every site and sends T(ℓ→ℓ') into each lead (B = ${field} T)`, () => {
      const op = new EffectiveHamiltonian(buildCavitySystem(irregular(field)));
      const t = op.hopping;
      const energy = 1.6 * t;
      const open = [0, 1, 2].map((l) => op.openChannels(l, energy).length);
      expect(Math.min(...open)).toBeGreaterThanOrEqual(2);
      const point = new TransmissionSolver(op).at(energy, true);
      const all = scatteringStates(op, energy);
      const leads = leadCouplings(op, { re: energy, im: 0 });
      const into = [0, 1, 2].map(() => [0, 0, 0]);
      for (const st of all.states) {
        const map = currentMap(op.system.lattice, st.psi, leads, { source: st.source, scale: HBAR_MEV_PS });
        const scale = maxAbs(map.bonds);
        expect(scale).toBeGreaterThan(0);
        // Kirchhoff's rule (a stationary state of a Hermitian H): no site gains or loses probability.
        expect(maxAbs(siteOutflow(op.system.lattice, map, leads))).toBeLessThan(1e-10 * scale);
        map.leadCurrents.forEach((c, l) => (into[st.lead][l] += c));
        // The injecting channel's own lead gets back its reflection minus the unit flux sent in.
        const b = point.sChannels!.findIndex((c) => c.lead === st.lead && c.channel === st.channel);
        let back = 0;
        point.sChannels!.forEach((c, a) => {
          if (c.lead === st.lead)
            back += point.sMatrix![2 * (a * point.sChannels!.length + b)] ** 2 + point.sMatrix![2 * (a * point.sChannels!.length + b) + 1] ** 2;
        });
        expect(Math.abs(map.leadCurrents[st.lead] - (back - 1))).toBeLessThan(1e-10);
      }
      for (let from = 0; from < 3; from++) {
        for (let to = 0; to < 3; to++) {
          // Engine transmission (Fisher–Lee, transmission.ts) summed over the injected channels.
          const expected = from === to ? point.reflection[from] - point.channels[from] : point.transmission[from][to];
          expect(Math.abs(into[from][to] - expected)).toBeLessThan(1e-10 * Math.max(1, Math.abs(expected)));
        }
      }
    });
  }

  it('gives the local density of states −Im G_ss/π from the lead-injected states', () => {
    const op = new EffectiveHamiltonian(buildCavitySystem(irregular(1)));
    const energy = 0.7 * op.hopping;
    const rho = localDensityOfStates(op, energy);
    const values = new Float64Array(2 * op.rowIdx.length);
    op.assemble({ re: energy, im: 0 }, op.sheetAt(energy), values);
    const lu = SparseLuPlan.analyse(op.n, op.colPtr, op.rowIdx).factor(values);
    // Spectral function A = i(G − G†) = GΓG† (Datta, Electronic Transport in Mesoscopic Systems, 1995, ch. 3).
    for (const s of [0, 17, 60, op.n - 1]) {
      const e = new Float64Array(2 * op.n);
      e[2 * s] = 1;
      const g = lu.solve(e);
      const expected = -g[2 * s + 1] / Math.PI;
      expect(expected).toBeGreaterThan(0);
      expect(Math.abs(rho[s] - expected)).toBeLessThan(1e-10 * expected);
    }
  });
});

describe('probability current of poles', () => {
  it('sends Γ/ħ × the norm inside into the leads, Γ_ℓ/ħ into each, and Γ|ψ_s|²/ħ out of each site', () => {
    const op = new EffectiveHamiltonian(buildCavitySystem({ ...irregular(1.5), potential: [] }));
    const t = op.hopping;
    const r = findPoles(op, { emin: 0.6 * t, emax: 1.0 * t, gammaMax: 0.1 * t });
    expect(r.poles.length).toBeGreaterThanOrEqual(2);
    for (const p of r.poles) {
      const z = { re: p.energy, im: -p.width / 2 };
      const leads = leadCouplings(op, z, p.sheet);
      const map = currentMap(op.system.lattice, p.mode, leads);
      const out = map.leadCurrents.reduce((a, b) => a + b, 0);
      // Flux form of the width: d/dt Σ|ψ|² = −(Γ/ħ)Σ|ψ|² for ψ ∝ e^{−izt/ħ} (contract, "Partial widths").
      const expected = (p.width / HBAR_MEV_PS) * map.norm;
      expect(Math.abs(out - expected)).toBeLessThan(1e-10 * expected);
      map.leadCurrents.forEach((c, l) => expect(Math.abs(c * HBAR_MEV_PS - p.partialWidths[l])).toBeLessThan(1e-9 * p.width));
      const site = siteOutflow(op.system.lattice, map, leads);
      const scale = maxAbs(map.bonds);
      for (let s = 0; s < op.n; s++) {
        const local = (p.width / HBAR_MEV_PS) * (p.mode[2 * s] ** 2 + p.mode[2 * s + 1] ** 2);
        expect(Math.abs(site[s] - local)).toBeLessThan(1e-9 * scale);
      }
    }
  });
});

describe('current of closed cavities, fields and gauges', () => {
  it('vanishes on every bond of a closed-rectangle eigenstate (B = 0)', () => {
    const sys = buildCavitySystem({
      name: 'box',
      spacing,
      material,
      grid: { nx: 30, ny: 20 },
      shape: { kind: 'rectangle', x0: 0, y0: 0, width: 150, height: 100 },
    });
    const t = sys.hopping;
    const res = closedCavityEigenvalues(sys.lattice, { target: 0.3 * t, count: 3, vectors: true });
    for (const v of res.vectors!) {
      const map = currentMap(sys.lattice, v);
      // A nonzero scale for comparison: t/ħ times the largest |ψ|².
      const scale = (t / HBAR_MEV_PS) * maxAbs(v) ** 2;
      expect(maxAbs(map.bonds)).toBeLessThan(1e-12 * scale);
    }
  });

  /** A disk of radius 20 sites; at B = ±2 T the magnetic length (18 nm) is a fifth of the radius (100 nm). */
  function disk(field: number) {
    return buildCavitySystem({ name: 'disk', spacing, material, grid: { nx: 41, ny: 41 }, shape: { kind: 'disk', cx: 100, cy: 100, radius: 100 }, field });
  }

  function circulation(sys: ReturnType<typeof disk>, vec: Float64Array): number {
    const map = currentMap(sys.lattice, vec);
    let l = 0;
    for (let s = 0; s < sys.sites.i.length; s++) {
      const x = sys.sites.i[s] - 20;
      const y = sys.sites.j[s] - 20;
      l += x * map.siteVectors[2 * s + 1] - y * map.siteVectors[2 * s];
    }
    return l;
  }

  it('circulates counterclockwise in the ground state of a disk at B > 0, as the Lorentz force turns an electron', () => {
    // Lorentz force F = q v × B (Jackson, Classical Electrodynamics, 3rd ed., §12.1): for q = −e, v = +x̂ and
    // B along +z, F points along +ŷ, so the cyclotron orbit turns counterclockwise; the lowest Landau-level
    // state of the disk carries that diamagnetic circulation.
    for (const field of [2, -2]) {
      const sys = disk(field);
      const res = closedCavityEigenvalues(sys.lattice, { target: 0, count: 1, vectors: true });
      const l = circulation(sys, res.vectors![0]);
      const scale = (sys.hopping / HBAR_MEV_PS) * 20;
      expect(Math.sign(l)).toBe(Math.sign(field));
      expect(Math.abs(l)).toBeGreaterThan(1e-3 * scale);
    }
  });

  it('does not change under a change of gauge (Landau → symmetric)', () => {
    const sys = disk(2);
    const sym = latticeInGauge(sys.lattice, symmetricGauge(sys.flux));
    // The Landau lattice built from the gauge's line integral is the engine's lattice itself.
    const landau = latticeInGauge(sys.lattice, landauGauge(sys.flux));
    expect(maxAbs(landau.bonds.phase.map((p, b) => p - sys.lattice.bonds.phase[b]))).toBeLessThan(1e-12);
    const a = closedCavityEigenvalues(sys.lattice, { target: 0, count: 1, vectors: true });
    const b = closedCavityEigenvalues(sym, { target: 0, count: 1, vectors: true });
    expect(Math.abs(a.energies[0] - b.energies[0])).toBeLessThan(1e-10 * sys.hopping);
    const ja = currentMap(sys.lattice, a.vectors![0]);
    const jb = currentMap(sym, b.vectors![0]);
    const scale = maxAbs(ja.bonds);
    expect(scale).toBeGreaterThan(0);
    expect(maxAbs(ja.bonds.map((x, k) => x - jb.bonds[k]))).toBeLessThan(1e-8 * scale);
  });
});
