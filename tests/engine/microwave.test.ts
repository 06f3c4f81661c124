// The microwave mode (docs/physics-model.md, "Physics modes"): the same lattice operator
// with t = 1/a² and z = k², checked against the closed-form TM modes of a rectangular and
// a circular resonator as the spacing falls, plus the current and Husimi maps (issue 12)
// on a microwave cavity.
import { describe, expect, it } from 'vitest';
import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian';
import { closedCavityEigenvalues } from '../../shared/engine/closed-cavity';
import { findPoles } from '../../shared/engine/poles';
import { currentMap, leadCouplings } from '../../shared/engine/current-map';
import { husimiMap } from '../../shared/engine/husimi-map';
import { type CavityModelInput } from '../../shared/model/cavity-model';
import { validateCavityModel } from '../../shared/model/model-validation';
import {
  C_MM_PER_NS,
  frequencyOfWavenumberSquared,
  microwaveFigures,
  microwaveWindow,
  twoDimensionalLimitGhz,
  wavenumberSquared,
} from '../../shared/units/microwave';
import { deriveFigures } from '../../shared/model/derived-figures';
import { resonanceFigures, resonancePhysicsOf } from '../../shared/model/resonance-validity';
import { HBAR_MEV_PS } from '../../shared/units/constants';

/** c = 299 792 458 m/s, exact by the SI definition of the metre (CODATA): 299.792458 mm/ns. */
const C = 299.792458;
const epsR = 2.2;
const angleGap = (a: number, b: number) => Math.abs(Math.atan2(Math.sin(a - b), Math.cos(a - b)));

function microwave(shape: unknown, grid: { nx: number; ny: number }, spacing: number, extra: Partial<CavityModelInput> = {}): CavityModelInput {
  return { name: 'resonator', physics: { kind: 'microwave', permittivity: epsR, height: 3 }, spacing, grid, shape, ...extra } as CavityModelInput;
}

describe('the microwave model document', () => {
  it('uses t = 1/a² (mm⁻²) and refuses a material, a field, potentials and lead offsets', () => {
    const doc = microwave({ kind: 'rectangle', x0: 0, y0: 0, width: 10, height: 6 }, { nx: 20, ny: 12 }, 0.5);
    const sys = buildCavitySystem(doc);
    expect(Math.abs(sys.hopping - 4)).toBeLessThan(1e-15);
    const bad = validateCavityModel({
      ...doc,
      material: 'gaas',
      field: 1,
      potential: [{ kind: 'gaussian', cx: 1, cy: 1, sigma: 1, amplitude: 1 }],
      leads: [{ side: 'left', start: 2, width: 3, offset: 1 }],
    });
    expect(bad.ok).toBe(false);
    const paths = bad.ok ? [] : bad.issues.map((i) => i.path.join('.'));
    expect(paths).toEqual(expect.arrayContaining(['material', 'field', 'potential', 'leads.0.offset']));
    // Electrons still need their material, and say so by name.
    const noMaterial = validateCavityModel({
      name: 'x',
      spacing: 5,
      grid: { nx: 4, ny: 4 },
      shape: { kind: 'rectangle', x0: 0, y0: 0, width: 20, height: 20 },
    });
    expect(noMaterial.ok ? [] : noMaterial.issues.map((i) => i.path.join('.'))).toContain('material');
  });

  it('states the 2D limit c/(2h√ε_r) in its figures', () => {
    const doc = microwave({ kind: 'rectangle', x0: 0, y0: 0, width: 10, height: 6 }, { nx: 20, ny: 12 }, 0.5);
    const checked = validateCavityModel(doc);
    if (!checked.ok) throw new Error('invalid');
    const d = deriveFigures(checked.model, checked.siteCount);
    // h = 3 mm, ε_r = 2.2: c/(2h√ε_r) = 299.792458/(6·√2.2) GHz.
    expect(Math.abs(d.twoDimensionalLimitGhz! - C / (6 * Math.sqrt(2.2)))).toBeLessThan(1e-12 * d.twoDimensionalLimitGhz!);
    expect(twoDimensionalLimitGhz(3, 2.2)).toBe(d.twoDimensionalLimitGhz);
  });
});

