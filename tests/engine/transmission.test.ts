import { describe, expect, it } from 'vitest';
import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian';
import { TransmissionSolver, transmissionSweep } from '../../shared/engine/transmission';
import { WorkCancelled } from '../../shared/engine/operator';
import { findPoles } from '../../shared/engine/poles';
import type { CavityModelInput } from '../../shared/model/cavity-model';
import { irregularCavity as irregular } from './irregular-cavity';

const spacing = 5;
const material = { effectiveMass: 0.067 };

function operator(doc: CavityModelInput): EffectiveHamiltonian {
  return new EffectiveHamiltonian(buildCavitySystem(doc));
}

/** Double barrier in a chain: a weakly coupled 1D cavity with narrow resonances. */
function doubleBarrier(): EffectiveHamiltonian {
  const doc: CavityModelInput = {
    name: 'double barrier',
    spacing,
    material,
    grid: { nx: 40, ny: 1 },
    shape: { kind: 'rectangle', x0: 0, y0: 0, width: 200, height: 5 },
    potential: [
      {
        kind: 'sites',
        values: [
          [4, 0, 1],
          [31, 0, 1],
        ],
      },
    ],
    leads: [
      { side: 'left', start: 0, width: 1 },
      { side: 'right', start: 0, width: 1 },
    ],
  };
  const t = operator(doc).hopping;
  (doc.potential![0] as { values: [number, number, number][] }).values = [
    [4, 0, 40 * t],
    [31, 0, 40 * t],
  ];
  return operator(doc);
}

/** Samples above half height grouped into peaks (gaps over 1e-3·t separate peaks). */
function peaksOf(points: { energy: number; transmission: number[][] }[], t: number) {
  const peaks: { lo: number; hi: number; max: number; at: number }[] = [];
  let prev: number | null = null;
  for (const p of points) {
    const tr = p.transmission[0][1];
    if (tr <= 0.5) continue;
    const last = peaks[peaks.length - 1];
    if (last && prev !== null && p.energy - prev < 1e-3 * t) {
      last.hi = p.energy;
      if (tr > last.max) {
        last.max = tr;
        last.at = p.energy;
      }
    } else peaks.push({ lo: p.energy, hi: p.energy, max: tr, at: p.energy });
    prev = p.energy;
  }
  return peaks;
}

