import { describe, expect, it } from 'vitest';
import { runEnsemble } from '../../shared/engine/study/ensemble-run';
import { realisationModel, type EnsembleDefinition } from '../../shared/engine/study/ensemble-definition';
import { roughenMask } from '../../shared/engine/study/edge-roughness';
import { distribution } from '../../shared/engine/study/ensemble-statistics';
import { numberAtPath, withNumberAtPath } from '../../shared/engine/study/model-path';
import { parseParameterValues } from '../../shared/engine/study/parameter-values';
import { validateCavityModel } from '../../shared/model/model-validation';
import { rasteriseShape } from '../../shared/model/geometry';

// A small dot (139 sites): a disk of 30 nm between two 4-site leads, GaAs, a = 5 nm.
const dot = {
  name: 'dot',
  spacing: 5,
  material: 'gaas',
  grid: { nx: 18, ny: 14 },
  shape: {
    kind: 'union',
    of: [
      { kind: 'disk', cx: 45, cy: 35, radius: 30 },
      { kind: 'rectangle', x0: 0, y0: 25, width: 20, height: 20 },
      { kind: 'rectangle', x0: 70, y0: 25, width: 20, height: 20 },
    ],
  },
  potential: [{ kind: 'gaussian', cx: 45, cy: 35, sigma: 10, amplitude: 0 }],
  leads: [
    { side: 'left', start: 5, width: 4 },
    { side: 'right', start: 5, width: 4 },
  ],
};
// The narrow resonance near 25.56 meV (Q ≈ 2200) of this dot.
const base: EnsembleDefinition = { model: dot, window: { emin: 20, emax: 30, gammaMax: 4 }, realisations: 4, seed: 7, follow: { energy: 25.56 } };

describe('tolerance ensembles', () => {
  it('has zero spread with zero roughness and no jitter', () => {
    const out = runEnsemble({
      ...base,
      roughness: { rmsNm: 0, correlationNm: 10 },
      jitter: [{ kind: 'gate-offset', path: 'potential.0.amplitude', sigma: 0 }],
    });
    expect(out.statistics.followed).toBe(4);
    const e = out.statistics.energy;
    expect(e.std!).toBeLessThanOrEqual(1e-12 * e.mean!);
    expect(Math.abs(e.mean! - out.statistics.nominal!.energy)).toBeLessThanOrEqual(1e-12 * e.mean!);
    expect(out.statistics.width.std!).toBeLessThanOrEqual(1e-12 * out.statistics.width.mean!);
  });

  it('reproduces the same samples from the same seeds, and other samples from another seed', () => {
    const def: EnsembleDefinition = {
      ...base,
      roughness: { rmsNm: 2, correlationNm: 10 },
      jitter: [{ kind: 'gate-offset', path: 'potential.0.amplitude', sigma: 0.5 }],
      bins: 4,
    };
    const a = runEnsemble(def).statistics;
    const b = runEnsemble(def).statistics;
    expect(a.samples.map((s) => s.seed)).toEqual(b.samples.map((s) => s.seed));
    a.samples.forEach((s, k) => {
      expect(s.followed).toBe(b.samples[k].followed);
      if (s.energy !== null) expect(Math.abs(s.energy - b.samples[k].energy!)).toBeLessThanOrEqual(1e-12 * Math.abs(s.energy));
    });
    expect(a.energy.histogram.counts).toEqual(b.energy.histogram.counts);
    // The spread is real: roughness of 2 nm moves sites of a 5 nm lattice.
    expect(a.energy.std!).toBeGreaterThan(1e-3);
    const c = runEnsemble({ ...def, seed: 8 }).statistics;
    expect(c.samples.map((s) => s.seed)).not.toEqual(a.samples.map((s) => s.seed));
    expect(Math.abs(c.energy.mean! - a.energy.mean!)).toBeGreaterThan(1e-9);
  });

  it('gives a yield of 100 % for tolerances wider than every sample, and less for a tight one', () => {
    const def: EnsembleDefinition = { ...base, jitter: [{ kind: 'gate-offset', path: 'potential.0.amplitude', sigma: 0.5 }] };
    const first = runEnsemble(def).statistics;
    expect(first.followed).toBe(4);
    const e = first.energy;
    const wide = runEnsemble({ ...def, tolerances: { energy: { min: e.min! - 1, max: e.max! + 1 }, width: { min: 0 } } }).statistics;
    expect(wide.yield!.fraction).toBe(1);
    expect(wide.yield!.within).toBe(4);
    const tight = runEnsemble({ ...def, tolerances: { energy: { min: e.mean!, max: e.max! + 1 } } }).statistics;
    expect(tight.yield!.fraction).toBeLessThan(1);
    expect(tight.yield!.fraction).toBeGreaterThan(0);
  });

  it('sees the 1/R² scaling of a disk level in its sensitivity to the radius', () => {
    // Closed disk: E ∝ R⁻² (continuum, A&S Table 9.5 zeros), so dE/dR ≈ −2E/R. Lattice disk
    // of radius 40 nm (a = 5 nm, 197 sites), lowest level; jitter of 1 nm in the radius.
    const disk = { name: 'disk', spacing: 5, material: 'gaas', grid: { nx: 19, ny: 19 }, shape: { kind: 'disk', cx: 45, cy: 45, radius: 42.5 } };
    const out = runEnsemble({
      model: disk,
      window: { emin: 0.5, emax: 3, gammaMax: 0.1 },
      realisations: 12,
      seed: 3,
      follow: { energy: 1 },
      jitter: [{ kind: 'dimension', path: 'shape.radius', sigma: 2.5 }],
    });
    expect(out.statistics.followed).toBe(12);
    const e0 = out.statistics.nominal!.energy;
    const slope = out.statistics.sensitivities[0].energySlope!;
    // The lattice disk changes by whole sites only, so the slope is rough: within 40 %.
    expect(slope).toBeLessThan(0);
    expect(Math.abs(slope / ((-2 * e0) / 42.5) - 1)).toBeLessThan(0.4);
  });

  it('counts a resonance that cannot be followed instead of dropping it', () => {
    // A jittered lead width can run the lead past the grid edge: that realisation is invalid.
    const out = runEnsemble({ ...base, realisations: 6, jitter: [{ kind: 'lead-width', path: 'leads.0.width', sigma: 6 }] });
    expect(out.statistics.samples.length).toBe(6);
    expect(out.statistics.followed + out.statistics.notFollowed).toBe(6);
    const failed = out.statistics.samples.filter((s) => !s.followed);
    expect(failed.length).toBeGreaterThan(0);
    failed.forEach((s) => expect(s.reason).toMatch(/\S/));
  });
});

