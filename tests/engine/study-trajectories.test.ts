import { describe, expect, it } from 'vitest';
import { runStudy, type StudyOutcome } from '../../shared/engine/study/study-run';
import { studyReport } from '../../shared/engine/study/study-report';
import { inSymmetricGauge, modeOverlap, type SiteList } from '../../shared/engine/study/mode-overlap';
import { stepSites } from '../../shared/engine/study/study-step';
import { buildCavitySystem } from '../../shared/engine/effective-hamiltonian';
import { cyclotronEnergy, hoppingEnergy } from '../../shared/units/constants';

// A closed lattice disk of radius 10 sites (317 sites), GaAs, a = 5 nm.
const R = 10;
function disk(potential: unknown[] = []): Record<string, unknown> {
  return {
    name: 'disk',
    spacing: 5,
    material: 'gaas',
    grid: { nx: 2 * R + 1, ny: 2 * R + 1 },
    shape: { kind: 'disk', cx: R * 5, cy: R * 5, radius: R * 5 },
    field: 0,
    potential,
  };
}

/**
 * Rotation class of a mode of the C4-symmetric disk: the eigenvalue i^m of a 90° rotation about
 * the centre, read in the symmetric gauge (where a rotation is a plain permutation of the sites).
 * Returns m mod 4, or null when the mode is not a rotation eigenvector.
 */
function rotationClass(mode: Float64Array, sites: SiteList): number | null {
  const sym = inSymmetricGauge(mode, sites);
  const index = new Map<number, number>();
  for (let s = 0; s < sites.i.length; s++) index.set(sites.i[s] * 1000 + sites.j[s], s);
  let re = 0;
  let im = 0;
  for (let s = 0; s < sites.i.length; s++) {
    const t = index.get((2 * R - sites.j[s]) * 1000 + sites.i[s])!;
    re += sym[2 * s] * sym[2 * t] + sym[2 * s + 1] * sym[2 * t + 1];
    im += sym[2 * s] * sym[2 * t + 1] - sym[2 * s + 1] * sym[2 * t];
  }
  if (Math.abs(Math.hypot(re, im) - 1) > 1e-6) return null;
  return (Math.round(Math.atan2(im, re) / (Math.PI / 2)) + 4) % 4;
}

function pole(out: StudyOutcome, p: { step: number; pole: number }) {
  return out.steps[p.step].poles[p.pole];
}

/** The two trajectories that run through every step. */
function fullTrajectories(out: StudyOutcome) {
  return out.lines[0].trajectories.filter((t) => t.points.length === out.steps.length);
}

