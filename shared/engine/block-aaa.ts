/**
 * Rational interpolation of a matrix-valued function F(z) (M×M) in barycentric form
 * with matrix weights, the block form of the AAA algorithm:
 *   R(z) = D(z)⁻¹ N(z),  D(z) = Σ_j W_j/(z − z_j),  N(z) = Σ_j W_j F_j/(z − z_j),
 * which interpolates F at the support points z_j (R(z_j) = F_j when W_j is
 * invertible) and has McMillan degree up to M·(m − 1) with m support points, so a
 * few support points carry many poles with low-rank residues. The weights
 * W = [W_1 … W_m] (M × mM, ‖W‖_F = 1) minimise the linearised residual
 * Σ_i ‖Σ_j W_j (F_i − F_j)/(z_i − z_j)‖_F² over the other samples z_i: its rows are the
 * conjugated right singular vectors of the smallest M singular values of the
 * stacked Loewner matrix.
 * Sources: Y. Nakatsukasa, O. Sète, L. N. Trefethen, SIAM J. Sci. Comput. 40 (2018)
 * A1494–A1522 (AAA); I. V. Gosea, S. Güttel, SIAM J. Sci. Comput. 43 (2021)
 * A3033–A3054 (block-AAA, matrix weights).
 * Complex M×M matrices are row-major interleaved Float64Arrays.
 * Cost: O(q·m²M³) for the fit with q samples, O(mM² + M³) per evaluation.
 */
import { complexSvd } from './complex-svd';

export interface BlockRational {
  /** Matrix size M. */
  size: number;
  /** Support points z_j (real or complex, interleaved). */
  support: Float64Array;
  /** W_j (M×M each). */
  weights: Float64Array[];
  /** W_j F_j (M×M each). */
  weightedValues: Float64Array[];
  /** F_j, returned exactly at a support point. */
  values: Float64Array[];
}

/**
 * Fits the weights for the given support samples, using the other samples for the
 * least-squares condition (needs at least as many other samples as support points).
 */
export function fitBlockRational(size: number, supportZ: Float64Array, supportF: Float64Array[], otherZ: Float64Array, otherF: Float64Array[]): BlockRational {
  const M = size;
  const m = supportF.length;
  const q = otherF.length;
  if (q < m) throw new RangeError(`fitBlockRational: need at least ${m} least-squares samples, got ${q}`);
  const cols = m * M;
  const rows = q * M;
  // A = Lᴴ: row (i, c) , column (j, r): conj((F_i − F_j)[r, c] / (z_i − z_j))
  const A = new Float64Array(2 * rows * cols);
  for (let i = 0; i < q; i++) {
    const zr = otherZ[2 * i];
    const zi = otherZ[2 * i + 1];
    for (let j = 0; j < m; j++) {
      const dr = zr - supportZ[2 * j];
      const di = zi - supportZ[2 * j + 1];
      const d2 = dr * dr + di * di;
      // 1/(z_i − z_j)
      const ir = dr / d2;
      const ii = -di / d2;
      const Fi = otherF[i];
      const Fj = supportF[j];
      for (let r = 0; r < M; r++) {
        for (let c = 0; c < M; c++) {
          const er = Fi[2 * (r * M + c)] - Fj[2 * (r * M + c)];
          const ei = Fi[2 * (r * M + c) + 1] - Fj[2 * (r * M + c) + 1];
          const lr = er * ir - ei * ii;
          const li = er * ii + ei * ir;
          const row = i * M + c;
          const col = j * M + r;
          A[2 * (row * cols + col)] = lr;
          A[2 * (row * cols + col) + 1] = -li;
        }
      }
    }
  }
  const R = householderR(rows, cols, A);
  const { sigma, V } = complexSvd(cols, R);
  void sigma;
  // W row r = conj(v) for the r-th smallest singular value: V column cols − 1 − r
  const weights: Float64Array[] = [];
  for (let j = 0; j < m; j++) weights.push(new Float64Array(2 * M * M));
  for (let r = 0; r < M; r++) {
    const c = cols - 1 - r;
    for (let j = 0; j < m; j++) {
      for (let k = 0; k < M; k++) {
        const idx = j * M + k;
        weights[j][2 * (r * M + k)] = V[2 * (idx * cols + c)];
        weights[j][2 * (r * M + k) + 1] = -V[2 * (idx * cols + c) + 1];
      }
    }
  }
  const weightedValues = weights.map((W, j) => matMul(M, W, supportF[j]));
  return { size: M, support: Float64Array.from(supportZ), weights, weightedValues, values: supportF.map((f) => Float64Array.from(f)) };
}