describe('edge roughness', () => {
  const nx = 40,
    ny = 40,
    a = 2;
  const mask = rasteriseShape({ kind: 'disk', cx: 40, cy: 40, radius: 30 }, nx, ny, a);
  it('leaves the cavity alone at zero amplitude and moves only edge sites otherwise', () => {
    expect(roughenMask(mask, nx, ny, a, [], { rmsNm: 0, correlationNm: 5 }, 1).mask).toEqual(mask);
    const rough = roughenMask(mask, nx, ny, a, [], { rmsNm: 1, correlationNm: 6 }, 1);
    expect(rough.added + rough.removed).toBeGreaterThan(0);
    for (let i = 0; i < nx; i++) {
      for (let j = 0; j < ny; j++) {
        if (rough.mask[i * ny + j] === mask[i * ny + j]) continue;
        // every changed site lies within 6σ + a of the nominal edge at r = 30 nm (+ a/2)
        const r = Math.hypot(i * a - 40, j * a - 40);
        expect(Math.abs(r - 31)).toBeLessThan(6 * 1 + 2 * a);
      }
    }
  });

  it('changes more sites for a larger amplitude, and the same ones for the same seed', () => {
    const count = (rms: number, seed: number) => {
      const r = roughenMask(mask, nx, ny, a, [], { rmsNm: rms, correlationNm: 6 }, seed);
      return r.added + r.removed;
    };
    const small = [1, 2, 3, 4].reduce((s, seed) => s + count(0.5, seed), 0);
    const large = [1, 2, 3, 4].reduce((s, seed) => s + count(3, seed), 0);
    expect(large).toBeGreaterThan(2 * small);
    expect(roughenMask(mask, nx, ny, a, [], { rmsNm: 2, correlationNm: 6 }, 9).mask).toEqual(
      roughenMask(mask, nx, ny, a, [], { rmsNm: 2, correlationNm: 6 }, 9).mask,
    );
  });

  it('keeps the mouth sites of the leads and one connected piece', () => {
    const { model } = realisationModel({ ...base, roughness: { rmsNm: 3, correlationNm: 5 } }, 2);
    const checked = validateCavityModel(model);
    expect(checked.ok).toBe(true);
  });
});

describe('study inputs', () => {
  it('reads and writes numbers at dotted paths with clear errors', () => {
    expect(numberAtPath(dot, 'leads.1.width')).toBe(4);
    expect(numberAtPath(dot, 'field')).toBe(0);
    const moved = withNumberAtPath(dot, 'potential.0.amplitude', 1.5) as typeof dot;
    expect(moved.potential[0].amplitude).toBe(1.5);
    expect(dot.potential[0].amplitude).toBe(0);
    expect(() => numberAtPath(dot, 'potential.3.value')).toThrow(/no 'potential.3'/);
    expect(() => numberAtPath(dot, 'shape.kind')).toThrow(/not a number/);
    expect(() => numberAtPath(dot, 'leads..width')).toThrow(/not a path/);
  });

  it('parses FROM:TO:COUNT and lists', () => {
    const v = parseParameterValues('0:2:5');
    expect(v.length).toBe(5);
    expect(v[4]).toBe(2);
    expect(Math.abs(v[1] - 0.5)).toBeLessThan(1e-15);
    // Values are the ones meant, not sums carrying rounding noise (0.2·3/20 is 0.030000000000000006 in floating point).
    expect(parseParameterValues('0:0.2:21')[3]).toBe(0.03);
    expect(parseParameterValues('1, 2.5,4').length).toBe(3);
    expect(() => parseParameterValues('0:2')).toThrow(/FROM:TO:COUNT/);
    expect(() => parseParameterValues('0:2:1')).toThrow(/COUNT/);
    expect(() => parseParameterValues('1,,2')).toThrow();
  });

  it('bins a distribution and keeps a constant one in a single bin', () => {
    const d = distribution([1, 2, 2, 3, 4], 3);
    expect(d.histogram.counts.reduce((s, c) => s + c, 0)).toBe(5);
    expect(Math.abs(d.mean! - 2.4)).toBeLessThan(1e-12);
    expect(distribution([5, 5, 5], 4).histogram.counts).toEqual([3]);
  });
});
