import { describe, expect, it } from 'vitest';
import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian';
import { closedCavityEigenvalues } from '../../shared/engine/closed-cavity';
import { currentMap, leadCouplings } from '../../shared/engine/current-map';
import { husimiMap, distributionPeaks, latticeWavenumber } from '../../shared/engine/husimi-map';
import { latticeInGauge, symmetricGauge } from '../../shared/engine/gauge';
import { scatteringStates } from '../../shared/engine/scattering-state';

const material = { effectiveMass: 0.067 };
const angleGap = (a: number, b: number) => Math.abs(Math.atan2(Math.sin(a - b), Math.cos(a - b)));

function box(nx: number, ny: number, spacing = 1, field = 0) {
  return buildCavitySystem({
    name: 'box',
    spacing,
    material,
    grid: { nx, ny },
    shape: { kind: 'rectangle', x0: 0, y0: 0, width: nx * spacing, height: ny * spacing },
    field,
  });
}

/** Sample points at least `margin` (nm) inside the rectangle [0, (nx−1)a] × [0, (ny−1)a]. */
function interior(points: Float64Array, nx: number, ny: number, margin: number): number[] {
  const out: number[] = [];
  for (let p = 0; p < points.length / 2; p++) {
    const x = points[2 * p];
    const y = points[2 * p + 1];
    if (x >= margin && y >= margin && x <= nx - 1 - margin && y <= ny - 1 - margin) out.push(p);
  }
  return out;
}

