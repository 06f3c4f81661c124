/**
 * Transmission at many energies from the closed cavity's spectrum near the window
 * (docs/physics-model.md, "Transmission sweeps"). The cavity enters the transmission
 * only through its resolvent on the M lead-mouth sites,
 *   g(E) = P (E − H)⁻¹ Pᵀ = Σ_n u_n u_nᴴ / (E − ε_n),   u_n = P ψ_n,
 * a rational function with the real eigenvalues ε_n of the closed-cavity H as poles.
 * Split at a margin δ around the window [a, b]:
 *   g(E) = Σ_{ε_n ∈ [a − δ, b + δ]} u_n u_nᴴ / (E − ε_n) + R(E),
 * where R has no pole nearer the window than δ, so a Chebyshev interpolant of R on
 * [a, b] converges geometrically (rate ρ = x + √(x² − 1), x = 1 + 2δ/(b − a);
 * Trefethen, "Approximation Theory and Approximation Practice", SIAM 2013, ch. 8).
 * The near eigenpairs come from block shift-invert Lanczos on H (Ericsson & Ruhe,
 * Math. Comp. 35, 1251 (1980); Golub & Van Loan, "Matrix Computations", §10.3) with
 * the energy window cut into slices, each searched from one LU of H − σ at a
 * Chebyshev node σ; the same LU gives g(σ), so R(σ) = g(σ) − near sum at every node.
 * At any energy then G_mouth = (1 − gΣ)⁻¹g with the lead self-energy Σ(E) exact;
 * poles within a hair of E are kept apart from g (Woodbury form below), so an energy
 * next to an eigenvalue loses no digits. Held-out energies are solved directly and
 * compared (|ΔT| and |ΔR| ≤ tolerance); if any check fails the nodes are doubled once,
 * then every energy is solved directly.
 *
 * Close poles (|E − ε_n| small, columns U, C = diag(1/(E − ε_n))), A = g − UCUᴴ:
 * with F = 1 − AΣ, Y = F⁻¹U, S = UᴴΣY, K = (C⁻¹ − S)⁻¹,
 *   G_mouth = F⁻¹A + Y K UᴴΣ F⁻¹A + Y K Uᴴ   (Woodbury; nothing of size 1/(E − ε)),
 *   arg det T(E) = π·#{ε_n > E, n not close} + arg det F + arg det(C⁻¹ − S) + const,
 * since det(E − H) = Π(E − ε_n) is real; the constant (π times the parity of the far
 * eigenvalues above the window) is set from a direct solve.
 */
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import type { EffectiveHamiltonian } from './effective-hamiltonian';
import { hamiltonianCsc } from './lattice';
import { matMul, solveDense } from './block-aaa';
import { SparseLuPlan, type SparseLuFactors } from './sparse-lu';
import { mouthOrder, pointFromMouth, type TransmissionPoint } from './scattering-point';
import { largestDifference, mouthSelfEnergy, type MouthSolver } from './mouth-interpolation';
import { siteUniform } from '../model/site-noise';
import { WorkCancelled } from './operator';

export interface MouthSpectralOptions {
  /** Largest |ΔT| (any T or R entry) allowed at a held-out energy; default 1e-11. */
  tolerance?: number;
  /** Margin δ around the window as a fraction of its width; default 0.25. */
  margin?: number;
  /** Chebyshev nodes of the remainder (first try); default 33. */
  nodes?: number;
  /** Energies solved directly to check; default 6. */
  heldOut?: number;
}

export interface MouthSpectralSummary {
  /** Whether the spectral form served the sweep (false: every energy solved directly). */
  used: boolean;
  /** Near eigenpairs in [a − δ, b + δ], Chebyshev nodes of R, LUs of H − σ. */
  eigenpairs: number;
  nodes: number;
  closedFactorisations: number;
  /** Largest |ΔT| at the held-out energies. */
  worstHeldOut: number;
  /** Largest bound on ‖Hψ − εψ‖ over the near eigenpairs (meV). */
  worstEigenResidual: number;
  /** Why the spectral form was not used, when it was not. */
  reason?: string;
}

type Vec = Float64Array;

/** conj(a)·b over interleaved complex vectors, or plain real vectors when `real`. */
function dot(a: Vec, b: Vec, real: boolean): [number, number] {
  let re = 0;
  let im = 0;
  if (real) {
    for (let k = 0; k < a.length; k++) re += a[k] * b[k];
    return [re, 0];
  }
  for (let k = 0; k < a.length; k += 2) {
    re += a[k] * b[k] + a[k + 1] * b[k + 1];
    im += a[k] * b[k + 1] - a[k + 1] * b[k];
  }
  return [re, im];
}

/** w −= (re + i·im)·q. */
function axpy(w: Vec, q: Vec, re: number, im: number, real: boolean): void {
  if (real) {
    for (let k = 0; k < w.length; k++) w[k] -= re * q[k];
    return;
  }
  for (let k = 0; k < w.length; k += 2) {
    w[k] -= re * q[k] - im * q[k + 1];
    w[k + 1] -= re * q[k + 1] + im * q[k];
  }
}

