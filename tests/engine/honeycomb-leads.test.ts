/**
 * Graphene cavities with leads, through model documents: the leads are ribbons of the
 * honeycomb lattice (lead-cell.ts) solved as numerical leads, and everything downstream
 * (transmission, poles, partial widths, currents, figures) works on them.
 */
import { describe, expect, it } from 'vitest';
import { buildCavitySystem, EffectiveHamiltonian, type CavitySystem } from '../../shared/engine/effective-hamiltonian';
import { transmissionAt } from '../../shared/engine/transmission';
import { findPoles } from '../../shared/engine/poles';
import { complexSvd } from '../../shared/engine/complex-svd';
import { currentMap, leadCouplings, siteOutflow } from '../../shared/engine/current-map';
import { scatteringStates } from '../../shared/engine/scattering-state';
import { validateCavityModel } from '../../shared/model/model-validation';
import { deriveFiguresWithLeads } from '../../shared/engine/lead-channel-ranges';
import { HBAR_MEV_PS } from '../../shared/units/constants';
import type { CavityModelInput } from '../../shared/model/cavity-model';

const ACC = 0.142;
const DX = (Math.sqrt(3) / 2) * ACC;
const DY = 1.5 * ACC;
const T_EV = 2.7;
const t = 1000 * T_EV;

/** A honeycomb rectangle covering grid columns 0..nx−1 and rows 0..ny−1 exactly. */
function honeycombRectangle(nx: number, ny: number, leads: CavityModelInput['leads'], extra: Partial<CavityModelInput> = {}): CavityModelInput {
  return {
    name: 'graphene rectangle',
    spacing: ACC,
    lattice: { kind: 'honeycomb', hopping: T_EV },
    grid: { nx, ny },
    shape: { kind: 'rectangle', x0: -0.01, y0: -0.01, width: nx * DX, height: ny * DY },
    leads,
    ...extra,
  };
}

/** Open channels of lead ℓ at E, from the engine's numerical lead. */
const openCount = (op: EffectiveHamiltonian, lead: number, e: number) => op.openChannels(lead, e).length;

/** The positive thresholds of lead 0 above the Dirac point (E > 10⁻⁶t), sorted. */
function positiveThresholds(op: EffectiveHamiltonian): number[] {
  return op.system.leads[0].numerical!.thresholds.filter((e) => e > 1e-6 * t);
}

describe('clean graphene ribbons as model documents', () => {
  it('a zigzag ribbon (left and right zigzag leads as wide as the cavity) steps through T = 1, 3, 5 near the Dirac point (Brey & Fertig, PRB 73, 235411 (2006), Fig. 3)', () => {
    // 8 zigzag chains, a cavity 12 columns long: an unbroken ribbon, so T is the number of open channels.
    const system = buildCavitySystem(
      honeycombRectangle(12, 8, [
        { side: 'left', start: 0, width: 8 },
        { side: 'right', start: 0, width: 8 },
      ]),
    );
    const op = new EffectiveHamiltonian(system);
    const edges = positiveThresholds(op);
    const steps: number[] = [];
    const energies = [0.5 * edges[0], 0.5 * (edges[0] + edges[1]), 0.5 * (edges[1] + edges[2])];
    for (const e of energies) {
      const p = transmissionAt(op, e);
      steps.push(Math.round(p.transmission[0][1]));
      expect(Math.abs(p.transmission[0][1] - steps[steps.length - 1])).toBeLessThan(1e-9);
      expect(p.reflection[0]).toBeLessThan(1e-9);
      expect(p.unitarityResidual).toBeLessThan(1e-10);
      expect(p.currentResidual).toBeLessThan(1e-10);
    }
    expect(steps).toEqual([1, 3, 5]);
    // Electron–hole symmetry of the nearest-neighbour ribbon: the same steps at −E.
    for (const [k, e] of energies.entries()) expect(Math.abs(transmissionAt(op, -e).transmission[0][1] - steps[k])).toBeLessThan(1e-9);
  });

  it('armchair ribbons (top and bottom leads) conduct at E ≈ 0 when N = 3m − 1 dimer lines and are gapped otherwise (Brey & Fertig 2006; Castro Neto et al., RMP 81, 109 (2009), §II.F)', () => {
    const e = 0.004 * t;
    for (const n of [7, 8, 9, 11]) {
      const system = buildCavitySystem(
        honeycombRectangle(n, 10, [
          { side: 'bottom', start: 0, width: n },
          { side: 'top', start: 0, width: n },
        ]),
      );
      const op = new EffectiveHamiltonian(system);
      const p = transmissionAt(op, e);
      const metallic = n % 3 === 2;
      expect(p.channels, `N = ${n}`).toEqual(metallic ? [1, 1] : [0, 0]);
      expect(Math.abs(p.transmission[0][1] - (metallic ? 1 : 0)), `N = ${n}`).toBeLessThan(1e-9);
      // At the Dirac point itself the metallic ribbon's two bands cross with opposite velocities:
      // answered from just below it (docs/physics-model.md, "Numerical leads").
      const dirac = transmissionAt(op, 0);
      expect(dirac.channels, `N = ${n} at E = 0`).toEqual(metallic ? [1, 1] : [0, 0]);
      expect(Math.abs(dirac.transmission[0][1] - (metallic ? 1 : 0)), `N = ${n} at E = 0`).toBeLessThan(1e-6);
      // Higher up, a clean ribbon transmits every open channel.
      const high = transmissionAt(op, 0.6 * t);
      expect(high.channels[0]).toBeGreaterThan(1);
      expect(Math.abs(high.transmission[0][1] - high.channels[0])).toBeLessThan(1e-8);
      expect(high.unitarityResidual).toBeLessThan(1e-10);
    }
  });
});

