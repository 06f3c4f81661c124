/**
 * Scattering states at a real energy E: the wave in the cavity when channel m of
 * lead ℓ sends in a wave of unit flux (docs/physics-model.md, "Current and Husimi
 * maps"). With G = (E − H − Σ(E))⁻¹ and W_b the coupling column of channel b
 * (sqrt(2t sin k_m)·e^{−iθ_p}χ_m(p) on ℓ's mouth), ψ_b = G·W_b solves
 * (E − H − Σ)ψ = W_b; the outgoing amplitudes are S_ab = −δ_ab + i·W_a†ψ_b (the
 * Fisher–Lee form the engine's transmission uses), and the incoming flux is 1/ħ, so
 * ħ times the current into lead ℓ' ≠ ℓ is T(ℓ → ℓ') of that channel.
 * The local density of states from all lead-injected states,
 *   ρ(s, E) = (1/2π)·Σ_b |ψ_b(s)|²   (1/meV per site),
 * is (1/2π)(GΓG†)_ss = −Im G_ss/π when H has no bound state at E (S. Datta,
 * "Electronic Transport in Mesoscopic Systems", CUP 1995, ch. 3).
 * Cost: one sparse LU of E − H − Σ(E), one solve per channel injected.
 */
import type { EffectiveHamiltonian } from './effective-hamiltonian';
import { SparseLuPlan } from './sparse-lu';
import type { SheetFlags } from './operator';

interface ScatteringState {
  energy: number;
  /** Injecting lead index and its 1-based channel. */
  lead: number;
  channel: number;
  /** ψ_b = G·W_b on the sites (interleaved). */
  psi: Float64Array;
  /** The source W_b (interleaved, zero off the injecting mouth). */
  source: Float64Array;
  sheet: SheetFlags;
}

interface ScatteringStates {
  energy: number;
  sheet: SheetFlags;
  states: ScatteringState[];
  /** Open channels per lead, 1-based. */
  openChannels: number[][];
}

/** Every lead-injected state at E (or only those of `only`). Throws RangeError for a closed channel. */
export function scatteringStates(op: EffectiveHamiltonian, energy: number, only?: { lead: number; channel: number }): ScatteringStates {
  if (!Number.isFinite(energy)) throw new RangeError(`scattering state: energy must be a finite number of meV, got ${energy}`);
  const openChannels = Array.from({ length: op.leadCount }, (_, l) => op.openChannels(l, energy));
  if (only) {
    if (!Number.isInteger(only.lead) || only.lead < 0 || only.lead >= op.leadCount) {
      throw new RangeError(`scattering state: lead ${only.lead} does not exist (the cavity has ${op.leadCount} lead(s), numbered from 0)`);
    }
    if (!openChannels[only.lead].includes(only.channel)) {
      const open = openChannels[only.lead];
      throw new RangeError(
        `scattering state: channel ${only.channel} of lead ${only.lead} (${op.system.leads[only.lead].name}) is not open at ${energy} meV` +
          (open.length ? ` (open: ${open.join(', ')})` : ' (no channel of this lead is open there)'),
      );
    }
  }
  const n = op.n;
  const sheet = op.sheetAt(energy);
  const values = new Float64Array(2 * op.rowIdx.length);
  op.assemble({ re: energy, im: 0 }, sheet, values);
  const lu = SparseLuPlan.analyse(n, op.colPtr, op.rowIdx, { sites: op.sites }).factor(values);
  const w = op.couplingColumns(energy);
  const picked: number[] = [];
  for (let c = 0; c < w.count; c++) if (!only || (w.lead[c] === only.lead && w.channel[c] === only.channel)) picked.push(c);
  const rhs = new Float64Array(2 * n * picked.length);
  picked.forEach((c, k) => rhs.set(w.values.subarray(2 * n * c, 2 * n * (c + 1)), 2 * n * k));
  const x = lu.solve(rhs.slice(), picked.length);
  const states = picked.map((c, k) => ({
    energy,
    lead: w.lead[c],
    channel: w.channel[c],
    psi: x.slice(2 * n * k, 2 * n * (k + 1)),
    source: rhs.slice(2 * n * k, 2 * n * (k + 1)),
    sheet,
  }));
  return { energy, sheet, states, openChannels };
}

/** ρ(s, E) = (1/2π)Σ_b|ψ_b(s)|² over every open channel of every lead (1/meV per site). */
export function localDensityOfStates(op: EffectiveHamiltonian, energy: number): Float64Array {
  const all = scatteringStates(op, energy);
  const rho = new Float64Array(op.n);
  for (const st of all.states) for (let s = 0; s < op.n; s++) rho[s] += (st.psi[2 * s] ** 2 + st.psi[2 * s + 1] ** 2) / (2 * Math.PI);
  return rho;
}