interface NearPair {
  energy: number;
  /** P ψ (M complex, interleaved). */
  u: Float64Array;
  /** ψ itself (2n, interleaved), kept only for eigenvalues next to a Chebyshev node. */
  psi?: Float64Array;
}

interface SliceResult {
  pairs: NearPair[];
  residualBound: number;
  ok: boolean;
  steps: number;
}

/**
 * Eigenpairs of H in [lo, hi] seen from the LU of H − σ: block Lanczos (block size 2,
 * full reorthogonalisation, so it is block Arnoldi on the Hermitian (H − σ)⁻¹), grown
 * until every Ritz value within 1.3 times the slice's reach is converged and the
 * count in the slice has not changed for two blocks.
 */
function sliceEigenpairs(
  lu: SparseLuFactors,
  n: number,
  real: boolean,
  sigma: number,
  lo: number,
  hi: number,
  mouth: Int32Array,
  normBound: number,
  seed: number,
  check: () => void,
  keepVector: (energy: number) => boolean,
): SliceResult {
  const p = 2;
  const maxBasis = 400;
  const reach = Math.max(sigma - lo, hi - sigma);
  const basis: Vec[] = [];
  // T[j] = coefficients of Op·v_j in the basis (column j), grown as vectors are added.
  const cols: Float64Array[] = [];
  let block: Vec[] = [];
  // Lanczos vectors: n reals for a real H (the solves keep them real), else 2n interleaved
  for (let b = 0; b < p; b++) {
    const v = new Float64Array(real ? n : 2 * n);
    if (real) for (let k = 0; k < n; k++) v[k] = siteUniform(seed + 101 * b, k, 23) - 0.5;
    else
      for (let k = 0; k < n; k++) {
        v[2 * k] = siteUniform(seed + 101 * b, k, 23) - 0.5;
        v[2 * k + 1] = siteUniform(seed + 101 * b, k, 29) - 0.5;
      }
    block.push(v);
  }
  // orthonormalise the start block
  const start: Vec[] = [];
  for (const v of block) {
    for (let pass = 0; pass < 2; pass++)
      for (const q of start) {
        const [re, im] = dot(q, v, real);
        axpy(v, q, re, im, real);
      }
    const nr = Math.sqrt(dot(v, v, real)[0]);
    if (nr > 0) {
      for (let k = 0; k < v.length; k++) v[k] /= nr;
      start.push(v);
    }
  }
  basis.push(...start);
  block = start;
  let lastCount = -1;
  let stable = 0;
  const rhs = new Float64Array(2 * n * p);
  const out = new Float64Array(2 * n * p);
  for (;;) {
    check();
    const first = basis.length - block.length;
    rhs.fill(0);
    block.forEach((v, b) => {
      if (real) for (let k = 0; k < n; k++) rhs[2 * (n * b + k)] = v[k];
      else rhs.set(v, 2 * n * b);
    });
    lu.solve(rhs, block.length, out);
    const fresh: Vec[] = [];
    block.forEach((_, b) => {
      let w: Float64Array;
      if (real) {
        w = new Float64Array(n);
        for (let k = 0; k < n; k++) w[k] = out[2 * (n * b + k)];
      } else w = out.slice(2 * n * b, 2 * n * (b + 1));
      const coef = new Float64Array(2 * (basis.length + p));
      for (let pass = 0; pass < 2; pass++) {
        for (let j = 0; j < basis.length; j++) {
          const [re, im] = dot(basis[j], w, real);
          axpy(w, basis[j], re, im, real);
          coef[2 * j] += re;
          coef[2 * j + 1] += im;
        }
        fresh.forEach((q, f) => {
          const [re, im] = dot(q, w, real);
          axpy(w, q, re, im, real);
          coef[2 * (basis.length + f)] += re;
          coef[2 * (basis.length + f) + 1] += im;
        });
      }
      const nr = Math.sqrt(dot(w, w, real)[0]);
      let scale = 0;
      for (let j = 0; j < basis.length; j++) scale = Math.max(scale, Math.hypot(coef[2 * j], coef[2 * j + 1]));
      if (nr > 1e-13 * scale) {
        coef[2 * (basis.length + fresh.length)] = nr;
        for (let k = 0; k < w.length; k++) w[k] /= nr;
        fresh.push(w);
      }
      cols[first + b] = coef;
    });
    const m = basis.length;
    const exhaustedNow = fresh.length === 0;
    const due = exhaustedNow || m + p > maxBasis || (m >= 10 && (m / p) % 3 === 0);
    if (!due) {
      basis.push(...fresh);
      block = fresh;
      continue;
    }
    const entry = (r: number, c: number): [number, number] => {
      const col = cols[c];
      return 2 * r + 1 < col.length ? [col[2 * r], col[2 * r + 1]] : [0, 0];
    };
    // Ritz pairs of the symmetrised m×m projection: real symmetric for a real H, else by
    // the real embedding [[A, −B], [B, A]] of A + iB (each θ then appears twice).
    const e2 = real ? m : 2 * m;
    const S = new Matrix(e2, e2);
    for (let r = 0; r < m; r++)
      for (let c = 0; c < m; c++) {
        const [ar, ai] = entry(r, c);
        const [br, bi] = entry(c, r);
        const re = 0.5 * (ar + br);
        S.set(r, c, re);
        if (real) continue;
        const im = 0.5 * (ai - bi);
        S.set(r + m, c + m, re);
        S.set(r, c + m, -im);
        S.set(r + m, c, im);
      }
    const evd = new EigenvalueDecomposition(S, { assumeSymmetric: true });
    const theta = evd.realEigenvalues;
    const Y = evd.eigenvectorMatrix;
    let thetaMax = 0;
    for (const t of theta) thetaMax = Math.max(thetaMax, Math.abs(t));
    // relative to each |θ|, with the floor the solves' rounding sets (u·‖(H − σ)⁻¹‖)
    const tolOf = (t: number) => Math.max(1e-13 * Math.abs(t), 1e-15 * thetaMax);
    // clusters of equal θ (each θ of the Hermitian projection appears twice in the embedding)
    const order = theta.map((_, k) => k).sort((x, y) => theta[x] - theta[y]);
    const groups: number[][] = [];
    for (const k of order) {
      const g = groups[groups.length - 1];
      if (g && Math.abs(theta[k] - theta[g[0]]) <= 1e-12 * thetaMax) g.push(k);
      else groups.push([k]);
    }
    const pairs: { theta: number; y: Float64Array; residual: number }[] = [];
    for (const g of groups) {
      // complex vectors y = u + i v from the embedding, orthonormalised with rank detection
      const ys: Float64Array[] = [];
      // real H: the real and imaginary halves are real eigenvectors each (kept real, so u = Pψ is real)
      const candidates: Float64Array[] = [];
      for (const k of g) {
        if (real) {
          const y = new Float64Array(2 * m);
          for (let r = 0; r < m; r++) y[2 * r] = Y.get(r, k);
          candidates.push(y);
        } else {
          const y = new Float64Array(2 * m);
          for (let r = 0; r < m; r++) {
            y[2 * r] = Y.get(r, k);
            y[2 * r + 1] = Y.get(r + m, k);
          }
          candidates.push(y);
        }
      }
      for (const y of candidates) {
        const n0 = Math.sqrt(dot(y, y, false)[0]);
        if (n0 < 1e-3) continue;
        for (let e = 0; e < y.length; e++) y[e] /= n0;
        for (let pass = 0; pass < 2; pass++)
          for (const q of ys) {
            const [re, im] = dot(q, y, false);
            axpy(y, q, re, im, false);
          }
        const nr = Math.sqrt(dot(y, y, false)[0]);
        if (nr > 0.5) {
          for (let e = 0; e < y.length; e++) y[e] /= nr;
          ys.push(y);
        }
      }
      for (const y of ys) {
        // Rayleigh quotient yᴴ T y of the symmetrised projection
        let th = 0;
        for (let r = 0; r < m; r++)
          for (let c = 0; c < m; c++) {
            const re = S.get(r, c);
            const im = real ? 0 : S.get(r + m, c);
            // conj(y_r)·(re + i·im)·y_c, real part
            const pr = re * y[2 * c] - im * y[2 * c + 1];
            const pi = re * y[2 * c + 1] + im * y[2 * c];
            th += y[2 * r] * pr + y[2 * r + 1] * pi;
          }
        // residual: the rows of the newest vectors (indices ≥ m) times y
        let res = 0;
        for (let r = m; r < m + fresh.length; r++) {
          let re = 0;
          let im = 0;
          for (let c = first; c < m; c++) {
            const [ar, ai] = entry(r, c);
            re += ar * y[2 * c] - ai * y[2 * c + 1];
            im += ar * y[2 * c + 1] + ai * y[2 * c];
          }
          res += re * re + im * im;
        }
        pairs.push({ theta: th, y, residual: Math.sqrt(res) });
      }
    }
    // Ritz values within 1.3 × the reach must be converged; count those in the slice
    // in the slice: converged to the full tolerance; just outside it (to 1.2 times the
    // reach): converged enough that its Ritz value (error ≤ residual²/gap) is surely outside
    const watched = pairs.filter((q) => Math.abs(1 / q.theta) <= 1.2 * reach);
    const converged = watched.every((q) => {
      const e = sigma + 1 / q.theta;
      return q.residual <= (e >= lo && e < hi ? tolOf(q.theta) : 1e-8 * Math.abs(q.theta));
    });
    const inSlice = pairs.filter((q) => {
      const e = sigma + 1 / q.theta;
      return e >= lo && e < hi;
    });
    if (converged && inSlice.length === lastCount) stable++;
    else stable = 0;
    lastCount = converged ? inSlice.length : -1;
    const exhausted = exhaustedNow;
    if ((converged && stable >= 1) || exhausted || m + p > maxBasis) {
      const ok = converged && (stable >= 1 || exhausted);
      const M = mouth.length;
      let residualBound = 0;
      const out: NearPair[] = inSlice.map((q) => {
        const u = new Float64Array(2 * M);
        for (let r = 0; r < M; r++) {
          let re = 0;
          let im = 0;
          for (let c = 0; c < m; c++) {
            const vr = real ? basis[c][mouth[r]] : basis[c][2 * mouth[r]];
            const vi = real ? 0 : basis[c][2 * mouth[r] + 1];
            re += vr * q.y[2 * c] - vi * q.y[2 * c + 1];
            im += vr * q.y[2 * c + 1] + vi * q.y[2 * c];
          }
          u[2 * r] = re;
          u[2 * r + 1] = im;
        }
        // ‖Hx − εx‖ ≤ ‖H − σ‖·‖(H − σ)⁻¹x − θx‖/|θ|
        residualBound = Math.max(residualBound, (normBound * q.residual) / Math.abs(q.theta));
        const energy = sigma + 1 / q.theta;
        if (!keepVector(energy)) return { energy, u };
        const psi = new Float64Array(2 * n);
        for (let c = 0; c < m; c++) {
          const yr = q.y[2 * c];
          const yi = q.y[2 * c + 1];
          const v = basis[c];
          if (real) for (let k = 0; k < n; k++) psi[2 * k] += v[k] * yr;
          else
            for (let e = 0; e < psi.length; e += 2) {
              psi[e] += v[e] * yr - v[e + 1] * yi;
              psi[e + 1] += v[e] * yi + v[e + 1] * yr;
            }
        }
        return { energy, u, psi };
      });
      return { pairs: out, residualBound, ok, steps: m };
    }
    basis.push(...fresh);
    block = fresh;
  }
}

