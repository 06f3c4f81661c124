/**
 * Newton refinement of one pole candidate of the nonlinear problem T(z)ψ = 0:
 * nonlinear inverse iteration (A. Ruhe, SIAM J. Numer. Anal. 10 (1973) 674–689;
 * S. Güttel & F. Tisseur, Acta Numerica 26 (2017) 1–94, §4.3):
 *   x̃ = T(z_k)⁻¹ T′(z_k) x_k,   z_{k+1} = z_k − (x_kᴴx_k)/(x_kᴴx̃),   x_{k+1} = x̃/‖x̃‖,
 * which is Newton's method on 1/(x_kᴴ T(z)⁻¹ T′ x_k) and converges quadratically to a
 * simple eigenvalue. The first factorisation also does one inverse-iteration step
 * from a start vector, so no eigenvector is needed from the contour stage.
 * The left null vector (of Tᵀ) comes from two transposed solves with the last LU.
 * Cost: one LU and two or three solves per step, typically 2–3 steps.
 */
import type { NonlinearOperator, SheetFlags } from './operator';
import type { PoleFactorPlan, PoleFactors } from './pole-types';

interface RefineSetting {
  op: NonlinearOperator;
  plan: PoleFactorPlan;
  sheet: SheetFlags;
  /**
   * Open strip lo < Re z < hi (the piece's threshold interval) the result must lie in;
   * iterates may leave it only below the real axis, where T stays analytic.
   */
  stripLo: number;
  stripHi: number;
  /** Stop when the relative residual is at most this. */
  tolerance: number;
  maxSteps: number;
  /** Called once per LU factorisation (for the search's statistics and cancellation). */
  onFactor: () => void;
}

export interface RefinedPole {
  zRe: number;
  zIm: number;
  /** Right null vector ψ_R (interleaved), ‖ψ_R‖₂ = 1. */
  right: Float64Array;
  /** Left null vector ψ_L (of Tᵀ), ‖ψ_L‖₂ = 1. */
  left: Float64Array;
  /** ‖T(z)ψ_R‖₂ / ‖T(z)‖₁ at the returned z. */
  residual: number;
  steps: number;
}

/**
 * Refines the candidate z0 from the start vector `start` (any vector with a
 * component along the mode). Returns null when an iterate leaves the strip or the
 * iteration breaks down; the caller judges the residual.
 */
export function refinePole(s: RefineSetting, z0Re: number, z0Im: number, start: Float64Array): RefinedPole | null {
  const { op } = s;
  const n = op.n;
  const nnz = op.colPtr[n];
  const values = new Float64Array(2 * nnz);
  const deriv = new Float64Array(2 * nnz);
  // a separate buffer, so the residual never overwrites values a factorisation may still hold
  const resValues = new Float64Array(2 * nnz);
  const tx = new Float64Array(2 * n);
  const scale = op.hopping;
  let zRe = z0Re;
  let zIm = z0Im;
  let x: Float64Array | null = null;
  let last: PoleFactors | null = null;
  let residual = Infinity;
  let steps = 0;
  for (; steps < s.maxSteps; steps++) {
    // With frozen flags T is analytic in the whole open lower half plane (the square-root
    // cuts lie on the real axis only), so an iterate may pass under a threshold; in or above
    // the real axis outside the strip it would be on another continuation.
    if (!Number.isFinite(zRe) || !Number.isFinite(zIm)) return null;
    if (!(zRe > s.stripLo && zRe < s.stripHi) && !(zIm < 0)) return null;
    const z = { re: zRe, im: zIm };
    const f = factorNear(op, s.plan, zRe, zIm, s.sheet, values);
    s.onFactor();
    if (x === null) {
      x = f.solve(start, 1, new Float64Array(2 * n));
      if (!normalise(x)) return null;
    }
    op.assembleDerivative(z, s.sheet, deriv);
    cscMultiply(op, deriv, x, tx);
    // solve() works in place unless given out: keep x, T′x and the new iterate in separate buffers
    const xt = f.solve(tx, 1, new Float64Array(2 * n));
    let dRe = 0;
    let dIm = 0;
    for (let i = 0; i < n; i++) {
      const ar = x[2 * i],
        ai = x[2 * i + 1],
        br = xt[2 * i],
        bi = xt[2 * i + 1];
      dRe += ar * br + ai * bi;
      dIm += ar * bi - ai * br;
    }
    const d2 = dRe * dRe + dIm * dIm;
    if (!(d2 > 0) || !Number.isFinite(d2)) return null;
    // z ← z − 1/d, since ‖x‖ = 1
    const stepRe = dRe / d2;
    const stepIm = -dIm / d2;
    if (!normalise(xt)) return null;
    last = f;
    x = xt;
    zRe -= stepRe;
    zIm -= stepIm;
    residual = relativeResidual(op, s.sheet, zRe, zIm, x, resValues, tx);
    if (residual <= s.tolerance || Math.hypot(stepRe, stepIm) <= 4e-16 * (Math.hypot(zRe, zIm) + scale)) {
      steps++;
      break;
    }
    // From a good start Newton is quadratic: still far off after three steps means a spurious candidate.
    if (steps >= 2 && residual > 1e-6) return null;
  }
  if (!x || !last || !(zRe > s.stripLo && zRe < s.stripHi)) return null;
  // Left null vector: transposed inverse iteration from conj(ψ_R), whose overlap ψ_Rᵀ·conj(ψ_R) = ‖ψ_R‖² never vanishes.
  const left = new Float64Array(2 * n);
  for (let i = 0; i < n; i++) {
    left[2 * i] = x[2 * i];
    left[2 * i + 1] = -x[2 * i + 1];
  }
  for (let k = 0; k < 2; k++) {
    last.solveTranspose(left, 1, left);
    if (!normalise(left)) return null;
  }
  return { zRe, zIm, right: x, left, residual, steps };
}

