import { describe, expect, it } from 'vitest';
import { binMaximum, mapEnergies, stepTransmission } from '../../shared/engine/study/study-transmission';
import { runStudy } from '../../shared/engine/study/study-run';
import { studyReport } from '../../shared/engine/study/study-report';
import { searchStep } from '../../shared/engine/study/study-step';
import { transmissionAt } from '../../shared/engine/transmission';
import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian';
import { smallDot, dotWindow } from '../server/fixtures/small-dot';

describe('transmission map of a study', () => {
  it('bins samples by the largest value within half a column', () => {
    const energies = mapEnergies({ emin: 0, emax: 1 }, 3); // 0, 0.5, 1
    expect(energies).toEqual([0, 0.5, 1]);
    const samples = [
      { energy: 0, value: 0.1 },
      { energy: 0.2, value: 0.9 }, // within 0.25 of column 0
      { energy: 0.3, value: 0.4 }, // column 1
      { energy: 0.5, value: 0.2 },
      { energy: 1, value: 0.3 },
    ];
    expect(binMaximum(samples, energies)).toEqual([0.9, 0.4, 0.3]);
  });

  it('shows a resonance narrower than a column at the column of its pole, and nothing above the open channels', () => {
    // The small dot's resonance near 25.56 meV is about 0.012 meV wide, a sixth of a column
    // of a 40-column map over 24..27 meV: on the uniform grid alone it would fall between
    // columns. An isolated narrow pole gives a transmission peak at Re z (Breit–Wigner;
    // common practice, no source), here a Fano line reaching the one-channel ceiling.
    const model = smallDot();
    const row = stepTransmission(model, dotWindow, 40)!;
    expect(row.from).toBe('source');
    expect(row.into).toEqual(['drain']);
    const pole = searchStep(model, dotWindow).poles.find((p) => p.width < 0.05)!;
    expect(pole).toBeDefined();
    const energies = mapEnergies(dotWindow, 40);
    const step = energies[1] - energies[0];
    expect(pole.width).toBeLessThan(step / 4);
    // The peak (a Fano line here: its maximum sits Γ/2|q| from Re z) is in the pole's column or the next.
    const column = energies.reduce((best, e, k) => (Math.abs(e - pole.energy) < Math.abs(energies[best] - pole.energy) ? k : best), 0);
    const peak = row.values.indexOf(Math.max(...row.values));
    expect(Math.abs(peak - column)).toBeLessThanOrEqual(1);
    // The grid alone misses it: T at the column's own energy stays well below the binned value.
    const op = new EffectiveHamiltonian(buildCavitySystem(model));
    const onGrid = transmissionAt(op, energies[column]).transmission[0][1];
    expect(row.values[column]).toBeGreaterThan(onGrid + 0.02);
    // Unitarity: T(source → drain) ≤ open channels of the source (common practice, no source).
    const channels = transmissionAt(op, energies[column]).channels[0];
    row.values.forEach((v) => {
      expect(v).toBeGreaterThanOrEqual(0);
      expect(v).toBeLessThanOrEqual(channels + 1e-9);
    });
    expect(row.worstCurrentResidual).toBeLessThan(1e-8);
    expect(row.poleSamples).toBe(0);
    // Given the step's poles, the row samples each at E and E ± Γ/2: the column of the narrow
    // pole then holds at least T(Re z) (what a finer grid would have found there).
    const poles = searchStep(model, dotWindow).poles;
    const sampled = stepTransmission(model, dotWindow, 40, undefined, poles)!;
    expect(sampled.poleSamples).toBe(3 * poles.length);
    const atPole = transmissionAt(op, pole.energy).transmission[0][1];
    const poleColumn = energies.reduce((best, e, k) => (Math.abs(e - pole.energy) < Math.abs(energies[best] - pole.energy) ? k : best), 0);
    expect(sampled.values[poleColumn]).toBeGreaterThanOrEqual(atPole - 1e-12);
  });

  it('is part of a study when asked for, one row per step, and absent for a closed cavity', () => {
    const def = {
      model: smallDot(),
      parameters: [{ path: 'potential.0.amplitude', values: [0, 0.3] }],
      window: dotWindow,
      transmissionPoints: 30,
    };
    const report = studyReport(def, runStudy(def));
    expect(report.transmission!.energies.length).toBe(30);
    report.steps.forEach((s) => expect(s.transmission!.length).toBe(30));
    // The peak follows the pole: the gate moves the narrow resonance up, and the map's peak with it.
    const peakAt = (k: number) => {
      const row = report.steps[k].transmission!;
      return report.transmission!.energies[row.indexOf(Math.max(...row))];
    };
    expect(peakAt(1)).toBeGreaterThan(peakAt(0));
    const closed = { name: 'box', spacing: 5, material: 'gaas', grid: { nx: 10, ny: 10 }, shape: { kind: 'rectangle', x0: 0, y0: 0, width: 50, height: 50 } };
    expect(stepTransmission(closed, { emin: 1, emax: 5, gammaMax: 1 }, 10)).toBeNull();
    expect(() => runStudy({ ...def, transmissionPoints: 1 })).toThrow(/transmissionPoints/);
  });
});
