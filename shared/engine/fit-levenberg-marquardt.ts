/**
 * Bounded Levenberg–Marquardt least squares: minimises χ²(u) = Σ_i r_i(u)² over a box
 * lo ≤ u ≤ hi, r_i = y_i − f_i(u).
 *
 * Method (Marquardt, J. SIAM 11 (1963) 431, with Nielsen's damping update, Nielsen, IMM
 * report 1999-05): solve (JᵀJ + λ·diag(JᵀJ))δ = Jᵀr, accept u + δ (projected onto the box)
 * when χ² falls, and scale λ by max(1/3, 1 − (2ρ − 1)³) (ρ the gain ratio), otherwise
 * multiply it by ν and double ν. A parameter on a bound whose gradient pushes it outwards is
 * held for that step (a simple active set). J by central differences with step `step·1` in
 * the (pre-scaled) parameters. Converged when the projected gradient, scaled by the column
 * norms of J and by √χ², is below 1e-8, or when an accepted step lowers χ² by less than
 * 1e-12 relative and moves no parameter by more than 1e-9.
 *
 * Written on ml-matrix instead of using the ml-levenberg-marquardt package, whose limits
 * the fits cannot live with: it stops only on an absolute error tolerance or its iteration
 * cap (so it cannot say whether it converged), a call cannot continue with the damping it
 * reached (rounds of calls lose it and stall on asymmetric Fano starts), its weights enter
 * the error and the normal matrix differently, and it reports no covariance.
 *
 * Cost: per iteration 2p + 1 evaluations of f over n points and O(n·p² + p³).
 */
import { CholeskyDecomposition, Matrix, solve as solveLinear } from 'ml-matrix';

interface LeastSquaresProblem {
  /** Number of residuals. */
  n: number;
  /** Writes f(u) into out (length n). */
  evaluate: (u: ArrayLike<number>, out: Float64Array) => void;
  y: ArrayLike<number>;
  lo: number[];
  hi: number[];
}

interface LeastSquaresResult {
  u: number[];
  chiSquare: number;
  iterations: number;
  converged: boolean;
}

export function levenbergMarquardt(
  problem: LeastSquaresProblem,
  u0: number[],
  options: { maxIterations?: number; step?: number; onIteration?: (k: number) => void } = {},
): LeastSquaresResult {
  const { n, evaluate, y, lo, hi } = problem;
  const p = u0.length;
  const maxIterations = options.maxIterations ?? 400;
  const h = options.step ?? 1e-6;
  let u = u0.map((v, k) => Math.min(hi[k], Math.max(lo[k], v)));
  const f = new Float64Array(n);
  const fPlus = new Float64Array(n);
  const fMinus = new Float64Array(n);
  const chiOf = (v: number[]): number => {
    evaluate(v, f);
    let s = 0;
    for (let i = 0; i < n; i++) s += (y[i] - f[i]) ** 2;
    return s;
  };
  let chi = chiOf(u);
  const r = new Float64Array(n);
  const jac = new Float64Array(n * p);
  let lambda = -1;
  let nu = 2;
  let converged = false;
  let k = 0;
  let fresh = true;
  const A = new Matrix(p, p);
  const g = new Float64Array(p);
  for (; k < maxIterations; k++) {
    options.onIteration?.(k);
    if (fresh) {
      evaluate(u, f);
      for (let i = 0; i < n; i++) r[i] = y[i] - f[i];
      for (let c = 0; c < p; c++) {
        const plus = u.slice();
        const minus = u.slice();
        plus[c] += h;
        minus[c] -= h;
        evaluate(plus, fPlus);
        evaluate(minus, fMinus);
        for (let i = 0; i < n; i++) jac[i * p + c] = (fPlus[i] - fMinus[i]) / (2 * h);
      }
      for (let a = 0; a < p; a++) {
        let s = 0;
        for (let i = 0; i < n; i++) s += jac[i * p + a] * r[i];
        g[a] = s;
        for (let b = a; b < p; b++) {
          let t = 0;
          for (let i = 0; i < n; i++) t += jac[i * p + a] * jac[i * p + b];
          A.set(a, b, t);
          A.set(b, a, t);
        }
      }
      fresh = false;
    }
    // Active set: hold parameters on a bound that the descent direction (+g) pushes out.
    const free: number[] = [];
    for (let a = 0; a < p; a++) {
      const atLo = u[a] <= lo[a] && g[a] < 0;
      const atHi = u[a] >= hi[a] && g[a] > 0;
      if (!atLo && !atHi) free.push(a);
    }
    // Projected, scaled gradient test.
    let gradient = 0;
    for (const a of free) gradient = Math.max(gradient, Math.abs(g[a]) / Math.sqrt(Math.max(A.get(a, a), 1e-300) * Math.max(chi, 1e-300)));
    if (free.length === 0 || gradient < 1e-8) {
      converged = true;
      break;
    }
    if (lambda < 0) lambda = 1e-3;
    const m = free.length;
    const M = new Matrix(m, m);
    const rhs = new Matrix(m, 1);
    for (let a = 0; a < m; a++) {
      rhs.set(a, 0, g[free[a]]);
      for (let b = 0; b < m; b++) M.set(a, b, A.get(free[a], free[b]));
      const d = A.get(free[a], free[a]);
      M.set(a, a, d * (1 + lambda) + 1e-300);
    }
    const chol = new CholeskyDecomposition(M);
    let delta: Matrix;
    try {
      delta = chol.isPositiveDefinite() ? chol.solve(rhs) : solveLinear(M, rhs, true);
    } catch {
      lambda *= nu;
      nu *= 2;
      continue;
    }
    const trial = u.slice();
    let predicted = 0;
    let biggest = 0;
    for (let a = 0; a < m; a++) {
      const c = free[a];
      const step = delta.get(a, 0);
      trial[c] = Math.min(hi[c], Math.max(lo[c], u[c] + step));
      predicted += step * (lambda * A.get(c, c) * step + g[c]);
      biggest = Math.max(biggest, Math.abs(trial[c] - u[c]));
    }
    const next = chiOf(trial);
    const rho = predicted > 0 ? (chi - next) / predicted : -1;
    if (Number.isFinite(next) && next < chi) {
      const relative = (chi - next) / Math.max(next, 1e-300);
      u = trial;
      chi = next;
      fresh = true;
      lambda *= Math.max(1 / 3, 1 - (2 * rho - 1) ** 3);
      nu = 2;
      if (relative < 1e-12 && biggest < 1e-9) {
        converged = true;
        k++;
        break;
      }
    } else {
      lambda *= nu;
      nu *= 2;
      if (lambda > 1e16) {
        // No step lowers χ²: we are at a minimum to rounding.
        converged = true;
        break;
      }
    }
  }
  return { u, chiSquare: chi, iterations: k, converged };
}