/** R(z) into out (M×M); also returns the scalar-free pieces D(z) and N(z) when asked. */
export function evaluateBlockRational(
  r: BlockRational,
  zRe: number,
  zIm: number,
  out: Float64Array,
  parts?: { D: Float64Array; N: Float64Array },
): Float64Array {
  const M = r.size;
  const m = r.weights.length;
  for (let j = 0; j < m; j++) {
    if (zRe === r.support[2 * j] && zIm === r.support[2 * j + 1]) {
      out.set(r.values[j]);
      if (parts) parts.D.fill(NaN);
      return out;
    }
  }
  const D = parts?.D ?? new Float64Array(2 * M * M);
  const N = parts?.N ?? new Float64Array(2 * M * M);
  D.fill(0);
  N.fill(0);
  for (let j = 0; j < m; j++) {
    const dr = zRe - r.support[2 * j];
    const di = zIm - r.support[2 * j + 1];
    const d2 = dr * dr + di * di;
    const cr = dr / d2;
    const ci = -di / d2;
    const W = r.weights[j];
    const WF = r.weightedValues[j];
    for (let e = 0; e < M * M; e++) {
      D[2 * e] += W[2 * e] * cr - W[2 * e + 1] * ci;
      D[2 * e + 1] += W[2 * e] * ci + W[2 * e + 1] * cr;
      N[2 * e] += WF[2 * e] * cr - WF[2 * e + 1] * ci;
      N[2 * e + 1] += WF[2 * e] * ci + WF[2 * e + 1] * cr;
    }
  }
  return solveDense(M, D, N, out);
}

/** C = A·B for M×M complex matrices. */
export function matMul(M: number, A: Float64Array, B: Float64Array, out = new Float64Array(2 * M * M)): Float64Array {
  out.fill(0);
  for (let i = 0; i < M; i++) {
    for (let k = 0; k < M; k++) {
      const ar = A[2 * (i * M + k)];
      const ai = A[2 * (i * M + k) + 1];
      if (ar === 0 && ai === 0) continue;
      for (let j = 0; j < M; j++) {
        const br = B[2 * (k * M + j)];
        const bi = B[2 * (k * M + j) + 1];
        out[2 * (i * M + j)] += ar * br - ai * bi;
        out[2 * (i * M + j) + 1] += ar * bi + ai * br;
      }
    }
  }
  return out;
}

/**
 * X = A⁻¹B for M×M complex A and B (Gaussian elimination with partial pivoting on
 * copies; Golub & Van Loan §3.4). Also returns arg det A in `detArg` when given.
 */
