/**
 * Writes the demo lab's invented measured trace, catalogue/traces/hl-rect-r3-100mK.csv:
 * the computed transmission of device R3 (catalogue/hl-rect-r3.json) around its isolated
 * resonance near 3.255 meV, thermally broadened at 100 mK (averaged over −∂f/∂E), turned
 * into conductance G = 2(e²/h)·T in µS, with seeded Gaussian noise of 0.5% of the peak.
 * It stands in for a measurement in the fits' browser test and demo. Run:
 *   npx tsx scripts/demo-trace.ts
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { buildCavitySystem, EffectiveHamiltonian } from '../shared/engine/effective-hamiltonian';
import { transmissionSweep } from '../shared/engine/transmission';
import { BOLTZMANN_MEV_PER_MK, fermiDerivative } from '../shared/engine/fit-lineshapes';
import { CONDUCTANCE_QUANTUM_US } from '../shared/engine/fit-trace';

const device = JSON.parse(readFileSync(new URL('../catalogue/hl-rect-r3.json', import.meta.url), 'utf8')) as { model: unknown };
const op = new EffectiveHamiltonian(buildCavitySystem(device.model));
const temperatureMK = 100;
const kT = temperatureMK * BOLTZMANN_MEV_PER_MK;
const leverArm = 0.08; // meV per mV, invented
const [lo, hi] = [3.18, 3.33];
// Fine computed spectrum, wider than the trace by 12 kT on each side for the thermal average.
const fine = transmissionSweep(op, { emin: lo - 12 * kT, emax: hi + 12 * kT, points: 1201 });
const energies = fine.points.map((p) => p.energy);
const transmission = fine.points.map((p) => p.transmission[0][1]);

let seed = 20261202;
const uniform = () => {
  seed = (seed + 0x6d2b79f5) >>> 0;
  let t = seed;
  t = Math.imul(t ^ (t >>> 15), t | 1);
  t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
  return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
};
const normal = () => Math.sqrt(-2 * Math.log(1 - uniform())) * Math.cos(2 * Math.PI * uniform());

const rows: string[] = [];
const points = 241;
const g: number[] = [];
for (let k = 0; k < points; k++) {
  const mu = lo + ((hi - lo) * k) / (points - 1);
  // Trapezoidal average of T(E) over −∂f/∂E(E − μ) on the fine grid.
  let s = 0;
  let w = 0;
  for (let j = 1; j < energies.length; j++) {
    const de = energies[j] - energies[j - 1];
    const a = fermiDerivative(energies[j - 1] - mu, kT);
    const b = fermiDerivative(energies[j] - mu, kT);
    s += (de * (a * transmission[j - 1] + b * transmission[j])) / 2;
    w += (de * (a + b)) / 2;
  }
  g.push((2 * CONDUCTANCE_QUANTUM_US * s) / w);
}
const peak = Math.max(...g);
for (let k = 0; k < points; k++) {
  const mu = lo + ((hi - lo) * k) / (points - 1);
  const noisy = g[k] + 0.005 * peak * normal();
  rows.push(`${(mu / leverArm).toFixed(5)},${(mu * 1000).toFixed(3)},${noisy.toFixed(5)}`);
}
const header = [
  '# Harrow Lake Mesoscopics Lab (invented demo data): device R3, cooldown 7, dilution fridge',
  `# mixing-chamber temperature ${temperatureMK} mK, lever arm ${leverArm} meV/mV, lock-in 2 µV ac excitation`,
  '# made by scripts/demo-trace.ts from the computed spectrum of catalogue/hl-rect-r3.json (not a measurement)',
  'gate_mV,energy_ueV,G_uS',
];
writeFileSync(new URL('../catalogue/traces/hl-rect-r3-100mK.csv', import.meta.url), header.concat(rows).join('\n') + '\n');
console.log(`wrote ${points} points, peak ${peak.toFixed(3)} µS, kT = ${kT.toFixed(5)} meV`);