/** A small graphene dot: a rectangle with a bite taken out, t′ and Δ, a zigzag lead on the left and an armchair lead on top. */
function grapheneDot(extra: Partial<CavityModelInput> = {}): CavityModelInput {
  return {
    name: 'graphene dot',
    spacing: ACC,
    lattice: { kind: 'honeycomb', hopping: T_EV, nextHopping: 0.1, sublatticePotential: 0.05, removeDangling: true },
    grid: { nx: 14, ny: 8 },
    shape: {
      kind: 'subtract',
      from: { kind: 'rectangle', x0: -0.01, y0: -0.01, width: 14 * DX, height: 8 * DY },
      remove: [{ kind: 'disk', cx: 9 * DX, cy: 2 * DY, radius: 0.2 }],
    },
    leads: [
      { side: 'left', start: 2, width: 4, name: 'zigzag' },
      { side: 'top', start: 5, width: 6, name: 'armchair', offset: -40 },
    ],
    ...extra,
  };
}

/** S†S = 1 and R_ℓ + Σ T(ℓ→ℓ′) = N_ℓ at E. */
function expectUnitary(op: EffectiveHamiltonian, e: number, label: string): void {
  const p = transmissionAt(op, e);
  expect(p.unitarityResidual, label).toBeLessThan(1e-10);
  expect(p.currentResidual, label).toBeLessThan(1e-10);
  for (let l = 0; l < op.leadCount; l++) {
    let sum = p.reflection[l];
    for (let m = 0; m < op.leadCount; m++) if (m !== l) sum += p.transmission[l][m];
    expect(Math.abs(sum - openCount(op, l, e)), label).toBeLessThan(1e-10 * Math.max(1, openCount(op, l, e)));
  }
}