/** Chebyshev points of the second kind on [a, b], ascending. */
function chebyshevNodes(a: number, b: number, count: number): number[] {
  const out: number[] = [];
  for (let k = count - 1; k >= 0; k--) out.push(0.5 * (a + b) + 0.5 * (b - a) * Math.cos((Math.PI * k) / (count - 1)));
  return out;
}

/** The closed cavity's mouth resolvent on a window, split into near poles and a smooth remainder. */
export class MouthSpectral {
  directSolves = 0;
  closedFactorisations = 0;
  private readonly M: number;
  private readonly sites: Int32Array;
  private readonly direct = new Map<number, TransmissionPoint>();
  private near: NearPair[] = [];
  /** Remainder R at the nodes (M×M interleaved each). */
  private nodes: number[] = [];
  private remainder: Float64Array[] = [];
  private used = false;
  private realVectors = false;
  private phaseOffset = 0;
  private worstHeldOut = 0;
  private worstEigenResidual = 0;
  private reason: string | undefined;
  private readonly a: number;
  private readonly b: number;
  private readonly closeWidth: number;
  /** Pairs nearer a node than this are projected out of its solve (their vectors are kept). */
  private readonly closeToNode: number;

  constructor(
    private readonly op: EffectiveHamiltonian,
    private readonly solver: MouthSolver,
    energies: readonly number[],
    options: MouthSpectralOptions = {},
    private readonly onSolve: () => void = () => {},
  ) {
    this.sites = mouthOrder(op);
    this.M = this.sites.length;
    this.a = energies[0];
    this.b = energies[energies.length - 1];
    const width = this.b - this.a;
    this.closeWidth = 1e-3 * width;
    this.closeToNode = 0.006 * width;
    const tolerance = options.tolerance ?? 1e-11;
    if (!(width > 0) || this.M === 0) {
      this.reason = 'window of zero width or no lead mouth';
      return;
    }
    const margin = (options.margin ?? 0.25) * width;
    let count = Math.max(9, options.nodes ?? 33);
    const held = Math.max(2, options.heldOut ?? 6);
    try {
      const built = this.build(margin, count, onSolve);
      if (!built) return;
      for (let attempt = 0; attempt < 2; attempt++) {
        // held-out energies: spread over the list, away from the nodes
        const picks: number[] = [];
        for (let k = 0; k < held; k++) {
          const i = Math.min(energies.length - 1, Math.floor(((k + 0.37 + 0.21 * attempt) / held) * energies.length));
          if (!picks.includes(energies[i])) picks.push(energies[i]);
        }
        let worst = 0;
        let phaseSet = false;
        let phaseOff = false;
        for (const E of picks) {
          const point = this.solve(E);
          const mine = this.evaluate(E);
          if (!mine) {
            worst = Infinity;
            break;
          }
          if (!phaseSet) {
            this.phaseOffset = Math.round((point.detPhase - mine.phase) / Math.PI) * Math.PI;
            phaseSet = true;
          }
          worst = Math.max(worst, largestDifference(mine.point, point));
          const dp = point.detPhase - mine.phase - this.phaseOffset;
          if (Math.abs(Math.atan2(Math.sin(dp), Math.cos(dp))) > 1e-6) phaseOff = true;
        }
        if (phaseOff) worst = Math.max(worst, Infinity);
        this.worstHeldOut = worst;
        if (worst <= tolerance) {
          this.used = true;
          return;
        }
        if (attempt === 0) {
          count = 2 * count - 1;
          this.refineNodes(count);
        }
      }
      this.reason = `held-out check failed: |ΔT| = ${this.worstHeldOut.toExponential(2)} > ${tolerance}`;
    } catch (err) {
      if (err instanceof WorkCancelled) throw err;
      this.reason = `spectral form failed: ${err instanceof Error ? err.message : String(err)}`;
    }
  }

