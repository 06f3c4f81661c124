/**
 * The scattering quantities at one real energy from the open-channel S matrix
 * (docs/physics-model.md, "Observables"; formulas in transmission.ts), shared by the
 * direct solver (transmission.ts) and the mouth interpolation (mouth-interpolation.ts).
 */
import type { EffectiveHamiltonian } from './effective-hamiltonian';

/** Everything computed at one real energy. */
export interface TransmissionPoint {
  /** E (meV). */
  energy: number;
  /** transmission[from][to] = T(from→to); the diagonal is 0 (see reflection). */
  transmission: number[][];
  /** R_ℓ = Σ over ℓ's open channels of |S_ℓℓ|². */
  reflection: number[];
  /** Open channel count N_ℓ of every lead. */
  channels: number[];
  /** Two-terminal conductance T(0→1) in units of 2e²/h; null with fewer than two leads. */
  conductance: number | null;
  /** max_ℓ |R_ℓ + Σ_ℓ' T(ℓ→ℓ') − N_ℓ| (current conservation). */
  currentResidual: number;
  /** max |(S†S − 1)_ab| over the open channels. */
  unitarityResidual: number;
  /** arg det T(E) (rad, wrapped to (−π, π]); it drops by about π across a narrow resonance. */
  detPhase: number;
  /** Open-channel S matrix, row-major interleaved (N_open²); only when asked for. */
  sMatrix?: Float64Array;
  /** Lead and 1-based channel of each S row/column; only with sMatrix. */
  sChannels?: { lead: number; channel: number }[];
}

/** Unknown indices of every lead's mouth sites, lead after lead (the order of G_mouth). */
export function mouthOrder(op: EffectiveHamiltonian): Int32Array {
  const out: number[] = [];
  for (let l = 0; l < op.leadCount; l++) out.push(...op.mouthSites(l));
  return Int32Array.from(out);
}

/**
 * The point at a real energy from G_mouth alone: S_ab = −δ_ab + i W_aᴴ G_mouth W_b, with
 * the coupling columns W restricted to the mouth (they vanish elsewhere). Cost O(M²·N_open).
 */
export function pointFromMouth(op: EffectiveHamiltonian, energy: number, mouth: Float64Array, detPhase: number, withS = false): TransmissionPoint {
  const M = mouthOrder(op).length;
  const w = op.couplingColumns(energy, true);
  const count = w.count;
  const wm = w.values;
  // X = G_mouth W (M × count, column-major)
  const x = new Float64Array(2 * M * count);
  for (let c = 0; c < count; c++)
    for (let r = 0; r < M; r++) {
      let re = 0;
      let im = 0;
      for (let q = 0; q < M; q++) {
        const gr = mouth[2 * (r * M + q)];
        const gi = mouth[2 * (r * M + q) + 1];
        const vr = wm[2 * (c * M + q)];
        const vi = wm[2 * (c * M + q) + 1];
        re += gr * vr - gi * vi;
        im += gr * vi + gi * vr;
      }
      x[2 * (c * M + r)] = re;
      x[2 * (c * M + r) + 1] = im;
    }
  const s = new Float64Array(2 * count * count);
  for (let a = 0; a < count; a++)
    for (let b = 0; b < count; b++) {
      let re = 0;
      let im = 0;
      for (let p = 0; p < M; p++) {
        const wr = wm[2 * (a * M + p)];
        const wi = wm[2 * (a * M + p) + 1];
        const xr = x[2 * (b * M + p)];
        const xi = x[2 * (b * M + p) + 1];
        re += wr * xr + wi * xi;
        im += wr * xi - wi * xr;
      }
      s[2 * (a * count + b)] = -im - (a === b ? 1 : 0);
      s[2 * (a * count + b) + 1] = re;
    }
  return scatteringPoint(energy, s, w, op.leadCount, detPhase, withS);
}

/** T, R, residuals (and S when asked) from the open-channel S matrix. */
export function scatteringPoint(
  energy: number,
  s: Float64Array,
  w: { count: number; lead: Int32Array; channel: Int32Array; perLead: number[] },
  leads: number,
  detPhase: number,
  withS: boolean,
): TransmissionPoint {
  const count = w.count;
  const transmission = Array.from({ length: leads }, () => new Array<number>(leads).fill(0));
  const reflection = new Array<number>(leads).fill(0);
  for (let a = 0; a < count; a++) {
    for (let b = 0; b < count; b++) {
      const p = s[2 * (a * count + b)] ** 2 + s[2 * (a * count + b) + 1] ** 2;
      const from = w.lead[b];
      const to = w.lead[a];
      if (from === to) reflection[from] += p;
      else transmission[from][to] += p;
    }
  }
  let currentResidual = 0;
  for (let l = 0; l < leads; l++) {
    let sum = reflection[l];
    for (let m = 0; m < leads; m++) sum += transmission[l][m];
    currentResidual = Math.max(currentResidual, Math.abs(sum - w.perLead[l]));
  }
  let unitarityResidual = 0;
  for (let a = 0; a < count; a++) {
    for (let b = 0; b < count; b++) {
      let re = a === b ? -1 : 0;
      let im = 0;
      for (let c = 0; c < count; c++) {
        const ar = s[2 * (c * count + a)];
        const ai = s[2 * (c * count + a) + 1];
        const br = s[2 * (c * count + b)];
        const bi = s[2 * (c * count + b) + 1];
        re += ar * br + ai * bi;
        im += ar * bi - ai * br;
      }
      unitarityResidual = Math.max(unitarityResidual, Math.hypot(re, im));
    }
  }
  const point: TransmissionPoint = {
    energy,
    transmission,
    reflection,
    channels: w.perLead,
    conductance: leads >= 2 ? transmission[0][1] : null,
    currentResidual,
    unitarityResidual,
    detPhase,
  };
  if (withS) {
    point.sMatrix = s;
    point.sChannels = Array.from({ length: count }, (_, c) => ({ lead: w.lead[c], channel: w.channel[c] }));
  }
  return point;
}
