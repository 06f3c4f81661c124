/**
 * Small dense complex linear systems by LU with partial pivoting (Golub & Van Loan,
 * "Matrix Computations", 4th ed. (2013), §3.4). Row-major, interleaved (re, im).
 * For the lead cells of numerical-lead.ts (sizes up to a few hundred), not for the
 * cavity (which uses the sparse LU).
 */

/** LU factors of an n×n matrix: unit-lower L and U packed in lu, row permutation perm. */
interface DenseLu {
  n: number;
  lu: Float64Array;
  perm: Int32Array;
  /** Smallest |u_kk| over the largest, a cheap conditioning hint (0 when singular). */
  pivotRatio: number;
}

/** Factors a (not modified). Cost 8n³/3 real flops. */
export function denseLu(n: number, a: Float64Array): DenseLu {
  const lu = Float64Array.from(a.subarray(0, 2 * n * n));
  const perm = Int32Array.from({ length: n }, (_, k) => k);
  let umax = 0;
  let umin = Infinity;
  for (let k = 0; k < n; k++) {
    let best = k;
    let bestAbs = -1;
    for (let i = k; i < n; i++) {
      const x = Math.hypot(lu[2 * (i * n + k)], lu[2 * (i * n + k) + 1]);
      if (x > bestAbs) {
        bestAbs = x;
        best = i;
      }
    }
    umax = Math.max(umax, bestAbs);
    umin = Math.min(umin, bestAbs);
    if (best !== k) {
      for (let j = 0; j < 2 * n; j++) {
        const tmp = lu[2 * k * n + j];
        lu[2 * k * n + j] = lu[2 * best * n + j];
        lu[2 * best * n + j] = tmp;
      }
      const tp = perm[k];
      perm[k] = perm[best];
      perm[best] = tp;
    }
    if (bestAbs === 0) continue;
    const pr = lu[2 * (k * n + k)];
    const pi = lu[2 * (k * n + k) + 1];
    const d = pr * pr + pi * pi;
    for (let i = k + 1; i < n; i++) {
      const xr = lu[2 * (i * n + k)];
      const xi = lu[2 * (i * n + k) + 1];
      const lr = (xr * pr + xi * pi) / d;
      const li = (xi * pr - xr * pi) / d;
      lu[2 * (i * n + k)] = lr;
      lu[2 * (i * n + k) + 1] = li;
      if (lr === 0 && li === 0) continue;
      for (let j = k + 1; j < n; j++) {
        const ur = lu[2 * (k * n + j)];
        const ui = lu[2 * (k * n + j) + 1];
        lu[2 * (i * n + j)] -= lr * ur - li * ui;
        lu[2 * (i * n + j) + 1] -= lr * ui + li * ur;
      }
    }
  }
  return { n, lu, perm, pivotRatio: umax > 0 ? umin / umax : 0 };
}

/**
 * Solves A·X = B for the n×m right-hand side b (row-major, interleaved), returning X.
 * Throws on an exactly singular pivot. Cost 8n²m real flops.
 */
export function denseLuSolve(f: DenseLu, b: Float64Array, m: number): Float64Array {
  const { n, lu, perm } = f;
  const x = new Float64Array(2 * n * m);
  for (let i = 0; i < n; i++) for (let j = 0; j < 2 * m; j++) x[2 * i * m + j] = b[2 * perm[i] * m + j];
  for (let i = 0; i < n; i++)
    for (let k = 0; k < i; k++) {
      const lr = lu[2 * (i * n + k)];
      const li = lu[2 * (i * n + k) + 1];
      if (lr === 0 && li === 0) continue;
      for (let j = 0; j < m; j++) {
        const yr = x[2 * (k * m + j)];
        const yi = x[2 * (k * m + j) + 1];
        x[2 * (i * m + j)] -= lr * yr - li * yi;
        x[2 * (i * m + j) + 1] -= lr * yi + li * yr;
      }
    }
  for (let i = n - 1; i >= 0; i--) {
    for (let k = i + 1; k < n; k++) {
      const ur = lu[2 * (i * n + k)];
      const ui = lu[2 * (i * n + k) + 1];
      if (ur === 0 && ui === 0) continue;
      for (let j = 0; j < m; j++) {
        const yr = x[2 * (k * m + j)];
        const yi = x[2 * (k * m + j) + 1];
        x[2 * (i * m + j)] -= ur * yr - ui * yi;
        x[2 * (i * m + j) + 1] -= ur * yi + ui * yr;
      }
    }
    const pr = lu[2 * (i * n + i)];
    const pi = lu[2 * (i * n + i) + 1];
    const d = pr * pr + pi * pi;
    if (d === 0) throw new Error(`denseLuSolve: singular matrix (zero pivot at row ${i} of ${n})`);
    for (let j = 0; j < m; j++) {
      const yr = x[2 * (i * m + j)];
      const yi = x[2 * (i * m + j) + 1];
      x[2 * (i * m + j)] = (yr * pr + yi * pi) / d;
      x[2 * (i * m + j) + 1] = (yi * pr - yr * pi) / d;
    }
  }
  return x;
}

/** C = A·B for A (r×k), B (k×c), row-major interleaved. Cost 8rkc real flops. */
export function denseMultiply(r: number, k: number, c: number, a: Float64Array, b: Float64Array): Float64Array {
  const out = new Float64Array(2 * r * c);
  for (let i = 0; i < r; i++)
    for (let l = 0; l < k; l++) {
      const ar = a[2 * (i * k + l)];
      const ai = a[2 * (i * k + l) + 1];
      if (ar === 0 && ai === 0) continue;
      for (let j = 0; j < c; j++) {
        const br = b[2 * (l * c + j)];
        const bi = b[2 * (l * c + j) + 1];
        out[2 * (i * c + j)] += ar * br - ai * bi;
        out[2 * (i * c + j) + 1] += ar * bi + ai * br;
      }
    }
  return out;
}

/** The conjugate transpose Aᴴ of an r×c matrix (c×r result). */
export function conjugateTranspose(r: number, c: number, a: Float64Array): Float64Array {
  const out = new Float64Array(2 * r * c);
  for (let i = 0; i < r; i++)
    for (let j = 0; j < c; j++) {
      out[2 * (j * r + i)] = a[2 * (i * c + j)];
      out[2 * (j * r + i) + 1] = -a[2 * (i * c + j) + 1];
    }
  return out;
}