  private closedPlan: SparseLuPlan | undefined;
  private closedValues: Float64Array | undefined;
  private closedDiag: Int32Array | undefined;
  private spare: SparseLuFactors | undefined;

  /** LU of H − σ (the closed cavity). */
  private factorClosed(sigma: number): SparseLuFactors {
    const lattice = this.op.system.lattice;
    const n = this.op.n;
    if (!this.closedPlan) {
      const h = hamiltonianCsc(lattice);
      // Row pivoting: H − σ is real symmetric indefinite with σ placed among its eigenvalues,
      // where diagonal pivots (sparse-lu.ts, symmetric matrices) round a little worse: the
      // sweep next to a Q = 10^5 resonance agreed with direct solves to 1.01e-10 with them,
      // 0.86e-10 without (tests/engine/transmission-spectral.test.ts).
      this.closedPlan = SparseLuPlan.analyse(n, h.colPtr, h.rowIdx, { sites: lattice.sites, symmetric: 'never' });
      this.closedValues = h.values;
      const diag = new Int32Array(n);
      for (let c = 0; c < n; c++) for (let e = h.colPtr[c]; e < h.colPtr[c + 1]; e++) if (h.rowIdx[e] === c) diag[c] = e;
      this.closedDiag = diag;
    }
    const values = Float64Array.from(this.closedValues!);
    for (let c = 0; c < n; c++) values[2 * this.closedDiag![c]] -= sigma;
    this.closedFactorisations++;
    const spare = this.spare;
    this.spare = undefined;
    return this.closedPlan.factor(values, spare);
  }