export function solveDense(M: number, A0: Float64Array, B0: Float64Array, out: Float64Array, detArg?: { value: number }): Float64Array {
  const A = Float64Array.from(A0);
  out.set(B0);
  let arg = 0;
  for (let k = 0; k < M; k++) {
    let p = k;
    let best = -1;
    for (let i = k; i < M; i++) {
      const a = Math.hypot(A[2 * (i * M + k)], A[2 * (i * M + k) + 1]);
      if (a > best) {
        best = a;
        p = i;
      }
    }
    if (p !== k) {
      arg += Math.PI;
      for (let j = 0; j < M; j++) {
        for (const X of [A, out]) {
          const t0 = X[2 * (k * M + j)];
          const t1 = X[2 * (k * M + j) + 1];
          X[2 * (k * M + j)] = X[2 * (p * M + j)];
          X[2 * (k * M + j) + 1] = X[2 * (p * M + j) + 1];
          X[2 * (p * M + j)] = t0;
          X[2 * (p * M + j) + 1] = t1;
        }
      }
    }
    const pr = A[2 * (k * M + k)];
    const pi = A[2 * (k * M + k) + 1];
    arg += Math.atan2(pi, pr);
    const p2 = pr * pr + pi * pi;
    for (let i = k + 1; i < M; i++) {
      const ar = A[2 * (i * M + k)];
      const ai = A[2 * (i * M + k) + 1];
      // l = a / pivot
      const lr = (ar * pr + ai * pi) / p2;
      const li = (ai * pr - ar * pi) / p2;
      for (let j = k; j < M; j++) {
        const ur = A[2 * (k * M + j)];
        const ui = A[2 * (k * M + j) + 1];
        A[2 * (i * M + j)] -= lr * ur - li * ui;
        A[2 * (i * M + j) + 1] -= lr * ui + li * ur;
      }
      for (let j = 0; j < M; j++) {
        const ur = out[2 * (k * M + j)];
        const ui = out[2 * (k * M + j) + 1];
        out[2 * (i * M + j)] -= lr * ur - li * ui;
        out[2 * (i * M + j) + 1] -= lr * ui + li * ur;
      }
    }
  }
  for (let k = M - 1; k >= 0; k--) {
    const pr = A[2 * (k * M + k)];
    const pi = A[2 * (k * M + k) + 1];
    const p2 = pr * pr + pi * pi;
    for (let j = 0; j < M; j++) {
      let sr = out[2 * (k * M + j)];
      let si = out[2 * (k * M + j) + 1];
      for (let c = k + 1; c < M; c++) {
        const ar = A[2 * (k * M + c)];
        const ai = A[2 * (k * M + c) + 1];
        const xr = out[2 * (c * M + j)];
        const xi = out[2 * (c * M + j) + 1];
        sr -= ar * xr - ai * xi;
        si -= ar * xi + ai * xr;
      }
      out[2 * (k * M + j)] = (sr * pr + si * pi) / p2;
      out[2 * (k * M + j) + 1] = (si * pr - sr * pi) / p2;
    }
  }
  if (detArg) detArg.value = arg;
  return out;
}

/**
 * The cols×cols upper triangle R of a Householder QR of the rows×cols complex
 * matrix A (row-major, rows ≥ cols), row-major (Golub & Van Loan §5.2). Cost O(rows·cols²).
 */
function householderR(rows: number, cols: number, A0: Float64Array): Float64Array {
  const A = Float64Array.from(A0);
  const v = new Float64Array(2 * rows);
  for (let k = 0; k < cols; k++) {
    let norm2 = 0;
    for (let i = k; i < rows; i++) norm2 += A[2 * (i * cols + k)] ** 2 + A[2 * (i * cols + k) + 1] ** 2;
    const norm = Math.sqrt(norm2);
    if (norm === 0) continue;
    const xr = A[2 * (k * cols + k)];
    const xi = A[2 * (k * cols + k) + 1];
    const xa = Math.hypot(xr, xi);
    const pr = xa > 0 ? xr / xa : 1;
    const pi = xa > 0 ? xi / xa : 0;
    for (let i = k; i < rows; i++) {
      v[2 * i] = A[2 * (i * cols + k)];
      v[2 * i + 1] = A[2 * (i * cols + k) + 1];
    }
    v[2 * k] += pr * norm;
    v[2 * k + 1] += pi * norm;
    let vn2 = 0;
    for (let i = k; i < rows; i++) vn2 += v[2 * i] ** 2 + v[2 * i + 1] ** 2;
    if (vn2 === 0) continue;
    for (let j = k; j < cols; j++) {
      // s = vᴴ a_j
      let sr = 0;
      let si = 0;
      for (let i = k; i < rows; i++) {
        const ar = A[2 * (i * cols + j)];
        const ai = A[2 * (i * cols + j) + 1];
        sr += v[2 * i] * ar + v[2 * i + 1] * ai;
        si += v[2 * i] * ai - v[2 * i + 1] * ar;
      }
      const fr = (2 * sr) / vn2;
      const fi = (2 * si) / vn2;
      for (let i = k; i < rows; i++) {
        A[2 * (i * cols + j)] -= v[2 * i] * fr - v[2 * i + 1] * fi;
        A[2 * (i * cols + j) + 1] -= v[2 * i] * fi + v[2 * i + 1] * fr;
      }
    }
  }
  const R = new Float64Array(2 * cols * cols);
  for (let i = 0; i < cols; i++)
    for (let j = i; j < cols; j++) {
      R[2 * (i * cols + j)] = A[2 * (i * cols + j)];
      R[2 * (i * cols + j) + 1] = A[2 * (i * cols + j) + 1];
    }
  return R;
}
