/**
 * Test-only stand-ins for the pole search tests: a field-free rectangle of
 * Nx × Ny sites with a full-width lead on its left and right side, written
 * directly from the physics contract (docs/physics-model.md, "Leads"), and a dense
 * complex LU with partial pivoting. Both are independent of the engine's own
 * lattice and sparse LU, so the search is checked against separate code.
 */
import type { Complex, NonlinearOperator, SheetFlags } from '../../shared/engine/operator';
import type { PoleFactorPlan, PoleFactors } from '../../shared/engine/pole-types';

interface StripSpec {
  nx: number;
  ny: number;
  /** Hopping t (meV). */
  t: number;
  /** Onsite potential V(i, j) in meV. */
  potential?: (i: number, j: number) => number;
}

/** The rectangle with two leads as a NonlinearOperator, plus dense H and Σ for cross-checks. */
export class StripWithLeads implements NonlinearOperator {
  readonly n: number;
  readonly colPtr: Int32Array;
  readonly rowIdx: Int32Array;
  readonly sites: { i: Int32Array; j: Int32Array };
  readonly thresholds: readonly number[];
  readonly leadCount = 2;
  readonly hopping: number;
  readonly nx: number;
  readonly ny: number;
  /** Dense real H, row-major. */
  readonly H: Float64Array;
  /** Channel energies ε_m, m = 1..ny. */
  readonly eps: Float64Array;
  private readonly chi: Float64Array;

  constructor(spec: StripSpec) {
    const { nx, ny, t } = spec;
    this.nx = nx;
    this.ny = ny;
    this.hopping = t;
    const n = nx * ny;
    this.n = n;
    const I = new Int32Array(n);
    const J = new Int32Array(n);
    for (let i = 0; i < nx; i++)
      for (let j = 0; j < ny; j++) {
        I[i * ny + j] = i;
        J[i * ny + j] = j;
      }
    this.sites = { i: I, j: J };
    const H = new Float64Array(n * n);
    for (let i = 0; i < nx; i++)
      for (let j = 0; j < ny; j++) {
        const s = i * ny + j;
        H[s * n + s] = 4 * t + (spec.potential?.(i, j) ?? 0);
        if (i + 1 < nx) H[s * n + s + ny] = H[(s + ny) * n + s] = -t;
        if (j + 1 < ny) H[s * n + s + 1] = H[(s + 1) * n + s] = -t;
      }
    this.H = H;
    this.eps = new Float64Array(ny);
    this.chi = new Float64Array(ny * ny);
    const th: number[] = [];
    for (let m = 1; m <= ny; m++) {
      this.eps[m - 1] = 4 * t - 2 * t * Math.cos((m * Math.PI) / (ny + 1));
      th.push(this.eps[m - 1] - 2 * t, this.eps[m - 1] + 2 * t);
      for (let p = 1; p <= ny; p++) this.chi[(m - 1) * ny + (p - 1)] = Math.sqrt(2 / (ny + 1)) * Math.sin((m * p * Math.PI) / (ny + 1));
    }
    this.thresholds = [...new Set(th)].sort((a, b) => a - b);
    // Pattern: H's plus the dense mouth blocks; rows sorted in each column.
    const colPtr = new Int32Array(n + 1);
    const rows: number[] = [];
    for (let c = 0; c < n; c++) {
      for (let r = 0; r < n; r++) if (H[r * n + c] !== 0 || this.mouthPair(r, c)) rows.push(r);
      colPtr[c + 1] = rows.length;
    }
    this.colPtr = colPtr;
    this.rowIdx = Int32Array.from(rows);
  }

  private mouthLead(s: number): number {
    const i = Math.floor(s / this.ny);
    if (i === 0) return 0;
    if (i === this.nx - 1) return 1;
    return -1;
  }

  private mouthPair(r: number, c: number): boolean {
    const a = this.mouthLead(r);
    return (a >= 0 && a === this.mouthLead(c)) || (this.nx === 1 && a >= 0);
  }

  sheetAt(reE: number): SheetFlags {
    const row = Array.from(this.eps, (e) => e - 2 * this.hopping < reE && reE < e + 2 * this.hopping);
    return [row, row.slice()];
  }