  /**
   * g(σ) = −P (H − σ)⁻¹ Pᵀ from an LU of H − σ, less the pole terms of the pairs in
   * `deflate`: the right-hand sides and the solutions are projected off their vectors,
   * so that an eigenvalue next to σ (a large, badly rounded term) never enters.
   */
  private mouthResolvent(lu: SparseLuFactors, deflate: NearPair[] = []): Float64Array {
    const n = this.op.n;
    const M = this.M;
    const rhs = new Float64Array(2 * n * M);
    this.sites.forEach((s, c) => (rhs[2 * (c * n + s)] = 1));
    const project = (x: Float64Array) => {
      for (let c = 0; c < M; c++) {
        const col = x.subarray(2 * n * c, 2 * n * (c + 1));
        for (let pass = 0; pass < 2; pass++)
          for (const d of deflate) {
            const [re, im] = dot(d.psi!, col, false);
            axpy(col, d.psi!, re, im, false);
          }
      }
    };
    if (deflate.length) project(rhs);
    lu.solve(rhs, M);
    if (deflate.length) project(rhs);
    const g = new Float64Array(2 * M * M);
    for (let c = 0; c < M; c++)
      for (let r = 0; r < M; r++) {
        g[2 * (r * M + c)] = -rhs[2 * (c * n + this.sites[r])];
        g[2 * (r * M + c) + 1] = -rhs[2 * (c * n + this.sites[r]) + 1];
      }
    return g;
  }

  /** The near pairs whose pole term at x would lose digits: those within closeToNode of x. */
  private deflationAt(x: number): NearPair[] {
    return this.near.filter((p) => p.psi && Math.abs(p.energy - x) < this.closeToNode);
  }

  /** R(x) = g(x) − near sum, from an LU of H − x. */
  private remainderFrom(lu: SparseLuFactors, x: number): Float64Array {
    const deflate = this.deflationAt(x);
    const g = this.mouthResolvent(lu, deflate);
    const skip = new Set(deflate.map((d) => this.near.indexOf(d)));
    this.addNear(g, x, 0, -1, skip);
    return g;
  }