describe('complex frequencies', () => {
  it('turns z = k² into f = c√z/(2π√ε_r), Γ_f = 2|Im f|, Q = Re f/Γ_f and τ = 1/(2πΓ_f)', () => {
    expect(C_MM_PER_NS).toBe(C);
    // A pole at k = 1.3 − 0.002i mm⁻¹: z = k².
    const k = { re: 1.3, im: -0.002 };
    const z = { re: k.re ** 2 - k.im ** 2, im: 2 * k.re * k.im };
    const f = microwaveFigures(z.re, -2 * z.im, epsR);
    const scale = C / (2 * Math.PI * Math.sqrt(epsR));
    expect(Math.abs(f.frequencyGhz - scale * 1.3)).toBeLessThan(1e-12 * f.frequencyGhz);
    expect(Math.abs(f.widthMhz - 2 * scale * 0.002 * 1e3)).toBeLessThan(1e-9 * f.widthMhz);
    expect(Math.abs(f.quality! - 1.3 / 0.004)).toBeLessThan(1e-9 * f.quality!);
    expect(Math.abs(f.lifetimeNs! * 2 * Math.PI * f.widthMhz * 1e-3 - 1)).toBeLessThan(1e-12);
    // Q = ω τ: the same statement in other words (common practice, no source).
    expect(Math.abs(2 * Math.PI * f.frequencyGhz * f.lifetimeNs! - f.quality!)).toBeLessThan(1e-9 * f.quality!);
    expect(microwaveFigures(2, 0, epsR).quality).toBeNull();
    // Round trip of a real frequency.
    expect(Math.abs(frequencyOfWavenumberSquared(wavenumberSquared(7.5, epsR), epsR) - 7.5)).toBeLessThan(1e-12 * 7.5);
  });

  it('maps a frequency window onto a k² window that holds every pole up to Γ_f max at its top', () => {
    const w = microwaveWindow(4, 6, 50, epsR);
    const kTop = Math.sqrt(w.emax);
    const kIm = (Math.PI * Math.sqrt(epsR) * 0.05) / C;
    // The pole at f = 6 GHz with Γ_f = 50 MHz: z = (kTop − i kIm)², Γ_z = −2 Im z = 4 kTop kIm = gammaMax.
    const f = microwaveFigures(kTop * kTop - kIm * kIm, 4 * kTop * kIm, epsR);
    expect(Math.abs(f.widthMhz - 50)).toBeLessThan(1e-9 * 50);
    expect(Math.abs(f.frequencyGhz - 6)).toBeLessThan(1e-9 * 6);
    expect(Math.abs(frequencyOfWavenumberSquared(w.emin, epsR) - 4)).toBeLessThan(1e-12);
  });
});

describe('closed resonators against the closed forms', () => {
  it('rectangle: f_mn = c/(2√ε_r)·√((m/A)² + (n/B)²), the error falling as a²', () => {
    // TM_mn0 modes of a rectangular cavity with perfectly conducting walls:
    // f = c/(2π√ε_r)·√((mπ/A)² + (nπ/B)²) (Pozar, Microwave Engineering, 4th ed., §6.3,
    // rectangular cavity resonators, with ℓ = 0; section number from memory).
    // On the lattice the walls sit one spacing outside the last sites: A = (Nx + 1)a.
    const A = 30;
    const B = 20;
    const exact: number[] = [];
    for (let m = 1; m <= 5; m++) for (let n = 1; n <= 5; n++) exact.push((C / (2 * Math.sqrt(epsR))) * Math.hypot(m / A, n / B));
    exact.sort((x, y) => x - y);
    const count = 5;
    const worst: number[] = [];
    for (const a of [1, 0.5, 0.25]) {
      const nx = Math.round(A / a) - 1;
      const ny = Math.round(B / a) - 1;
      const sys = buildCavitySystem(microwave({ kind: 'rectangle', x0: 0, y0: 0, width: nx * a, height: ny * a }, { nx, ny }, a));
      const res = closedCavityEigenvalues(sys.lattice, { target: 0, count });
      const freqs = res.energies.map((k2) => frequencyOfWavenumberSquared(k2, epsR));
      const errors = freqs.map((f, j) => Math.abs(f / exact[j]! - 1));
      // The lattice is low: k² = (2/a²)(1 − cos ka) < k².
      freqs.forEach((f, j) => expect(f).toBeLessThan(exact[j]!));
      worst.push(Math.max(...errors));
    }
    // Second order: halving a divides the error by 4 (k²a²/12 from the cosine's expansion).
    for (let s = 1; s < worst.length; s++) {
      const ratio = worst[s - 1]! / worst[s]!;
      expect(ratio).toBeGreaterThan(3.8);
      expect(ratio).toBeLessThan(4.2);
    }
    expect(worst.at(-1)!).toBeLessThan(5e-4);
  });

  it('disk: f = c·j_{m,k}/(2π√ε_r R), converging as the spacing falls', () => {
    // Zeros of J_m (Abramowitz & Stegun, Table 9.5): j_{0,1}, j_{1,1} (twice), j_{2,1} (twice), j_{0,2}.
    const zeros = [2.404825557695773, 3.831705970207512, 3.831705970207512, 5.135622301840683, 5.135622301840683, 5.520078110286311];
    const R = 10; // mm
    const worst: number[] = [];
    for (const r of [10, 20, 40]) {
      const a = R / (r + 0.5); // hard wall at R = (r + ½)a (contract, "Closed-cavity limits")
      const size = 2 * r + 3;
      const sys = buildCavitySystem(microwave({ kind: 'disk', cx: (r + 1) * a, cy: (r + 1) * a, radius: r * a }, { nx: size, ny: size }, a));
      const res = closedCavityEigenvalues(sys.lattice, { target: 0, count: zeros.length });
      const exact = zeros.map((j) => (C * j) / (2 * Math.PI * Math.sqrt(epsR) * R));
      const errors = res.energies.map((k2, n) => Math.abs(frequencyOfWavenumberSquared(k2, epsR) / exact[n]! - 1));
      worst.push(Math.max(...errors));
    }
    // The staircase wall makes the disk converge less regularly than the rectangle; the
    // error falls with every halving of a and is below 0.5 % at r = 40 (seen: about 0.4 %).
    for (let s = 1; s < worst.length; s++) expect(worst[s]!).toBeLessThan(worst[s - 1]!);
    expect(worst.at(-1)!).toBeLessThan(5e-3);
  });
});