describe('parameter study trajectories', () => {
  // Field sweep through the place where an m ≡ 0 and an m ≡ 1 (mod 4) level of the disk meet.
  const fields = Array.from({ length: 9 }, (_, k) => 0.8 + k * 0.0375);
  const window = { emin: 6.2, emax: 6.9, gammaMax: 0.2 };

  it('follows two modes of different angular momentum through their exact crossing without swapping labels', () => {
    const out = runStudy({ model: disk(), parameters: [{ path: 'field', values: fields }], window });
    out.steps.forEach((s) => expect(s.certified).toBe(true));
    const both = out.lines[0].trajectories.filter((tr) => tr.points[0].step === 0);
    expect(both.length).toBe(2);
    expect(Math.min(...both.map((tr) => tr.points.length))).toBeGreaterThanOrEqual(7);
    // Each trajectory keeps one rotation class at every step (states of different C4 classes are not
    // coupled by the Hamiltonian, so their levels cross exactly on the closed disk: common practice, no source).
    const classes = both.map((t) => t.points.map((p) => rotationClass(pole(out, p).mode, out.steps[p.step].sites)));
    classes.forEach((c) => {
      expect(c[0]).not.toBeNull();
      c.forEach((m) => expect(m).toBe(c[0]));
    });
    expect(classes[0][0]).not.toBe(classes[1][0]);
    // The two levels do pass each other: their order in E flips between the ends.
    const [a, b] = both;
    const first = pole(out, a.points[0]).energy - pole(out, b.points[0]).energy;
    const end = Math.min(a.points.length, b.points.length) - 1;
    const last = pole(out, a.points[end]).energy - pole(out, b.points[end]).energy;
    expect(Math.sign(first)).toBe(-Math.sign(last));
    const mark = out.lines[0].marks.find((m) => m.trajectories.includes(a.id) && m.trajectories.includes(b.id));
    expect(mark?.kind).toBe('crossing');
    // Every step after the first was linked by Newton continuation alone.
    expect(out.fullSearchFraction).toBeLessThan(0.5);
  });

  it('says whether the steps are fine enough against the level spacing', () => {
    // Fine steps (0.0375 T): every link moves its pole by well under half the mean level spacing.
    const fine = { model: disk(), parameters: [{ path: 'field', values: fields }], window };
    const fineMoves = studyReport(fine, runStudy(fine)).moves;
    expect(fineMoves.links).toBeGreaterThan(8);
    expect(fineMoves.large).toBe(0);
    expect(fineMoves.spacing).toBeGreaterThan(0);
    // The same window over 0–3 T in four steps: levels of the disk's fan move by several
    // spacings between steps, and the report says so.
    const coarse = { model: disk(), parameters: [{ path: 'field', values: [0, 1, 2, 3] }], window };
    const coarseMoves = studyReport(coarse, runStudy(coarse)).moves;
    expect(coarseMoves.links).toBeGreaterThan(0);
    expect(coarseMoves.large).toBeGreaterThan(0);
  });

  it('follows the same pair through an avoided crossing when a bump breaks the symmetry', () => {
    // An off-centre Gaussian bump (1.5 meV, σ = 8 nm) mixes the two classes: the levels repel.
    const out = runStudy({
      model: disk([{ kind: 'gaussian', cx: 68, cy: 57, sigma: 8, amplitude: 1.5 }]),
      parameters: [{ path: 'field', values: fields }],
      window,
    });
    const both = out.lines[0].trajectories.filter((tr) => tr.points[0].step === 0);
    expect(both.length).toBe(2);
    const [a, b] = both;
    // Common steps keep their E order: the lower level stays lower (adiabatic following).
    const common = a.points.filter((p) => b.points.some((q) => q.step === p.step)).map((p) => p.step);
    expect(common.length).toBeGreaterThanOrEqual(7);
    const sign = (s: number) =>
      Math.sign(
        pole(
          out,
          a.points.find((p) => p.step === s)!,
        ).energy -
          pole(
            out,
            b.points.find((p) => p.step === s)!,
          ).energy,
      );
    common.forEach((s) => expect(sign(s)).toBe(sign(common[0])));
    const mark = out.lines[0].marks.find((m) => m.trajectories.includes(a.id) && m.trajectories.includes(b.id));
    expect(mark?.kind).toBe('avoided-crossing');
    expect(mark!.distance).toBeGreaterThan(0.01);
    // Through the avoided crossing the two modes trade character: a's first mode is b's last.
    const aFirst = a.points[0];
    const bLast = b.points.find((p) => p.step === common.at(-1))!;
    expect(modeOverlap(pole(out, aFirst).mode, out.steps[aFirst.step].sites, pole(out, bLast).mode, out.steps[bLast.step].sites)).toBeGreaterThan(0.5);
  });

  it('finds and marks the width exchange of two resonances coupled to one lead, with the sum of widths kept', () => {
    // A one-site-wide T: a junction site (raised by 15t, so the coupling through it is mostly
    // real) joined to a one-channel lead, an 11-site arm A above and a 3-site arm B below. Both
    // arms have a level at 4t and couple to the lead only through the junction: a two-level
    // effective Hamiltonian with a rank-one coupling. Sweeping a gate on arm A through B's level
    // makes the real parts repel and the widths trade (γ_A ≈ γ_B/3 from the mode amplitudes).
    const a = 10;
    const t = hoppingEnergy(a, 1);
    const model = {
      name: 'two arms',
      spacing: a,
      material: { effectiveMass: 1 },
      grid: { nx: 1, ny: 15 },
      shape: { kind: 'rectangle', x0: 0, y0: 0, width: a, height: 15 * a },
      potential: [
        { kind: 'block', x0: 0, y0: 3 * a, width: a, height: a, value: 15 * t },
        { kind: 'block', x0: 0, y0: 4 * a, width: a, height: 11 * a, value: 0 },
      ],
      leads: [{ side: 'left', start: 3, width: 1 }],
    };
    const values = Array.from({ length: 25 }, (_, k) => (-0.15 + (0.3 * k) / 24) * t);
    const out = runStudy({ model, parameters: [{ path: 'potential.1.value', values }], window: { emin: 3.75 * t, emax: 4.25 * t, gammaMax: 0.05 * t } });
    out.steps.forEach((s) => expect(s.certified).toBe(true));
    const both = fullTrajectories(out);
    expect(both.length).toBe(2);
    const mark = out.lines[0].marks.find((m) => m.kind === 'width-exchange');
    expect(mark).toBeDefined();
    expect(new Set(mark!.trajectories)).toEqual(new Set(both.map((x) => x.id)));
    // Γ order flips and E order does not, from the first step to the last.
    const [p, q] = both;
    const g = (k: number) => pole(out, p.points[k]).width - pole(out, q.points[k]).width;
    const e = (k: number) => pole(out, p.points[k]).energy - pole(out, q.points[k]).energy;
    expect(Math.sign(g(0))).toBe(-Math.sign(g(24)));
    expect(Math.sign(e(0))).toBe(Math.sign(e(24)));
    // Trace of the two-level effective Hamiltonian: Γ_p + Γ_q stays nearly constant (common
    // practice, no source); Σ(E) varies a little over the sweep, so 5 % is allowed.
    const sums = p.points.map((_, k) => pole(out, p.points[k]).width + pole(out, q.points[k]).width);
    const mean = sums.reduce((x, y) => x + y, 0) / sums.length;
    sums.forEach((s) => expect(Math.abs(s / mean - 1)).toBeLessThan(0.05));
    // while each width alone changes by a factor above 2
    const gp = p.points.map((x) => pole(out, x).width);
    expect(Math.max(...gp) / Math.min(...gp)).toBeGreaterThan(2);
  });

  it('gives Landau levels of a closed disk approaching ħω_c(n + ½) with the lattice correction', () => {
    // Landau levels E_n = ħω_c(n + ½), ω_c = eB/m* (Landau & Lifshitz, Quantum Mechanics, §112
    // "motion in a uniform magnetic field"; Ashcroft & Mermin, Solid State Physics, ch. 14; section
    // numbers from memory), constants CODATA 2018 (shared/units). Lattice correction
    // (docs/physics-model.md, "Landau levels on the lattice", derived there by first-order perturbation
    // in the quartic term of the band): E_n ≈ ħω_c(n + ½) − (ħω_c)²(2n² + 2n + 1)/(32t).
    // Closed disk of 12 sites radius, a = 5 nm.
    const r = 12;
    const model = {
      name: 'disk',
      spacing: 5,
      material: 'gaas',
      grid: { nx: 2 * r + 1, ny: 2 * r + 1 },
      shape: { kind: 'disk', cx: r * 5, cy: r * 5, radius: r * 5 },
      field: 0,
    };
    const t = hoppingEnergy(5, 0.067);
    const level = (b: number, n: number) => {
      const hw = cyclotronEnergy(b, 0.067);
      return { plain: hw * (n + 0.5), corrected: hw * (n + 0.5) - (hw * hw * (2 * n * n + 2 * n + 1)) / (32 * t) };
    };
    const fields = [2, 3, 4, 5, 6];
    const out = runStudy({ model, parameters: [{ path: 'field', values: fields }], window: { emin: 0.5, emax: 5.5, gammaMax: 0.1 } });
    // The lowest trajectory (the centre state of the lowest level) runs through every step.
    const lowest = out.lines[0].trajectories.find(
      (tr) => tr.points.length === fields.length && tr.points.every((p) => pole(out, p).energy === Math.min(...out.steps[p.step].poles.map((x) => x.energy))),
    );
    expect(lowest).toBeDefined();
    const dev = lowest!.points.map((p, k) => {
      const e = pole(out, p).energy;
      const l = level(fields[k], 0);
      return { corrected: Math.abs(e / l.corrected - 1), plain: Math.abs(e / l.plain - 1) };
    });
    // Approach: the edge pushes the level up at 2 T (magnetic length 18 nm vs radius 62 nm); by 4 T
    // the corrected formula holds to 1e-3 while the plain one is off by more than 1.5 %.
    expect(dev[0].corrected).toBeGreaterThan(10 * dev[4].corrected);
    for (const d of dev.slice(2)) {
      expect(d.corrected).toBeLessThan(1e-3);
      expect(d.plain).toBeGreaterThan(0.015);
    }
  });

  it('finds the second Landau level at 6 T where the corrected formula puts it', () => {
    // Same formula and sources as above, n = 1.
    const r = 12;
    const model = {
      name: 'disk',
      spacing: 5,
      material: 'gaas',
      grid: { nx: 2 * r + 1, ny: 2 * r + 1 },
      shape: { kind: 'disk', cx: r * 5, cy: r * 5, radius: r * 5 },
      field: 0,
    };
    const t = hoppingEnergy(5, 0.067);
    const hw = cyclotronEnergy(6, 0.067);
    const plain = 1.5 * hw;
    const corrected = plain - (5 * hw * hw) / (32 * t);
    const out = runStudy({
      model,
      parameters: [{ path: 'field', values: [6] }],
      window: { emin: corrected - 0.1 * hw, emax: corrected + 0.1 * hw, gammaMax: 0.1 },
    });
    const nearest = out.steps[0].poles.map((p) => p.energy).sort((x, y) => Math.abs(x - corrected) - Math.abs(y - corrected))[0];
    expect(Math.abs(nearest / corrected - 1)).toBeLessThan(2e-3);
    expect(Math.abs(nearest / plain - 1)).toBeGreaterThan(0.03);
  });
});