  /** Nodes, near eigenpairs (one Lanczos per slice) and the remainder at the nodes. */
  private build(margin: number, count: number, check: () => void): boolean {
    const lattice = this.op.system.lattice;
    const n = this.op.n;
    const h = hamiltonianCsc(lattice);
    let real = true;
    for (let e = 1; e < h.values.length; e += 2) if (h.values[e] !== 0) real = false;
    // ‖H − σ‖ bound by Gershgorin rows
    const rowSum = new Float64Array(n);
    for (let c = 0; c < n; c++) for (let e = h.colPtr[c]; e < h.colPtr[c + 1]; e++) rowSum[h.rowIdx[e]] += Math.hypot(h.values[2 * e], h.values[2 * e + 1]);
    const hNorm = rowSum.reduce((m, x) => Math.max(m, x), 0);
    const lo = this.a - margin;
    const hi = this.b + margin;
    this.nodes = chebyshevNodes(this.a, this.b, count);
    // every node is a Lanczos shift (its LU serves both); the margins get shifts at the middle spacing
    const spacing = ((this.b - this.a) * Math.PI) / (2 * (count - 1));
    const shifts: { sigma: number; node: number }[] = this.nodes.map((x, k) => ({ sigma: x, node: k }));
    for (let e = this.a - spacing; e > lo - 0.5 * spacing; e -= spacing) shifts.push({ sigma: e, node: -1 });
    for (let e = this.b + spacing; e < hi + 0.5 * spacing; e += spacing) shifts.push({ sigma: e, node: -1 });
    shifts.sort((x, y) => x.sigma - y.sigma);
    // vectors kept for eigenvalues next to a node of this set or of the doubled one
    const refined = chebyshevNodes(this.a, this.b, 2 * count - 1);
    const keep = (e: number) => {
      let j = 0;
      let hiIdx = refined.length - 1;
      while (hiIdx - j > 1) {
        const mid = (j + hiIdx) >> 1;
        if (refined[mid] <= e) j = mid;
        else hiIdx = mid;
      }
      return Math.min(Math.abs(e - refined[j]), Math.abs(e - refined[hiIdx])) < this.closeToNode;
    };
    const near: NearPair[] = [];
    this.near = near;
    let worstRes = 0;
    const partial: { g: Float64Array; deflate: NearPair[] }[] = [];
    // A node's remainder waits until every pair within closeToNode of it is known (its LU
    // is kept until then; a few at most, where the nodes cluster at the ends).
    const pending: { node: number; lu: SparseLuFactors }[] = [];
    const flush = (upTo: number) => {
      while (pending.length && (this.nodes[pending[0].node] + this.closeToNode <= upTo || upTo === Infinity)) {
        const { node, lu } = pending.shift()!;
        // the deflated g now; the near sum (all slices) is subtracted at the end
        const deflate = this.deflationAt(this.nodes[node]);
        partial[node] = { g: this.mouthResolvent(lu, deflate), deflate };
        this.spare = lu;
      }
    };
    for (let s = 0; s < shifts.length; s++) {
      check();
      const { sigma, node } = shifts[s];
      const from = s === 0 ? lo : 0.5 * (shifts[s - 1].sigma + sigma);
      const to = s === shifts.length - 1 ? hi : 0.5 * (sigma + shifts[s + 1].sigma);
      const lu = this.factorClosed(sigma);
      const slice = sliceEigenpairs(lu, n, real, sigma, Math.max(from, lo), Math.min(to, hi), this.sites, hNorm + Math.abs(sigma), 7 + 13 * s, check, keep);
      if (!slice.ok) {
        this.reason = `eigenpairs near ${sigma.toPrecision(6)} meV did not converge`;
        return false;
      }
      near.push(...slice.pairs);
      worstRes = Math.max(worstRes, slice.residualBound);
      if (node >= 0) pending.push({ node, lu });
      else this.spare = lu;
      flush(s === shifts.length - 1 ? Infinity : to);
    }
    near.sort((x, y) => x.energy - y.energy);
    this.realVectors = real;
    this.worstEigenResidual = worstRes;
    this.remainder = partial.map(({ g, deflate }, k) => {
      const skip = new Set(deflate.map((d) => near.indexOf(d)));
      this.addNear(g, this.nodes[k], 0, -1, skip);
      return g;
    });
    return true;
  }

  /** Doubles the Chebyshev nodes (second-kind points nest: the old ones are kept). */
  private refineNodes(count: number): void {
    const next = chebyshevNodes(this.a, this.b, count);
    const values: Float64Array[] = [];
    next.forEach((x, k) => {
      if (k % 2 === 0) values.push(this.remainder[k / 2]);
      else {
        const lu = this.factorClosed(x);
        values.push(this.remainderFrom(lu, x));
        this.spare = lu;
      }
    });
    this.nodes = next;
    this.remainder = values;
  }