describe('a graphene dot with zigzag and armchair leads', () => {
  it('conserves current and keeps S unitary (t′, Δ, lead offset; B = 0, field-free leads in a field, and the field in the leads)', () => {
    for (const [label, extra] of [
      ['B = 0', {}],
      ['B = 40 T, field-free leads', { field: 40 }],
      ['B = 40 T in the leads', { field: 40, fieldInLeads: true }],
    ] as const) {
      const op = new EffectiveHamiltonian(buildCavitySystem(grapheneDot(extra)));
      let open = 0;
      for (const f of [0.21, 0.47, 0.83, -0.55]) {
        expectUnitary(op, f * t, `${label}, E = ${f}t`);
        open += openCount(op, 0, f * t) * openCount(op, 1, f * t);
      }
      expect(open, label).toBeGreaterThan(0);
    }
  });

  it('certifies the poles in a window with thresholds, each a singular point of the dense T(z) = z − H − Σ(z) assembled independently', () => {
    const system = buildCavitySystem(grapheneDot());
    const op = new EffectiveHamiltonian(system);
    const window = { emin: 0.3 * t, emax: 0.7 * t, gammaMax: 0.08 * t };
    const inside = op.thresholds.filter((e) => e > window.emin && e < window.emax);
    expect(inside.length).toBeGreaterThan(0);
    const r = findPoles(op, window);
    expect(r.certificate.certified).toBe(true);
    expect(r.poles.length).toBeGreaterThanOrEqual(2);
    for (const p of r.poles) {
      const z = { re: p.energy, im: -p.width / 2 };
      const a = denseOperator(system, z, p.sheet);
      const sigma = complexSvd(system.lattice.onsite.length, a).sigma;
      expect(sigma[sigma.length - 1] / sigma[0]).toBeLessThan(1e-12);
      // Partial widths sum to Γ (H Hermitian; contract, "Observables").
      const sum = p.partialWidths.reduce((x, y) => x + y, 0);
      expect(Math.abs(sum - p.width)).toBeLessThan(1e-8 * p.width);
      // The mode's current: its outflow into the leads is Γ/ħ (Σ|ψ|² = 1).
      const map = currentMap(system.lattice, p.mode, leadCouplings(op, z, p.sheet));
      const out = map.leadCurrents.reduce((x, y) => x + y, 0);
      expect(Math.abs(out - p.width / HBAR_MEV_PS)).toBeLessThan(1e-8 * (p.width / HBAR_MEV_PS));
    }
  });

  it('a scattering state obeys Kirchhoff’s rule at every atom, and the figures list the channels the engine opens', () => {
    const doc = grapheneDot({ field: 25, fieldInLeads: true });
    const system = buildCavitySystem(doc);
    const op = new EffectiveHamiltonian(system);
    const e = 0.52 * t;
    const all = scatteringStates(op, e);
    expect(all.states.length).toBeGreaterThan(0);
    for (const st of all.states) {
      const leads = leadCouplings(op, { re: e, im: 0 }, st.sheet);
      const map = currentMap(system.lattice, st.psi, leads, { source: st.source, scale: HBAR_MEV_PS });
      let biggest = 0;
      for (const b of map.bonds) biggest = Math.max(biggest, Math.abs(b));
      for (const o of siteOutflow(system.lattice, map, leads)) expect(Math.abs(o)).toBeLessThan(1e-10 * biggest);
    }
    const checked = validateCavityModel(doc);
    if (!checked.ok) throw new Error('invalid');
    const figures = deriveFiguresWithLeads(checked.model, checked.siteCount);
    figures.leads.forEach((l, k) => {
      for (const f of [-0.8, -0.3, 0.05, 0.31, 0.52, 0.9]) {
        const open = new Set(l.thresholds.filter((r) => f * t > r.opens && f * t < r.closes).map((r) => r.channel));
        expect(open.size, `lead ${k} at ${f}t`).toBe(openCount(op, k, f * t));
      }
    });
  });
});

/**
 * T(z) = z − H − Σ_ℓ Σ_ℓ(z), dense row-major, from the lattice's own sites and bonds and the
 * leads' self-energies (not through the operator's sparse assembly).
 */
function denseOperator(system: CavitySystem, z: { re: number; im: number }, sheet: boolean[][]): Float64Array {
  const lat = system.lattice;
  const n = lat.onsite.length;
  const a = new Float64Array(2 * n * n);
  for (let s = 0; s < n; s++) {
    a[2 * (s * n + s)] = z.re - lat.onsite[s];
    a[2 * (s * n + s) + 1] = z.im;
  }
  const { from, to, phase, hopping } = lat.bonds;
  for (let b = 0; b < from.length; b++) {
    // H[to, from] = −t e^{iθ}: T gets +t e^{iθ} there and its conjugate at [from, to].
    const c = hopping[b] * Math.cos(phase[b]);
    const s = hopping[b] * Math.sin(phase[b]);
    a[2 * (to[b] * n + from[b])] += c;
    a[2 * (to[b] * n + from[b]) + 1] += s;
    a[2 * (from[b] * n + to[b])] += c;
    a[2 * (from[b] * n + to[b]) + 1] -= s;
  }
  system.leads.forEach((lead, l) => {
    const sig = lead.numerical!.selfEnergy(z.re, z.im, sheet[l]);
    const w = lead.mouth.length;
    for (let p = 0; p < w; p++)
      for (let q = 0; q < w; q++) {
        a[2 * (lead.mouth[p] * n + lead.mouth[q])] -= sig[2 * (p * w + q)];
        a[2 * (lead.mouth[p] * n + lead.mouth[q]) + 1] -= sig[2 * (p * w + q) + 1];
      }
  });
  return a;
}