  /** λ_m(z) with the contract's sheet rule. */
  lambda(z: Complex, m: number, open: boolean): Complex {
    const wr = (this.eps[m] - z.re) / (2 * this.hopping);
    const wi = -z.im / (2 * this.hopping);
    if (open) {
      // w + i·sqrt(1 − w²)
      const s = csqrt(1 - (wr * wr - wi * wi), -2 * wr * wi);
      return { re: wr - s.im, im: wi + s.re };
    }
    const a = csqrt(wr - 1, wi);
    const b = csqrt(wr + 1, wi);
    return { re: wr - (a.re * b.re - a.im * b.im), im: wi - (a.re * b.im + a.im * b.re) };
  }

  /** Dense Σ_lead(z) on the whole space (row-major interleaved), or dΣ/dz when derivative. */
  selfEnergy(z: Complex, sheet: SheetFlags, lead: number, derivative = false): Float64Array {
    const n = this.n;
    const ny = this.ny;
    const out = new Float64Array(2 * n * n);
    const i0 = lead === 0 ? 0 : this.nx - 1;
    for (let m = 0; m < ny; m++) {
      const l = this.lambda(z, m, sheet[lead][m]);
      let cr: number;
      let ci: number;
      if (derivative) {
        // λ²/(λ² − 1)
        const l2r = l.re * l.re - l.im * l.im;
        const l2i = 2 * l.re * l.im;
        const dr = l2r - 1;
        const d2 = dr * dr + l2i * l2i;
        cr = (l2r * dr + l2i * l2i) / d2;
        ci = (l2i * dr - l2r * l2i) / d2;
      } else {
        cr = -this.hopping * l.re;
        ci = -this.hopping * l.im;
      }
      for (let p = 0; p < ny; p++)
        for (let q = 0; q < ny; q++) {
          const w = this.chi[m * ny + p] * this.chi[m * ny + q];
          const k = 2 * ((i0 * ny + p) * n + (i0 * ny + q));
          out[k] += w * cr;
          out[k + 1] += w * ci;
        }
    }
    return out;
  }

  /** Dense T(z) = z − H − Σ (row-major interleaved), or dT/dz. */
  denseT(z: Complex, sheet: SheetFlags, derivative = false): Float64Array {
    const n = this.n;
    const T = new Float64Array(2 * n * n);
    for (let r = 0; r < n; r++) {
      T[2 * (r * n + r)] = derivative ? 1 : z.re;
      T[2 * (r * n + r) + 1] = derivative ? 0 : z.im;
      if (!derivative) for (let c = 0; c < n; c++) T[2 * (r * n + c)] -= this.H[r * n + c];
    }
    for (let lead = 0; lead < 2; lead++) {
      const S = this.selfEnergy(z, sheet, lead, derivative);
      for (let k = 0; k < S.length; k++) T[k] -= S[k];
    }
    return T;
  }

  private toCsc(dense: Float64Array, out: Float64Array): void {
    const n = this.n;
    for (let c = 0; c < n; c++) {
      for (let p = this.colPtr[c]; p < this.colPtr[c + 1]; p++) {
        const r = this.rowIdx[p];
        out[2 * p] = dense[2 * (r * n + c)];
        out[2 * p + 1] = dense[2 * (r * n + c) + 1];
      }
    }
  }

  assemble(z: Complex, sheet: SheetFlags, out: Float64Array): void {
    this.toCsc(this.denseT(z, sheet), out);
  }

  assembleDerivative(z: Complex, sheet: SheetFlags, out: Float64Array): void {
    this.toCsc(this.denseT(z, sheet, true), out);
  }

  leadWidthForm(z: Complex, sheet: SheetFlags, lead: number, psi: Float64Array): number {
    // ψ†Γψ = −2 Im(ψ†Σψ)
    const S = this.selfEnergy(z, sheet, lead);
    const n = this.n;
    let im = 0;
    for (let r = 0; r < n; r++)
      for (let c = 0; c < n; c++) {
        const sr = S[2 * (r * n + c)],
          si = S[2 * (r * n + c) + 1];
        if (sr === 0 && si === 0) continue;
        const xr = psi[2 * c],
          xi = psi[2 * c + 1];
        const yr = psi[2 * r],
          yi = -psi[2 * r + 1];
        const ar = sr * xr - si * xi,
          ai = sr * xi + si * xr;
        im += yr * ai + yi * ar;
      }
    return -2 * im;
  }
}

function csqrt(re: number, im: number): Complex {
  const m = Math.hypot(re, im);
  const r = Math.sqrt(0.5 * (m + re));
  const i = Math.sqrt(0.5 * (m - re));
  return { re: r, im: im < 0 ? -i : i };
}