describe('Husimi direction maps', () => {
  it("peaks at a plane wave's direction within the stated angular resolution", () => {
    const sys = box(90, 80);
    const t = sys.hopping;
    const theta = 0.5;
    const k = 0.4; // 1/nm with a = 1 nm
    const kx = k * Math.cos(theta);
    const ky = k * Math.sin(theta);
    // Lattice dispersion of the contract's H: E = 2t(2 − cos kx a − cos ky a).
    const energy = 2 * t * (2 - Math.cos(kx) - Math.cos(ky));
    expect(latticeWavenumber(energy, t, Math.cos(theta), Math.sin(theta))).toBeCloseTo(k, 10);
    const psi = new Float64Array(2 * sys.sites.i.length);
    sys.sites.i.forEach((i, s) => {
      const ph = kx * i + ky * sys.sites.j[s];
      psi[2 * s] = Math.cos(ph);
      psi[2 * s + 1] = Math.sin(ph);
    });
    const map = husimiMap(sys.lattice, 1, psi, { energy, sigmaNm: 8, directions: 72, gridNm: 10 });
    expect(map.angularResolution).toBeCloseTo(1 / (2 * 8 * map.meanWavenumber), 12);
    const inside = interior(map.points, 90, 80, 4 * 8);
    expect(inside.length).toBeGreaterThan(0);
    for (const p of inside) {
      const peaks = map.peaks.filter((q) => q.point === p);
      expect(peaks).toHaveLength(1);
      // Gaussian in angle of standard deviation 1/(2σk): the peak sits at θ to well within it.
      expect(angleGap(peaks[0].angle, theta)).toBeLessThan(map.angularResolution);
      expect(peaks[0].share).toBeGreaterThan(0.9);
    }
  });

  it('shows the four directions (±kx, ±ky) of a closed-rectangle eigenstate, whose current is zero', () => {
    const nx = 90;
    const ny = 70;
    const m = 12;
    const n = 9;
    const sys = box(nx, ny);
    const t = sys.hopping;
    // Contract, "Closed-cavity limits": E_mn = 2t(2 − cos(mπ/(Nx+1)) − cos(nπ/(Ny+1))), exact on the lattice.
    const kx = (m * Math.PI) / (nx + 1);
    const ky = (n * Math.PI) / (ny + 1);
    const exact = 2 * t * (2 - Math.cos(kx) - Math.cos(ky));
    const res = closedCavityEigenvalues(sys.lattice, { target: exact + 1e-7 * t, count: 1, vectors: true });
    expect(Math.abs(res.energies[0] - exact)).toBeLessThan(1e-9 * t);
    const psi = res.vectors![0];
    const current = currentMap(sys.lattice, psi);
    expect(Math.max(...current.bonds.map(Math.abs))).toBeLessThan(1e-10 * t);
    const sigma = 9;
    const map = husimiMap(sys.lattice, 1, psi, { energy: res.energies[0], sigmaNm: sigma, directions: 96, gridNm: 8, peakThreshold: 0.3 });
    const expected = Math.atan2(ky, kx);
    const four = [expected, Math.PI - expected, -expected, expected - Math.PI];
    const inside = interior(map.points, nx, ny, 3 * sigma);
    expect(inside.length).toBeGreaterThanOrEqual(4);
    for (const p of inside) {
      const peaks = map.peaks.filter((q) => q.point === p);
      expect(peaks.map((q) => q.angle).sort()).toHaveLength(4);
      for (const target of four) {
        const hit = peaks.filter((q) => angleGap(q.angle, target) < map.angularResolution);
        expect(hit, `point ${p}, direction ${target}`).toHaveLength(1);
        expect(Math.abs(hit[0].share - 0.25)).toBeLessThan(0.05);
      }
    }
  });

  it('has a vector sum parallel and proportional to the current for small σ (open cavity)', () => {
    const nx = 121;
    const ny = 101;
    const sys = buildCavitySystem({
      name: 'open box',
      spacing: 1,
      material,
      grid: { nx, ny },
      shape: { kind: 'rectangle', x0: 0, y0: 0, width: nx, height: ny },
      leads: [
        { side: 'left', start: 10, width: 41 },
        { side: 'right', start: 50, width: 41 },
      ],
    });
    const op = new EffectiveHamiltonian(sys);
    const t = op.hopping;
    const k = (2 * Math.PI) / 60; // λ = 60 a
    const energy = 2 * t * (1 - Math.cos(k));
    const [state] = scatteringStates(op, energy, { lead: 0, channel: 1 }).states;
    const current = currentMap(sys.lattice, state.psi, leadCouplings(op, { re: energy, im: 0 }), { source: state.source });
    const sigma = 0.25 / k;
    const map = husimiMap(sys.lattice, 1, state.psi, { energy, sigmaNm: sigma, directions: 48, gridNm: 10 });
    const inside = interior(map.points, nx, ny, 4 * sigma);
    const jAt = (p: number) => {
      const s = sys.lattice.siteIndex[Math.round(map.points[2 * p]) * ny + Math.round(map.points[2 * p + 1])];
      return [current.siteVectors[2 * s], current.siteVectors[2 * s + 1]];
    };
    const jmax = Math.max(...inside.map((p) => Math.hypot(...jAt(p))));
    const ratios: number[] = [];
    for (const p of inside) {
      const [jx, jy] = jAt(p);
      const j = Math.hypot(jx, jy);
      if (j < 0.3 * jmax) continue;
      const hx = map.vectorSum[2 * p];
      const hy = map.vectorSum[2 * p + 1];
      const h = Math.hypot(hx, hy);
      // Parallel: the angle between them is small (first-order expansion of ψ about r0, common practice, no source).
      expect((hx * jx + hy * jy) / (h * j)).toBeGreaterThan(0.995);
      ratios.push(h / j);
    }
    expect(ratios.length).toBeGreaterThan(20);
    const mean = ratios.reduce((a, b) => a + b, 0) / ratios.length;
    for (const r of ratios) expect(Math.abs(r / mean - 1)).toBeLessThan(0.04);
  });

  it('does not change under a change of gauge (B ≠ 0, Landau → symmetric)', () => {
    const nx = 60;
    const ny = 50;
    const sys = box(nx, ny, 2, 3);
    const sym = latticeInGauge(sys.lattice, symmetricGauge(sys.flux));
    const a = closedCavityEigenvalues(sys.lattice, { target: 0.05 * sys.hopping, count: 1, vectors: true });
    const b = closedCavityEigenvalues(sym, { target: 0.05 * sys.hopping, count: 1, vectors: true });
    const opts = { energy: a.energies[0], sigmaNm: 10, directions: 36, gridNm: 12 };
    const ha = husimiMap(sys.lattice, 2, a.vectors![0], opts);
    const hb = husimiMap(sym, 2, b.vectors![0], { ...opts, gauge: symmetricGauge(sys.flux) });
    const max = Math.max(...ha.distribution);
    expect(max).toBeGreaterThan(0);
    for (let k = 0; k < ha.distribution.length; k++) expect(Math.abs(ha.distribution[k] - hb.distribution[k])).toBeLessThan(1e-8 * max);
    // Without the coherent states' gauge phase the two gauges disagree: the phase is needed.
    const wrong = husimiMap(sym, 2, b.vectors![0], opts);
    let worst = 0;
    for (let k = 0; k < ha.distribution.length; k++) worst = Math.max(worst, Math.abs(ha.distribution[k] - wrong.distribution[k]));
    expect(worst).toBeGreaterThan(1e-2 * max);
  });

  it('finds the peaks of a periodic distribution with their shares', () => {
    const values = Float64Array.from({ length: 36 }, (_, d) => Math.exp(-(((d - 9) / 2) ** 2)) + 0.5 * Math.exp(-(((d - 27) / 2) ** 2)));
    const peaks = distributionPeaks(values, 0.3);
    expect(peaks).toHaveLength(2);
    expect(angleGap(peaks[0].angle, Math.PI / 2)).toBeLessThan(1e-9);
    expect(peaks[0].share / peaks[1].share).toBeCloseTo(2, 2);
    expect(distributionPeaks(values, 0.6)).toHaveLength(1);
  });
});