/** A rectangular resonator 24 mm × 16 mm on a 1 mm lattice with two waveguide ports 4 mm wide. */
function twoPort(): CavityModelInput {
  return microwave({ kind: 'rectangle', x0: 0, y0: 0, width: 24, height: 16 }, { nx: 24, ny: 16 }, 1, {
    leads: [
      { side: 'left', start: 2, width: 4, name: 'port 1' },
      { side: 'right', start: 10, width: 4, name: 'port 2' },
    ],
  });
}

describe('current and Husimi maps in the microwave mode (issue 12)', () => {
  it('sends Γ × the norm inside into the ports: the flux form of the partial widths holds with t = 1/a²', () => {
    const op = new EffectiveHamiltonian(buildCavitySystem(twoPort()));
    const t = op.hopping;
    // Channel 1 of a 4-site port opens at 2t(1 − cos(π/5)) ≈ 0.38t: the window lies above it.
    const r = findPoles(op, { emin: 0.45 * t, emax: 0.7 * t, gammaMax: 0.05 * t });
    // Bound modes (odd about a mirror line a port does not see) have Γ = 0: nothing flows out.
    const leaky = r.poles.filter((p) => !p.bound);
    expect(leaky.length).toBeGreaterThanOrEqual(2);
    const phys = resonancePhysicsOf(op.system.model);
    for (const p of leaky) {
      const leads = leadCouplings(op, { re: p.energy, im: -p.width / 2 }, p.sheet);
      const map = currentMap(op.system.lattice, p.mode, leads);
      // currentMap reports currents in 1/ps with ħ in meV·ps; times ħ it is the width in z units (mm⁻²).
      const out = map.leadCurrents.reduce((x, y) => x + y, 0) * HBAR_MEV_PS;
      expect(Math.abs(out - p.width * map.norm)).toBeLessThan(1e-10 * p.width);
      map.leadCurrents.forEach((c, l) => expect(Math.abs(c * HBAR_MEV_PS - p.partialWidths[l]!)).toBeLessThan(1e-9 * p.width));
      // Q from the complex frequency, not E/Γ: with √z ≈ √E(1 − iΓ/(4E)), Re√z/(2|Im√z|) ≈ 2E/Γ
      // (z = k² doubles the relative width), to second order in Γ/E.
      const fig = resonanceFigures(p.energy, p.width, phys);
      expect(Math.abs(fig.quality! / ((2 * p.energy) / p.width) - 1)).toBeLessThan((p.width / p.energy) ** 2);
    }
  });

  it('shows the four ray directions (±kx, ±ky) of a closed microwave rectangle mode, whose current is zero', () => {
    const nx = 90;
    const ny = 70;
    const a = 0.5; // mm
    const sys = buildCavitySystem(microwave({ kind: 'rectangle', x0: 0, y0: 0, width: nx * a, height: ny * a }, { nx, ny }, a));
    const t = sys.hopping;
    const m = 12;
    const n = 9;
    // Contract, "Closed-cavity limits": exact lattice level with t = 1/a².
    const kx = (m * Math.PI) / (nx + 1);
    const ky = (n * Math.PI) / (ny + 1);
    const exact = 2 * t * (2 - Math.cos(kx) - Math.cos(ky));
    const res = closedCavityEigenvalues(sys.lattice, { target: exact + 1e-7 * t, count: 1, vectors: true });
    expect(Math.abs(res.energies[0]! - exact)).toBeLessThan(1e-9 * t);
    const psi = res.vectors![0]!;
    expect(Math.max(...currentMap(sys.lattice, psi).bonds.map(Math.abs))).toBeLessThan(1e-10 * t);
    const sigma = 9 * a;
    const map = husimiMap(sys.lattice, a, psi, { energy: exact, sigmaNm: sigma, directions: 96, gridNm: 8 * a, peakThreshold: 0.3 });
    const expected = Math.atan2(ky, kx);
    const four = [expected, Math.PI - expected, -expected, expected - Math.PI];
    let checked = 0;
    for (let p = 0; p < map.points.length / 2; p++) {
      const x = map.points[2 * p]!;
      const y = map.points[2 * p + 1]!;
      if (x < 3 * sigma || y < 3 * sigma || x > (nx - 1) * a - 3 * sigma || y > (ny - 1) * a - 3 * sigma) continue;
      const peaks = map.peaks.filter((q) => q.point === p);
      expect(peaks).toHaveLength(4);
      for (const target of four) {
        const hit = peaks.filter((q) => angleGap(q.angle, target) < map.angularResolution);
        expect(hit).toHaveLength(1);
        expect(Math.abs(hit[0]!.share - 0.25)).toBeLessThan(0.05);
      }
      checked++;
    }
    expect(checked).toBeGreaterThanOrEqual(4);
  });
});