describe('transmission', () => {
  it('gives integer plateaus in a clean ribbon, stepping at ε_m − 2t', () => {
    const width = 6;
    const op = operator({
      name: 'ribbon',
      spacing,
      material,
      grid: { nx: 9, ny: width },
      shape: { kind: 'rectangle', x0: 0, y0: 0, width: 45, height: 30 },
      leads: [
        { side: 'left', start: 0, width },
        { side: 'right', start: 0, width },
      ],
    });
    const t = op.hopping;
    const solver = new TransmissionSolver(op);
    // Channel m opens at ε_m − 2t = 2t − 2t cos(mπ/(W+1)) (contract, "Leads").
    const opens = Array.from({ length: width }, (_, m) => 2 * t - 2 * t * Math.cos(((m + 1) * Math.PI) / (width + 1)));
    for (let m = 0; m < width; m++) {
      const upper = m + 1 < width ? opens[m + 1] : opens[m] + 0.3 * t;
      for (const u of [0.02, 0.5, 0.98]) {
        const e = opens[m] + u * (upper - opens[m]);
        const p = solver.at(e);
        expect(Math.abs(p.transmission[0][1] - (m + 1))).toBeLessThan(1e-9);
        expect(p.channels).toEqual([m + 1, m + 1]);
      }
    }
    expect(solver.at(0.5 * opens[0]).transmission[0][1]).toBe(0);
  });

  it('matches T = 1/(1 + (V/(2t sin k))²) for one impurity in a chain', () => {
    // Closed form from G at the impurity, G = 1/(2it sin k − V) and T = (2t sin k)²|G|²
    // (Datta, "Electronic Transport in Mesoscopic Systems", ch. 3, delta scatterer; derived here
    // for z = 4t − 2t cos k, the band of a width-one lead on this lattice).
    const op = operator({
      name: 'chain',
      spacing,
      material,
      grid: { nx: 11, ny: 1 },
      shape: { kind: 'rectangle', x0: 0, y0: 0, width: 55, height: 5 },
      potential: [{ kind: 'sites', values: [[5, 0, 0]] }],
      leads: [
        { side: 'left', start: 0, width: 1 },
        { side: 'right', start: 0, width: 1 },
      ],
    });
    const t = op.hopping;
    for (const vOverT of [0.3, 1.7]) {
      const withV = operator({
        ...(op.system.model as CavityModelInput),
        potential: [{ kind: 'sites', values: [[5, 0, vOverT * t]] }],
      });
      const solver = new TransmissionSolver(withV);
      for (const k of [0.2, 0.9, 1.6, 2.7]) {
        const e = 4 * t - 2 * t * Math.cos(k);
        const expected = 1 / (1 + ((vOverT * t) / (2 * t * Math.sin(k))) ** 2);
        const p = solver.at(e);
        expect(Math.abs(p.transmission[0][1] / expected - 1)).toBeLessThan(1e-10);
        expect(p.currentResidual).toBeLessThan(1e-12);
      }
    }
  });

  it('conserves current and keeps S unitary at many energies with a field', () => {
    const op = operator(
      irregular(3, [
        { side: 'left', start: 2, width: 5 },
        { side: 'right', start: 1, width: 4 },
        { side: 'top', start: 3, width: 6 },
        { side: 'bottom', start: 8, width: 3, offset: 1.5 },
      ]),
    );
    const t = op.hopping;
    const solver = new TransmissionSolver(op);
    let checked = 0;
    for (let k = 0; k < 40; k++) {
      const e = 0.01 * t + (2.5 * t * k) / 40;
      const p = solver.at(e);
      expect(p.currentResidual).toBeLessThan(1e-10);
      expect(p.unitarityResidual).toBeLessThan(1e-10);
      checked += p.channels.reduce((a, b) => a + b, 0) > 0 ? 1 : 0;
    }
    expect(checked).toBeGreaterThan(35);
  });

  it('is reciprocal at B = 0 with three leads: T(a→b) = T(b→a)', () => {
    const op = operator(
      irregular(0, [
        { side: 'left', start: 2, width: 5 },
        { side: 'right', start: 1, width: 4 },
        { side: 'top', start: 3, width: 6 },
      ]),
    );
    const t = op.hopping;
    const solver = new TransmissionSolver(op);
    let nontrivial = 0;
    for (const u of [0.07, 0.23, 0.41, 0.66, 0.95]) {
      const p = solver.at(u * t);
      for (let a = 0; a < 3; a++)
        for (let b = 0; b < 3; b++) {
          // Onsager-Büttiker reciprocity T_ab(B) = T_ba(−B) (Büttiker, PRL 57, 1761 (1986)).
          expect(Math.abs(p.transmission[a][b] - p.transmission[b][a])).toBeLessThan(1e-10 * (1 + p.transmission[a][b]));
          if (p.transmission[a][b] > 0.05) nontrivial++;
        }
    }
    expect(nontrivial).toBeGreaterThan(5);
  });

  it('has G(B) = G(−B) for two terminals and T_ab(B) = T_ba(−B) for three', () => {
    const leads: CavityModelInput['leads'] = [
      { side: 'left', start: 2, width: 5 },
      { side: 'right', start: 1, width: 4 },
    ];
    const plus = new TransmissionSolver(operator(irregular(4, leads)));
    const minus = new TransmissionSolver(operator(irregular(-4, leads)));
    const three: CavityModelInput['leads'] = [...leads!, { side: 'top', start: 3, width: 6 }];
    const plus3 = new TransmissionSolver(operator(irregular(4, three)));
    const minus3 = new TransmissionSolver(operator(irregular(-4, three)));
    const t = plus.op.hopping;
    let asymmetric = 0;
    for (const u of [0.11, 0.37, 0.62, 0.88]) {
      const gp = plus.at(u * t).conductance!;
      const gm = minus.at(u * t).conductance!;
      // Two-terminal Onsager symmetry (Büttiker, PRL 57, 1761 (1986)).
      expect(Math.abs(gp - gm)).toBeLessThan(1e-10 * (1 + gp));
      const p = plus3.at(u * t);
      const m = minus3.at(u * t);
      for (let a = 0; a < 3; a++)
        for (let b = 0; b < 3; b++) {
          expect(Math.abs(p.transmission[a][b] - m.transmission[b][a])).toBeLessThan(1e-10 * (1 + p.transmission[a][b]));
          if (Math.abs(p.transmission[a][b] - p.transmission[b][a]) > 0.01) asymmetric++;
        }
    }
    // The field really breaks T_ab = T_ba with three leads, so the check above is not empty.
    expect(asymmetric).toBeGreaterThan(0);
  });

  it('passes the contract mirror check T(top←left, B) = T(bottom←left, −B)', () => {
    // Cavity symmetric about its middle row; top and bottom leads mirror images.
    const doc = (field: number): CavityModelInput => ({
      name: 'mirror',
      spacing,
      material,
      grid: { nx: 14, ny: 11 },
      shape: { kind: 'union', of: [{ kind: 'rectangle', x0: 0, y0: 0, width: 70, height: 55 }] },
      potential: [{ kind: 'gaussian', cx: 40, cy: 25, sigma: 8, amplitude: 4 }],
      field,
      leads: [
        { side: 'left', start: 3, width: 5 },
        { side: 'top', start: 6, width: 4 },
        { side: 'bottom', start: 6, width: 4 },
      ],
    });
    const a = new TransmissionSolver(operator(doc(2.5)));
    const b = new TransmissionSolver(operator(doc(-2.5)));
    const t = a.op.hopping;
    let differs = 0;
    for (const u of [0.13, 0.45, 0.8]) {
      const pa = a.at(u * t);
      const pb = b.at(u * t);
      expect(Math.abs(pa.transmission[0][1] - pb.transmission[0][2])).toBeLessThan(1e-10 * (1 + pa.transmission[0][1]));
      expect(Math.abs(pa.transmission[0][2] - pb.transmission[0][1])).toBeLessThan(1e-10 * (1 + pa.transmission[0][2]));
      if (Math.abs(pa.transmission[0][1] - pa.transmission[0][2]) > 0.01) differs++;
    }
    expect(differs).toBeGreaterThan(0);
  });

  it('finds resonances of width 1e-4·t hidden between grid points', () => {
    const op = doubleBarrier();
    const t = op.hopping;
    const emin = 2.5 * t;
    const emax = 3.5 * t;
    const coarse = transmissionSweep(op, { emin, emax, points: 41 });
    const coarseMax = Math.max(...coarse.points.map((p) => p.transmission[0][1]));
    const progress: number[] = [];
    const fine = transmissionSweep(op, { emin, emax, points: 41, refine: { maxPoints: 1500 } }, { onProgress: (_s, f) => progress.push(f) });
    expect(coarseMax).toBeLessThan(0.05);
    const peaks = peaksOf(fine.points, t);
    // Box levels between hard walls at sites 4 and 31: k_n = nπ/27, E = 4t − 2t cos k_n
    // (particle in a box on a chain, common practice); n = 7..11 fall in the window.
    const levels = [7, 8, 9, 10, 11].map((n) => 4 * t - 2 * t * Math.cos((n * Math.PI) / 27));
    expect(peaks).toHaveLength(levels.length);
    peaks.forEach((peak, k) => {
      // A symmetric double barrier transmits fully on resonance (common practice, no source).
      expect(peak.max).toBeGreaterThan(0.98);
      const fwhm = peak.hi - peak.lo;
      expect(fwhm).toBeLessThan(5e-4 * t);
      expect(fwhm).toBeGreaterThan(1e-5 * t);
      expect(Math.abs(peak.at - levels[k])).toBeLessThan(0.01 * t);
    });
    expect(fine.budgetExhausted).toBe(false);
    expect(progress[progress.length - 1]).toBe(1);
    expect(fine.worstCurrentResidual).toBeLessThan(1e-9);
  });

  it('puts the peak of every listed pole on the curve when the poles are given as anchors', () => {
    // The spectrum beside a pole search: a small budget cannot resolve the narrow peaks by
    // bisection, but samples at each pole's E and E ± Γ/2 draw them at full height.
    const op = doubleBarrier();
    const t = op.hopping;
    const window = { emin: 2.5 * t, emax: 3.5 * t, gammaMax: 1e-2 * t };
    const { poles } = findPoles(op, window);
    expect(poles).toHaveLength(5);
    const anchors = poles.flatMap((p) => [p.energy - p.width / 2, p.energy, p.energy + p.width / 2]);
    const request = { emin: window.emin, emax: window.emax, points: 41, refine: { maxPoints: 60 } };
    const plain = transmissionSweep(op, request);
    const anchored = transmissionSweep(op, { ...request, anchors });
    expect(plain.budgetExhausted).toBe(true);
    expect(anchored.points.length).toBe(plain.points.length + anchors.length);
    expect(anchored.points.every((p, k) => k === 0 || p.energy > anchored.points[k - 1].energy)).toBe(true);
    const at = (e: number) => anchored.points.find((p) => p.energy === e)!.transmission[0][1];
    for (const p of poles) {
      // Symmetric double barrier: T = 1 on resonance and 1/2 at E ± Γ/2 for an isolated
      // Breit–Wigner peak (common practice, no source).
      expect(at(p.energy)).toBeGreaterThan(0.98);
      expect(at(p.energy - p.width / 2)).toBeGreaterThan(0.4);
      expect(at(p.energy - p.width / 2)).toBeLessThan(0.6);
    }
    // Without anchors this budget misses some of the peaks: the anchors are what draws them.
    expect(peaksOf(plain.points, t).length).toBeLessThan(poles.length);
  });

  it('finds two narrow resonances inside one grid step with the upper probe', () => {
    // A two-site well between two high barriers: its bonding and antibonding levels
    // 4t ∓ t (two-site molecule ε ∓ t, common practice) are narrow and are the only
    // poles near the window, so across one step holding both arg det T turns by ≈ 2π.
    const doc: CavityModelInput = {
      name: 'two-site well',
      spacing,
      material,
      grid: { nx: 4, ny: 1 },
      shape: { kind: 'rectangle', x0: 0, y0: 0, width: 20, height: 5 },
      potential: [
        {
          kind: 'sites',
          values: [
            [0, 0, 1],
            [3, 0, 1],
          ],
        },
      ],
      leads: [
        { side: 'left', start: 0, width: 1 },
        { side: 'right', start: 0, width: 1 },
      ],
    };
    const t = operator(doc).hopping;
    (doc.potential![0] as { values: [number, number, number][] }).values = [
      [0, 0, 30 * t],
      [3, 0, 30 * t],
    ];
    const op = operator(doc);
    const request = { emin: 2.6 * t, emax: 5.4 * t, points: 2 };
    const withProbe = peaksOf(transmissionSweep(op, { ...request, refine: { maxPoints: 600 } }).points, t);
    const without = peaksOf(transmissionSweep(op, { ...request, refine: { maxPoints: 600, upperProbe: false } }).points, t);
    expect(withProbe).toHaveLength(2);
    expect(Math.abs(withProbe[0].at - 3 * t)).toBeLessThan(0.05 * t);
    expect(Math.abs(withProbe[1].at - 5 * t)).toBeLessThan(0.05 * t);
    // Without the probe the pair cancels modulo 2π and nothing is found: the test is not empty.
    expect(without).toHaveLength(0);
  });

  it('stops on cancellation and rejects a bad request', () => {
    const op = operator(
      irregular(0, [
        { side: 'left', start: 2, width: 5 },
        { side: 'right', start: 1, width: 4 },
      ]),
    );
    const ctl = new AbortController();
    ctl.abort();
    expect(() => transmissionSweep(op, { emin: 0, emax: 1, points: 10 }, { signal: ctl.signal })).toThrow(WorkCancelled);
    expect(() => transmissionSweep(op, { emin: 1, emax: 0, points: 10 })).toThrow(/emin < emax/);
    expect(() => transmissionSweep(op, { emin: 0, emax: 1, points: 1 })).toThrow(/points/);
  });
});