  /** out += sign·Σ u uᴴ/(z − ε) over the near pairs, skipping those in `skip`. */
  private addNear(out: Float64Array, zr: number, zi: number, sign: number, skip: Set<number> | null): void {
    const M = this.M;
    if (zi === 0) {
      // real weights: a Hermitian sum, upper triangle then mirrored; real vectors skip the imaginary parts
      const acc = new Float64Array(2 * M * M);
      this.near.forEach((pair, idx) => {
        if (skip?.has(idx)) return;
        const c = sign / (zr - pair.energy);
        const u = pair.u;
        if (this.realVectors) {
          for (let r = 0; r < M; r++) {
            const a = c * u[2 * r];
            for (let q = r; q < M; q++) acc[2 * (r * M + q)] += a * u[2 * q];
          }
          return;
        }
        for (let r = 0; r < M; r++) {
          const ar = c * u[2 * r];
          const ai = c * u[2 * r + 1];
          for (let q = r; q < M; q++) {
            const br = u[2 * q];
            const bi = -u[2 * q + 1];
            acc[2 * (r * M + q)] += ar * br - ai * bi;
            acc[2 * (r * M + q) + 1] += ar * bi + ai * br;
          }
        }
      });
      for (let r = 0; r < M; r++)
        for (let q = r; q < M; q++) {
          out[2 * (r * M + q)] += acc[2 * (r * M + q)];
          out[2 * (r * M + q) + 1] += acc[2 * (r * M + q) + 1];
          if (q !== r) {
            out[2 * (q * M + r)] += acc[2 * (r * M + q)];
            out[2 * (q * M + r) + 1] -= acc[2 * (r * M + q) + 1];
          }
        }
      return;
    }
    this.near.forEach((pair, idx) => {
      if (skip?.has(idx)) return;
      const dr = zr - pair.energy;
      const d2 = dr * dr + zi * zi;
      const cr = (sign * dr) / d2;
      const ci = (-sign * zi) / d2;
      const u = pair.u;
      for (let r = 0; r < M; r++) {
        // (c·u_r)
        const ar = cr * u[2 * r] - ci * u[2 * r + 1];
        const ai = cr * u[2 * r + 1] + ci * u[2 * r];
        for (let c = 0; c < M; c++) {
          // times conj(u_c)
          const br = u[2 * c];
          const bi = -u[2 * c + 1];
          out[2 * (r * M + c)] += ar * br - ai * bi;
          out[2 * (r * M + c) + 1] += ar * bi + ai * br;
        }
      }
    });
  }

  /** R(z) by the barycentric formula on the second-kind Chebyshev nodes (z may be complex). */
  private remainderAt(zr: number, zi: number): Float64Array {
    const M = this.M;
    const N = this.nodes.length;
    const out = new Float64Array(2 * M * M);
    let denR = 0;
    let denI = 0;
    for (let k = 0; k < N; k++) {
      const dr = zr - this.nodes[k];
      if (dr === 0 && zi === 0) return Float64Array.from(this.remainder[k]);
      const w = (k % 2 === 0 ? 1 : -1) * (k === 0 || k === N - 1 ? 0.5 : 1);
      const d2 = dr * dr + zi * zi;
      const cr = (w * dr) / d2;
      const ci = (-w * zi) / d2;
      denR += cr;
      denI += ci;
      const f = this.remainder[k];
      for (let e = 0; e < 2 * M * M; e += 2) {
        out[e] += cr * f[e] - ci * f[e + 1];
        out[e + 1] += cr * f[e + 1] + ci * f[e];
      }
    }
    const d2 = denR * denR + denI * denI;
    for (let e = 0; e < 2 * M * M; e += 2) {
      const re = out[e];
      const im = out[e + 1];
      out[e] = (re * denR + im * denI) / d2;
      out[e + 1] = (im * denR - re * denI) / d2;
    }
    return out;
  }