/** Dense complex LU with partial pivoting of the CSC values of op's pattern. */
export class DenseLuPlan implements PoleFactorPlan {
  factorisations = 0;
  constructor(private readonly op: NonlinearOperator) {}
  factor(values: Float64Array): PoleFactors {
    this.factorisations++;
    const n = this.op.n;
    const A = new Float64Array(2 * n * n);
    for (let c = 0; c < n; c++)
      for (let p = this.op.colPtr[c]; p < this.op.colPtr[c + 1]; p++) {
        const r = this.op.rowIdx[p];
        A[2 * (r * n + c)] = values[2 * p];
        A[2 * (r * n + c) + 1] = values[2 * p + 1];
      }
    return denseLu(n, A);
  }
}

/** LU = PA of a dense row-major complex matrix (overwritten). Cost 8n³/3 flops. */
function denseLu(n: number, A: Float64Array): PoleFactors {
  const perm = new Int32Array(n);
  for (let i = 0; i < n; i++) perm[i] = i;
  let swaps = 0;
  for (let k = 0; k < n; k++) {
    let piv = k;
    let best = -1;
    for (let r = k; r < n; r++) {
      const a = Math.hypot(A[2 * (r * n + k)], A[2 * (r * n + k) + 1]);
      if (a > best) {
        best = a;
        piv = r;
      }
    }
    if (piv !== k) {
      swaps++;
      for (let c = 0; c < n; c++) {
        for (let h = 0; h < 2; h++) {
          const t = A[2 * (k * n + c) + h];
          A[2 * (k * n + c) + h] = A[2 * (piv * n + c) + h];
          A[2 * (piv * n + c) + h] = t;
        }
      }
      const t = perm[k];
      perm[k] = perm[piv];
      perm[piv] = t;
    }
    const pr = A[2 * (k * n + k)],
      pi = A[2 * (k * n + k) + 1];
    const d = pr * pr + pi * pi;
    if (d === 0) continue;
    for (let r = k + 1; r < n; r++) {
      const ar = A[2 * (r * n + k)],
        ai = A[2 * (r * n + k) + 1];
      const lr = (ar * pr + ai * pi) / d;
      const li = (ai * pr - ar * pi) / d;
      A[2 * (r * n + k)] = lr;
      A[2 * (r * n + k) + 1] = li;
      if (lr === 0 && li === 0) continue;
      for (let c = k + 1; c < n; c++) {
        const ur = A[2 * (k * n + c)],
          ui = A[2 * (k * n + c) + 1];
        A[2 * (r * n + c)] -= lr * ur - li * ui;
        A[2 * (r * n + c) + 1] -= lr * ui + li * ur;
      }
    }
  }
  const solveOne = (b: Float64Array, off: number, out: Float64Array): void => {
    const y = new Float64Array(2 * n);
    for (let i = 0; i < n; i++) {
      y[2 * i] = b[off + 2 * perm[i]];
      y[2 * i + 1] = b[off + 2 * perm[i] + 1];
    }
    for (let i = 0; i < n; i++)
      for (let c = 0; c < i; c++) {
        const lr = A[2 * (i * n + c)],
          li = A[2 * (i * n + c) + 1];
        y[2 * i] -= lr * y[2 * c] - li * y[2 * c + 1];
        y[2 * i + 1] -= lr * y[2 * c + 1] + li * y[2 * c];
      }
    for (let i = n - 1; i >= 0; i--) {
      let sr = y[2 * i],
        si = y[2 * i + 1];
      for (let c = i + 1; c < n; c++) {
        const ur = A[2 * (i * n + c)],
          ui = A[2 * (i * n + c) + 1];
        sr -= ur * y[2 * c] - ui * y[2 * c + 1];
        si -= ur * y[2 * c + 1] + ui * y[2 * c];
      }
      const pr = A[2 * (i * n + i)],
        pi = A[2 * (i * n + i) + 1];
      const d = pr * pr + pi * pi;
      y[2 * i] = (sr * pr + si * pi) / d;
      y[2 * i + 1] = (si * pr - sr * pi) / d;
    }
    out.set(y, off);
  };
  // Aᵀ x = b with PA = LU: Uᵀ Lᵀ (P x) = b
  const solveTOne = (b: Float64Array, off: number, out: Float64Array): void => {
    const y = Float64Array.from(b.subarray(off, off + 2 * n));
    for (let i = 0; i < n; i++) {
      let sr = y[2 * i],
        si = y[2 * i + 1];
      for (let c = 0; c < i; c++) {
        const ur = A[2 * (c * n + i)],
          ui = A[2 * (c * n + i) + 1];
        sr -= ur * y[2 * c] - ui * y[2 * c + 1];
        si -= ur * y[2 * c + 1] + ui * y[2 * c];
      }
      const pr = A[2 * (i * n + i)],
        pi = A[2 * (i * n + i) + 1];
      const d = pr * pr + pi * pi;
      y[2 * i] = (sr * pr + si * pi) / d;
      y[2 * i + 1] = (si * pr - sr * pi) / d;
    }
    for (let i = n - 1; i >= 0; i--)
      for (let c = i + 1; c < n; c++) {
        const lr = A[2 * (c * n + i)],
          li = A[2 * (c * n + i) + 1];
        y[2 * i] -= lr * y[2 * c] - li * y[2 * c + 1];
        y[2 * i + 1] -= lr * y[2 * c + 1] + li * y[2 * c];
      }
    for (let i = 0; i < n; i++) {
      out[off + 2 * perm[i]] = y[2 * i];
      out[off + 2 * perm[i] + 1] = y[2 * i + 1];
    }
  };
  const many =
    (one: typeof solveOne) =>
    (b: Float64Array, nrhs = 1, out?: Float64Array): Float64Array => {
      const o = out ?? b; // in place unless out is given, like SparseLuFactors
      for (let k = 0; k < nrhs; k++) one(b, 2 * n * k, o);
      return o;
    };
  return {
    solve: many(solveOne),
    solveTranspose: many(solveTOne),
    logDet: () => {
      let logAbs = 0;
      let arg = swaps % 2 ? Math.PI : 0;
      for (let i = 0; i < n; i++) {
        logAbs += Math.log(Math.hypot(A[2 * (i * n + i)], A[2 * (i * n + i) + 1]));
        arg += Math.atan2(A[2 * (i * n + i) + 1], A[2 * (i * n + i)]);
      }
      arg = Math.atan2(Math.sin(arg), Math.cos(arg));
      return { logAbs, arg };
    },
  };
}