describe('parameter study on the honeycomb', () => {
  // A closed graphene disk of radius 2.2 nm (about 500 atoms; a_CC = 0.142 nm, t = 2.7 eV) in a
  // strong field, so that one field step turns the gauge phase across the disk by a sizeable angle:
  // π·ΔB·(2R)·R/Φ0 ≈ 0.15 rad for ΔB = 20 T.
  const flake = (field: number) => ({
    name: 'graphene disk',
    spacing: 0.142,
    lattice: { kind: 'honeycomb', hopping: 2.7, removeDangling: true },
    grid: { nx: 36, ny: 22 },
    shape: { kind: 'disk', cx: 2.5, cy: 2.4, radius: 2.2 },
    field,
  });

  it('follows graphene levels through a field sweep by continuation, in the symmetric gauge of the atoms positions', () => {
    const fields = [0, 20, 40, 60, 80];
    const out = runStudy({ model: flake(0), parameters: [{ path: 'field', values: fields }], window: { emin: 350, emax: 700, gammaMax: 1 } });
    out.steps.forEach((s) => expect(s.certified).toBe(true));
    const links = out.lines[0].trajectories.flatMap((t) => t.points.slice(1));
    expect(links.length).toBeGreaterThan(3);
    // The same state one step on: the moved mode (in the symmetric gauge) overlaps the new one almost fully.
    for (const p of links) {
      expect(p.link).toBe('continuation');
      expect(p.overlap!).toBeGreaterThan(0.95);
    }
  });

  it('writes the symmetric gauge with the atoms positions: every bond then carries the symmetric-gauge phase', () => {
    // A gauge change ψ → e^{ig}ψ turns a bond's Peierls phase Λ(s→r) into Λ + g(r) − g(s). Into the
    // symmetric gauge A = (B/2)(−(y − y_c), x − x_c) about the centre c, the straight-line integral on a
    // bond is κ·((x_s − x_c)(y_r − y_c) − (x_r − x_c)(y_s − y_c)) with one constant κ = ±πB/Φ0 for every
    // bond (the sign is the charge convention; common practice, no source). Grid labels instead of
    // positions break this on the honeycomb, where (i, j) are not positions.
    const system = buildCavitySystem(flake(60));
    const bonds = (system.lattice as unknown as { bonds: { from: Int32Array; to: Int32Array; phase: Float64Array } }).bonds;
    const check = (sites: SiteList) => {
      const p = sites.positions!;
      const ones = new Float64Array(2 * sites.i.length).map((_, k) => (k % 2 === 0 ? 1 : 0));
      const sym = inSymmetricGauge(ones, sites);
      const g = (s: number) => Math.atan2(sym[2 * s + 1], sym[2 * s]);
      const wrap = (a: number) => Math.atan2(Math.sin(a), Math.cos(a));
      const area = (s: number, r: number) => (p.x[s] - p.xc) * (p.y[r] - p.yc) - (p.x[r] - p.xc) * (p.y[s] - p.yc);
      const kappa = Math.PI * p.perNm2;
      let worst = Infinity;
      for (const sign of [1, -1]) {
        let w = 0;
        for (let b = 0; b < bonds.from.length; b++) {
          const s = bonds.from[b];
          const r = bonds.to[b];
          w = Math.max(w, Math.abs(wrap(bonds.phase[b] + g(r) - g(s) - sign * kappa * area(s, r))));
        }
        worst = Math.min(worst, w);
      }
      return worst;
    };
    const sites = stepSites(system);
    expect(check(sites)).toBeLessThan(1e-9);
    // The same with the atoms placed at their grid labels times a_CC (the square lattice's rule): far off.
    const labels = {
      ...sites,
      positions: { ...sites.positions!, x: Float64Array.from(sites.i, (i) => i * 0.142), y: Float64Array.from(sites.j, (j) => j * 0.142) },
    };
    expect(check(labels)).toBeGreaterThan(1e-3);
  });
});