  /**
   * G_mouth and arg det T (up to the constant) at z = E + iη (η ≥ 0), Σ on the sheet of
   * Re z; null if singular.
   */
  private evaluate(E: number, eta = 0): { point: TransmissionPoint; phase: number } | null {
    const M = this.M;
    const close = new Set<number>();
    if (eta === 0) this.near.forEach((p, idx) => Math.abs(E - p.energy) < this.closeWidth && close.add(idx));
    const A = this.remainderAt(E, eta);
    this.addNear(A, E, eta, 1, close);
    const sigma = mouthSelfEnergy(this.op, E, eta, E);
    const F = matMul(M, A, sigma);
    for (let e = 0; e < 2 * M * M; e++) F[e] = -F[e];
    for (let k = 0; k < M; k++) F[2 * (k * M + k)] += 1;
    const detF = { value: 0 };
    const FA = solveDense(M, F, A, new Float64Array(2 * M * M), detF);
    let phase = detF.value;
    let mouth = FA;
    if (close.size > 0) {
      const idx = [...close];
      const k = idx.length;
      // U as an M×M block with k used columns (solveDense works on square matrices)
      const U = new Float64Array(2 * M * M);
      idx.forEach((p, c) => {
        const u = this.near[p].u;
        for (let r = 0; r < M; r++) {
          U[2 * (r * M + c)] = u[2 * r];
          U[2 * (r * M + c) + 1] = u[2 * r + 1];
        }
      });
      const Y = solveDense(M, F, U, new Float64Array(2 * M * M));
      // Uᴴ Σ (M×M with k used rows)
      const UhS = new Float64Array(2 * M * M);
      for (let c = 0; c < k; c++)
        for (let j = 0; j < M; j++) {
          let re = 0;
          let im = 0;
          for (let r = 0; r < M; r++) {
            const ur = U[2 * (r * M + c)];
            const ui = -U[2 * (r * M + c) + 1];
            const sr = sigma[2 * (r * M + j)];
            const si = sigma[2 * (r * M + j) + 1];
            re += ur * sr - ui * si;
            im += ur * si + ui * sr;
          }
          UhS[2 * (c * M + j)] = re;
          UhS[2 * (c * M + j) + 1] = im;
        }
      // K⁻¹ = C⁻¹ − UᴴΣY (k×k, padded to M×M with the identity)
      const UhSY = matMul(M, UhS, Y);
      const Kinv = new Float64Array(2 * M * M);
      for (let r = 0; r < M; r++)
        for (let c = 0; c < M; c++) {
          if (r < k && c < k) {
            Kinv[2 * (r * M + c)] = (r === c ? E - this.near[idx[r]].energy : 0) - UhSY[2 * (r * M + c)];
            Kinv[2 * (r * M + c) + 1] = -UhSY[2 * (r * M + c) + 1];
          } else if (r === c) Kinv[2 * (r * M + c)] = 1;
        }
      // B = UᴴΣ F⁻¹A + Uᴴ (k×M rows), then G = F⁻¹A + Y K B
      const B = matMul(M, UhS, FA);
      for (let c = 0; c < k; c++)
        for (let r = 0; r < M; r++) {
          B[2 * (c * M + r)] += U[2 * (r * M + c)];
          B[2 * (c * M + r) + 1] -= U[2 * (r * M + c) + 1];
        }
      for (let c = k; c < M; c++) for (let r = 0; r < M; r++) B[2 * (c * M + r)] = B[2 * (c * M + r) + 1] = 0;
      const detK = { value: 0 };
      const KB = solveDense(M, Kinv, B, new Float64Array(2 * M * M), detK);
      const YKB = matMul(M, Y, KB);
      mouth = FA;
      for (let e = 0; e < 2 * M * M; e++) mouth[e] += YKB[e];
      phase += detK.value;
    }
    for (const v of mouth) if (!Number.isFinite(v)) return null;
    if (eta === 0) {
      // π per eigenvalue above E, those kept apart as close excepted
      let above = 0;
      this.near.forEach((p, idx) => p.energy > E && !close.has(idx) && above++);
      phase += Math.PI * (above % 2);
    } else {
      for (const p of this.near) phase += Math.atan2(eta, E - p.energy);
    }
    return { point: pointFromMouth(this.op, E, mouth, 0), phase };
  }

  private solve(E: number): TransmissionPoint {
    const known = this.direct.get(E);
    if (known) return known;
    const point = this.solver.at(E);
    this.directSolves++;
    this.onSolve();
    this.direct.set(E, point);
    return point;
  }

  /** The point at E: direct if solved, else from the spectral form, else solved now. */
  at(E: number): TransmissionPoint {
    const known = this.direct.get(E);
    if (known) return known;
    if (this.used && E >= this.a && E <= this.b) {
      const it = this.evaluate(E);
      if (it && Number.isFinite(it.phase)) {
        it.point.detPhase = Math.atan2(Math.sin(it.phase + this.phaseOffset), Math.cos(it.phase + this.phaseOffset));
        return it.point;
      }
    }
    return this.solve(E);
  }

  /**
   * Change of arg det T(E + iη) from a to b for the sweep's upper probe, from the near
   * poles and the remainder (the far eigenvalues' share, smaller than
   * η·(b − a)·Σ_far 1/(E − ε)², is left out); null when the spectral form is not in use.
   */
  probeStep(a: number, b: number, eta: number): number | null {
    if (!this.used) return null;
    const pa = this.evaluate(a, eta);
    const pb = this.evaluate(b, eta);
    if (!pa || !pb) return null;
    const d = pb.phase - pa.phase;
    return Math.abs(Math.atan2(Math.sin(d), Math.cos(d)));
  }

  summary(): MouthSpectralSummary {
    return {
      used: this.used,
      eigenpairs: this.near.length,
      nodes: this.nodes.length,
      closedFactorisations: this.closedFactorisations,
      worstHeldOut: this.worstHeldOut,
      worstEigenResidual: this.worstEigenResidual,
      ...(this.reason ? { reason: this.reason } : {}),
    };
  }
}