/**
 * Transmission left → right by Fisher–Lee/Caroli, T = Tr[Γ_R G Γ_L G†] at real E
 * (contract, "Observables"), with dense matrices. Cost O(n³).
 */
export function transmission(op: StripWithLeads, E: number): number {
  const n = op.n;
  const z = { re: E, im: 0 };
  const sheet = op.sheetAt(E);
  const T = op.denseT(z, sheet);
  const lu = denseLu(n, T);
  // G = T⁻¹ (column-major identity solve)
  const I = new Float64Array(2 * n * n);
  for (let k = 0; k < n; k++) I[2 * (k * n + k)] = 1;
  const G = lu.solve(I, n); // column k: G[:, k] at 2*(k*n + r)
  const gamma = (lead: number): Float64Array => {
    const S = op.selfEnergy(z, sheet, lead);
    const out = new Float64Array(2 * n * n);
    for (let r = 0; r < n; r++)
      for (let c = 0; c < n; c++) {
        // i(S − S†)
        const ar = S[2 * (r * n + c)] - S[2 * (c * n + r)];
        const ai = S[2 * (r * n + c) + 1] + S[2 * (c * n + r) + 1];
        out[2 * (r * n + c)] = -ai;
        out[2 * (r * n + c) + 1] = ar;
      }
    return out;
  };
  const gl = gamma(0);
  const gr = gamma(1);
  const g = (r: number, c: number): Complex => ({ re: G[2 * (c * n + r)], im: G[2 * (c * n + r) + 1] });
  // Tr[Γ_R G Γ_L G†] = Σ Γ_R[a,b] G[b,c] Γ_L[c,d] conj(G[a,d])
  let tr = 0;
  const mouth0: number[] = [];
  const mouth1: number[] = [];
  for (let s = 0; s < n; s++) {
    const i = Math.floor(s / op.ny);
    if (i === 0) mouth0.push(s);
    if (i === op.nx - 1) mouth1.push(s);
  }
  for (const a of mouth1)
    for (const b of mouth1)
      for (const c of mouth0)
        for (const d of mouth0) {
          const x = { re: gr[2 * (a * n + b)], im: gr[2 * (a * n + b) + 1] };
          const y = g(b, c);
          const w = { re: gl[2 * (c * n + d)], im: gl[2 * (c * n + d) + 1] };
          const v = g(a, d);
          const xy = { re: x.re * y.re - x.im * y.im, im: x.re * y.im + x.im * y.re };
          const xyw = { re: xy.re * w.re - xy.im * w.im, im: xy.re * w.im + xy.im * w.re };
          tr += xyw.re * v.re + xyw.im * v.im;
        }
  return tr;
}