/**
 * Assembles T(z) into `values` and factorises it. A point exactly on a pole makes T
 * exactly singular (SingularMatrixError); it is then moved by 1e-13·t along Re z,
 * far below any tolerance and too little to change a count or a moment.
 */
export function factorNear(op: NonlinearOperator, plan: PoleFactorPlan, zRe: number, zIm: number, sheet: SheetFlags, values: Float64Array): PoleFactors {
  for (let k = 0; ; k++) {
    op.assemble({ re: zRe + k * 1e-13 * op.hopping, im: zIm }, sheet, values);
    try {
      return plan.factor(values);
    } catch (e) {
      if (k >= 2 || !(e instanceof Error) || e.name !== 'SingularMatrixError') throw e;
    }
  }
}

/**
 * ‖T(z)x‖₂ / (‖T(z)‖₁ ‖x‖₂): the residual relative to the operator's size, so it
 * is near machine precision for an exact eigenpair whatever the energy scale.
 * Uses `values` and `out` as scratch. Cost O(nnz).
 */
function relativeResidual(
  op: NonlinearOperator,
  sheet: SheetFlags,
  zRe: number,
  zIm: number,
  x: Float64Array,
  values: Float64Array,
  out: Float64Array,
): number {
  op.assemble({ re: zRe, im: zIm }, sheet, values);
  cscMultiply(op, values, x, out);
  let r2 = 0;
  let x2 = 0;
  for (let i = 0; i < op.n; i++) {
    r2 += out[2 * i] ** 2 + out[2 * i + 1] ** 2;
    x2 += x[2 * i] ** 2 + x[2 * i + 1] ** 2;
  }
  let norm1 = 0;
  for (let j = 0; j < op.n; j++) {
    let c = 0;
    for (let p = op.colPtr[j]; p < op.colPtr[j + 1]; p++) c += Math.hypot(values[2 * p], values[2 * p + 1]);
    if (c > norm1) norm1 = c;
  }
  return Math.sqrt(r2 / x2) / norm1;
}

/** out = A·x for A with op's CSC pattern and the given values (interleaved). Cost O(nnz). */
function cscMultiply(op: NonlinearOperator, values: Float64Array, x: Float64Array, out: Float64Array): Float64Array {
  out.fill(0);
  const { colPtr, rowIdx } = op;
  for (let j = 0; j < op.n; j++) {
    const xr = x[2 * j],
      xi = x[2 * j + 1];
    for (let p = colPtr[j]; p < colPtr[j + 1]; p++) {
      const i = rowIdx[p];
      const ar = values[2 * p],
        ai = values[2 * p + 1];
      out[2 * i] += ar * xr - ai * xi;
      out[2 * i + 1] += ar * xi + ai * xr;
    }
  }
  return out;
}

/** Scales x to unit 2-norm; false when x is zero or not finite. */
export function normalise(x: Float64Array): boolean {
  let s = 0;
  for (let i = 0; i < x.length; i++) s += x[i] * x[i];
  if (!(s > 0) || !Number.isFinite(s)) return false;
  const inv = 1 / Math.sqrt(s);
  for (let i = 0; i < x.length; i++) x[i] *= inv;
  return true;
}
