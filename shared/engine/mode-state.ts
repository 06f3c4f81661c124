/**
 * The state a current or Husimi map is drawn for: a resonance's mode ψ_R at its pole
 * z = E − iΓ/2 (on the sheet it was found on), or a scattering state at a real energy
 * injected from one lead channel with unit incoming flux (scattering-state.ts). Closed
 * cavities (no leads) use the eigenstate nearest the energy asked for.
 * Currents of a mode are in 1/ps for Σ|ψ|² = 1; those of a scattering state are ħ times
 * that, i.e. in units of the incoming flux, so the current into a lead is a transmission.
 */
import { closedCavityEigenvalues } from './closed-cavity';
import { leadCouplings, type LeadCoupling } from './current-map';
import type { CavitySystem, EffectiveHamiltonian } from './effective-hamiltonian';
import type { SheetFlags } from './operator';
import { findPoles } from './poles';
import { scatteringStates } from './scattering-state';
import { HBAR_MEV_PS } from '../units/constants';

export type StateRequest =
  /** The pole nearest `near` (meV), searched in [near − window, near + window] × [−gammaMax/2, 0]. */
  | { kind: 'pole-near'; near: number; window?: number; gammaMax?: number }
  /** A stored mode: its pole and the sheet it was found on. */
  | { kind: 'mode'; energy: number; width: number; mode: Float64Array; sheet: SheetFlags }
  /** The scattering state of lead `lead` (0-based), channel `channel` (1-based), at a real energy. */
  | { kind: 'scattering'; energy: number; lead: number; channel: number };

export interface ModeState {
  kind: 'pole' | 'bound' | 'scattering';
  energy: number;
  /** Γ (meV); 0 for scattering and bound states. */
  width: number;
  psi: Float64Array;
  leads: LeadCoupling[];
  source?: Float64Array;
  /** Factor on (2/ħ)Im(…): 1 for a mode (1/ps), ħ for a scattering state (units of the incoming flux). */
  scale: number;
  unit: '1/ps' | 'incoming flux';
  lead?: number;
  channel?: number;
  /** What the state is, in words, for the maps' captions. */
  label: string;
}

/** Resolves a request to a state vector. Throws RangeError with a readable message when there is none. */
export function resolveState(system: CavitySystem, op: EffectiveHamiltonian, req: StateRequest): ModeState {
  const t = system.hopping;
  if (req.kind === 'scattering') {
    const [st] = scatteringStates(op, req.energy, { lead: req.lead, channel: req.channel }).states;
    return {
      kind: 'scattering',
      energy: req.energy,
      width: 0,
      psi: st.psi,
      leads: leadCouplings(op, { re: req.energy, im: 0 }, st.sheet),
      source: st.source,
      scale: HBAR_MEV_PS,
      unit: 'incoming flux',
      lead: req.lead,
      channel: req.channel,
      label: `scattering state at E = ${req.energy} meV from lead ${system.leads[req.lead].name}, channel ${req.channel}`,
    };
  }
  if (req.kind === 'mode') {
    if (req.mode.length !== 2 * op.n) throw new RangeError(`the stored mode has ${req.mode.length / 2} sites, the model has ${op.n}`);
    const z = { re: req.energy, im: -req.width / 2 };
    return {
      kind: req.width > 0 ? 'pole' : 'bound',
      energy: req.energy,
      width: req.width,
      psi: req.mode,
      leads: leadCouplings(op, z, req.sheet),
      scale: 1,
      unit: '1/ps',
      label: `mode of the pole z = ${req.energy} − i·${req.width / 2} meV`,
    };
  }
  if (!Number.isFinite(req.near)) throw new RangeError(`--pole-near must be a finite energy in meV, got ${req.near}`);
  if (op.leadCount === 0) {
    const res = closedCavityEigenvalues(system.lattice, { target: req.near + 1e-9 * t, count: 1, vectors: true });
    return {
      kind: 'bound',
      energy: res.energies[0],
      width: 0,
      psi: res.vectors![0],
      leads: [],
      scale: 1,
      unit: '1/ps',
      label: `closed-cavity eigenstate at E = ${res.energies[0]} meV`,
    };
  }
  const half = req.window ?? 0.05 * t;
  const gammaMax = req.gammaMax ?? 0.1 * t;
  const found = findPoles(op, { emin: req.near - half, emax: req.near + half, gammaMax });
  if (found.poles.length === 0) {
    throw new RangeError(
      `no pole within ${half.toPrecision(3)} meV of ${req.near} meV with Γ ≤ ${gammaMax.toPrecision(3)} meV; widen the window or the width limit`,
    );
  }
  const pole = found.poles.reduce((best, p) => (Math.abs(p.energy - req.near) < Math.abs(best.energy - req.near) ? p : best));
  return resolveState(system, op, { kind: 'mode', energy: pole.energy, width: pole.width, mode: pole.mode, sheet: pole.sheet });
}
