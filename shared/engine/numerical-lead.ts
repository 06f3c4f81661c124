/**
 * A lead of any cross-section given by its unit cell (docs/physics-model.md,
 * "Numerical leads"): self-energy, its derivative, thresholds and the flux-normalised
 * open channels, all from the modes of numerical-lead-modes.ts with the retarded
 * choice (and its continuation) of numerical-lead-sheet.ts.
 *
 * Below, H1 is the block H[cell k, cell k+1] (forwardHopping: the adjoint of the cell's
 * own h1 = H[cell k+1, cell k]). With F = Φ Λ Φ⁻¹ the transfer matrix of the n chosen modes (ψ_{j+1} = F ψ_j), taken
 * from the leading Schur vectors as F = Z21·Z11⁻¹, the surface Green function of the
 * semi-infinite lead and the self-energy on the M mouth sites are
 *   g(z) = (z − H0 − H1·F)⁻¹,   Σ(z) = V†·g·V,
 * V[r, p] = H[site r of lead cell 0, mouth site p]. Since F = g·H1† (the matrix form of
 * the mode equation), g⁻¹ = z − H0 − H1 g H1†, and differentiating,
 *   dg/dz − (gH1)·(dg/dz)·(H1†g) = −g²,   dΣ/dz = V†·(dg/dz)·V,
 * a Stein equation solved through the Schur forms of gH1 and H1†g (Bartels & Stewart,
 * Comm. ACM 15 (1972) 820; Golub & Van Loan §7.6.3).
 * Energies in meV (the cell's units).
 */
import { complexSchur, reorderSchur } from './complex-schur';
import { conjugateTranspose, denseLu, denseLuSolve, denseMultiply } from './dense-solve';
import { leadBandEdges, pieceThresholds, type BandEdge } from './numerical-lead-bands';
import { forwardHopping, realModesKept, type LeadCellBlocks } from './numerical-lead-modes';
import { retardedChoice, type LeadPiece, type RetardedChoice } from './numerical-lead-sheet';

/** A lead given by its cell and its coupling to the cavity. */
export interface NumericalLeadSpec {
  cell: LeadCellBlocks;
  /** Number M of cavity sites the lead's first cell touches (the mouth). */
  mouthSize: number;
  /** V, n×M row-major interleaved: V[r, p] = H[site r of lead cell 0, mouth site p]. */
  coupling: Float64Array;
}

/** Open channels at a real energy, flux-normalised (docs/physics-model.md). */
interface LeadChannelsAt {
  energy: number;
  count: number;
  /** v_a = dE/dk of each outgoing mode (meV), ascending k order is not implied. */
  velocity: number[];
  /** λ_a = e^{ik_a}, interleaved. */
  lambda: Float64Array;
  /** Unit-norm mode vectors φ_a on the cell (count × n, interleaved). */
  modes: Float64Array;
  /** W on the mouth, M × count row-major interleaved: Γ = i(Σ − Σ†) = W·W†. */
  columns: Float64Array;
}

export interface NumericalLeadOptions {
  /** k samples for the band edges (default 128). */
  kSamples?: number;
  /**
   * The band edges of this very cell, found before (by another thread's copy of the same
   * lead, see leadEdgesOf): the search is skipped. Plain data, so it crosses threads.
   */
  edges?: readonly BandEdge[];
}

export class NumericalLead {
  readonly cell: LeadCellBlocks;
  readonly mouthSize: number;
  readonly coupling: Float64Array;
  /** Band edges of the cell, sorted by energy. */
  readonly edges: readonly BandEdge[];
  /** Sorted threshold energies: the band edges, merged to 1e-7 of the band scale (pieceThresholds). */
  readonly thresholds: readonly number[];
  /** Pencils solved so far (a cost figure for benches). */
  solves = 0;
  /** True when the cell and its coupling are real (no field): Σ is then complex symmetric. */
  private readonly real: boolean;

  constructor(spec: NumericalLeadSpec, options: NumericalLeadOptions = {}) {
    const n = spec.cell.size;
    if (spec.cell.h0.length < 2 * n * n || spec.cell.h1.length < 2 * n * n)
      throw new RangeError(`NumericalLead: H0 and H1 must hold 2·n² = ${2 * n * n} numbers (n = ${n} cell sites)`);
    if (spec.coupling.length < 2 * n * spec.mouthSize)
      throw new RangeError(`NumericalLead: the coupling must hold 2·n·M = ${2 * n * spec.mouthSize} numbers (n = ${n}, M = ${spec.mouthSize})`);
    this.cell = spec.cell;
    this.mouthSize = spec.mouthSize;
    this.coupling = spec.coupling;
    this.edges = options.edges ? options.edges.map((e) => ({ ...e })) : leadBandEdges(spec.cell, options.kSamples ?? 128);
    this.thresholds = pieceThresholds(this.edges);
    const imaginaryFree = (a: Float64Array) => a.every((x, q) => q % 2 === 0 || x === 0);
    this.real = imaginaryFree(spec.cell.h0) && imaginaryFree(spec.cell.h1) && imaginaryFree(spec.coupling);
  }

  /**
   * Frozen flags of the piece containing the real energy E: flags[i] = E > thresholds[i].
   * Exactly on a threshold E belongs to the piece below it.
   */
  sheetAt(reE: number): boolean[] {
    return this.thresholds.map((t) => reE > t);
  }

  /** The piece (lo, hi) the flags stand for. Throws on flags that are not a prefix of trues. */
  piece(sheet: readonly boolean[]): LeadPiece {
    if (sheet.length !== this.thresholds.length)
      throw new RangeError(`NumericalLead: ${sheet.length} sheet flags, the lead has ${this.thresholds.length} thresholds`);
    const above = sheet.filter(Boolean).length;
    for (let i = 0; i < sheet.length; i++)
      if (sheet[i] !== i < above) throw new RangeError(`NumericalLead: sheet flags must be true below the piece and false above it (flag ${i})`);
    return { lo: above > 0 ? this.thresholds[above - 1] : -Infinity, hi: above < this.thresholds.length ? this.thresholds[above] : Infinity };
  }

  /** The retarded choice at z on the given sheet (default: the piece holding Re z). */
  choice(zRe: number, zIm: number, sheet: readonly boolean[] = this.sheetAt(zRe)): RetardedChoice {
    const c = retardedChoice(this.cell, zRe, zIm, this.piece(sheet));
    this.solves += c.solves;
    return c;
  }

  /**
   * Runs f at a real energy E, or at E a hair (10⁻⁹ of the band scale, up to 10⁻⁶) below it where the
   * modes cannot be chosen at E itself: on a threshold (a band edge, where modes coalesce with
   * zero velocity), at an exact crossing of bands with opposite velocities (the Dirac point of
   * a metallic armchair ribbon, E = 0 of a zigzag one), or where a symmetry makes the transfer
   * matrix's basis exactly singular (E = 0 in an armchair ribbon's gap). Σ there is the limit from below, which
   * changes T and R by far less than their rounding on a grid. Off the real axis f runs as asked.
   */
  private atRealEnergy<T>(zRe: number, zIm: number, sheet: readonly boolean[] | undefined, f: (re: number, sheet?: readonly boolean[]) => T): T {
    if (zIm !== 0) return f(zRe, sheet);
    const scale = Math.max(1, ...this.thresholds.map(Math.abs));
    const unresolved = (e: unknown) => e instanceof Error && /move both ways|singular matrix/.test(e.message);
    // 10⁻⁹·scale below E, or further (×10 up to 10⁻⁶·scale) while the modes there are still too
    // close to tell apart (two bands crossing with velocities ±v separate by only δ/v in k).
    const below = () => {
      const lower = this.thresholds.filter((t) => t < zRe - 1e-12 * scale);
      const lo = lower.length ? lower[lower.length - 1] : -Infinity;
      for (const step of [1e-9, 1e-8, 1e-7, 1e-6]) {
        const re = Math.max(zRe - step * scale, Number.isFinite(lo) ? 0.5 * (lo + zRe) : -Infinity);
        try {
          return f(re, this.sheetAt(re));
        } catch (e) {
          if (!unresolved(e) || step === 1e-6) throw e;
        }
      }
      throw new Error('unreachable');
    };
    if (this.thresholds.some((t) => Math.abs(zRe - t) <= 1e-12 * scale)) return below();
    try {
      return f(zRe, sheet);
    } catch (e) {
      if (unresolved(e)) return below();
      throw e;
    }
  }

  /** Transfer matrix F = Z21·Z11⁻¹ of the chosen modes (n×n interleaved). Cost O(n³). */
  transfer(zRe: number, zIm: number, sheet?: readonly boolean[]): Float64Array {
    const n = this.cell.size;
    const { pencil, select } = this.choice(zRe, zIm, sheet);
    const s = pencil.schur;
    reorderSchur(s, select);
    const m = 2 * n;
    // F·Z11 = Z21  ⇔  Z11ᵀ·Fᵀ = Z21ᵀ
    const z11t = new Float64Array(2 * n * n);
    const z21t = new Float64Array(2 * n * n);
    for (let i = 0; i < n; i++)
      for (let c = 0; c < n; c++) {
        z11t[2 * (c * n + i)] = s.q[2 * (i * m + c)];
        z11t[2 * (c * n + i) + 1] = s.q[2 * (i * m + c) + 1];
        z21t[2 * (c * n + i)] = s.q[2 * ((n + i) * m + c)];
        z21t[2 * (c * n + i) + 1] = s.q[2 * ((n + i) * m + c) + 1];
      }
    const ft = denseLuSolve(denseLu(n, z11t), z21t, n);
    const f = new Float64Array(2 * n * n);
    for (let i = 0; i < n; i++)
      for (let j = 0; j < n; j++) {
        f[2 * (i * n + j)] = ft[2 * (j * n + i)];
        f[2 * (i * n + j) + 1] = ft[2 * (j * n + i) + 1];
      }
    return f;
  }

  /** Surface Green function g = (z − H0 − H1·F)⁻¹ of the semi-infinite lead (n×n). Cost O(n³). */
  surfaceGreen(zRe: number, zIm: number, sheet?: readonly boolean[]): Float64Array {
    return this.atRealEnergy(zRe, zIm, sheet, (re, sh) => this.surfaceGreenAt(re, zIm, sh));
  }

  private surfaceGreenAt(zRe: number, zIm: number, sheet?: readonly boolean[]): Float64Array {
    const n = this.cell.size;
    const f = this.transfer(zRe, zIm, sheet);
    const k = denseMultiply(n, n, n, forwardHopping(this.cell), f);
    for (let e = 0; e < 2 * n * n; e++) k[e] = -this.cell.h0[e] - k[e];
    for (let i = 0; i < n; i++) {
      k[2 * (i * n + i)] += zRe;
      k[2 * (i * n + i) + 1] += zIm;
    }
    return denseLuSolve(denseLu(n, k), identity(n), n);
  }

  /** Σ(z) = V†gV on the mouth (M×M row-major interleaved). Cost O(n³ + n²M). */
  selfEnergy(zRe: number, zIm: number, sheet?: readonly boolean[]): Float64Array {
    return this.symmetricIfReal(this.project(this.surfaceGreen(zRe, zIm, sheet)));
  }

  /** Σ(z) and dΣ/dz on the mouth (each M×M). Cost O(n³). */
  selfEnergyWithDerivative(zRe: number, zIm: number, sheet?: readonly boolean[]): { sigma: Float64Array; derivative: Float64Array } {
    const parts = this.selfEnergyParts(zRe, zIm, sheet);
    return { sigma: parts.sigma, derivative: parts.derivative() };
  }

  /**
   * Σ(z) now and dΣ/dz when asked, from the same g (the same numbers as selfEnergyWithDerivative):
   * a contour node needs Σ only, a Newton step both. Cost O(n³) each.
   */
  selfEnergyParts(zRe: number, zIm: number, sheet?: readonly boolean[]): { sigma: Float64Array; derivative: () => Float64Array } {
    const n = this.cell.size;
    const g = this.surfaceGreen(zRe, zIm, sheet);
    const derivative = () => {
      // H1 of the formulas is H[cell k, cell k+1] = forwardHopping; its adjoint is the cell's own h1.
      const a = denseMultiply(n, n, n, g, forwardHopping(this.cell));
      const b = denseMultiply(n, n, n, this.cell.h1, g);
      const c = denseMultiply(n, n, n, g, g);
      for (let e = 0; e < c.length; e++) c[e] = -c[e];
      return this.symmetricIfReal(this.project(solveStein(n, a, b, c)));
    };
    return { sigma: this.symmetricIfReal(this.project(g)), derivative };
  }

  /**
   * For a real lead (no field) Σ = V†gV is complex symmetric, as the retarded Green's function
   * of a real Hamiltonian is (reciprocity; common practice, no source); the solves leave
   * rounding of about 1e-16 of the block's scale between Σ_pq and Σ_qp, which this averages
   * away, so z − H − Σ is exactly symmetric and the LU takes its symmetric path (sparse-lu.ts).
   */
  private symmetricIfReal(block: Float64Array): Float64Array {
    if (!this.real) return block;
    const m = this.mouthSize;
    for (let p = 0; p < m; p++)
      for (let q = p + 1; q < m; q++) {
        const a = 2 * (p * m + q);
        const b = 2 * (q * m + p);
        const re = 0.5 * (block[a] + block[b]);
        const im = 0.5 * (block[a + 1] + block[b + 1]);
        block[a] = block[b] = re;
        block[a + 1] = block[b + 1] = im;
      }
    return block;
  }

  /** dΣ/dz on the mouth (M×M). */
  selfEnergyDerivative(zRe: number, zIm: number, sheet?: readonly boolean[]): Float64Array {
    return this.selfEnergyWithDerivative(zRe, zIm, sheet).derivative;
  }

  /**
   * The open (outgoing, v > 0) channels at a real energy E inside a piece, with the
   * coupling columns W_a = sqrt(v_a)·λ̄_a·V†·g·(Φ⁻†)_a: Φ holds the n retarded modes
   * (evanescent ones as a basis of their subspace, propagating ones unit-norm), so
   * Γ = i(Σ − Σ†) = Σ_a W_a W_a† (the current of mode a between two cells is v_a for
   * φ_a†φ_a = 1 and the cross terms vanish at a real energy). For the square lattice
   * W_a is the contract's sqrt(2t·sin k_m)·e^{−iθ_p}χ_m(p) up to the sign of χ_m. On a threshold
   * or an exact band crossing the channels are taken a hair below E (atRealEnergy). Cost O(n³).
   */
  channels(energy: number): LeadChannelsAt {
    return { ...this.atRealEnergy(energy, 0, this.sheetAt(energy), (re, sh) => this.channelsInside(re, sh!)), energy };
  }

  private channelsInside(energy: number, sheet: readonly boolean[]): LeadChannelsAt {
    const n = this.cell.size;
    const mm = this.mouthSize;
    const modes = realModesKept(this.cell, energy);
    this.solves++;
    const out = modes.propagating.filter((p) => p.velocity > 0);
    const count = out.length;
    const g = this.surfaceGreen(energy, 0, sheet);
    // Φ = [basis of the evanescent retarded subspace | outgoing modes]
    const evanescent = modes.retarded.map((r, k) => r && !modes.propagating.some((p) => p.index === k));
    const s = modes.pencil.schur;
    const ne = reorderSchur(s, evanescent);
    const phi = new Float64Array(2 * n * n);
    for (let i = 0; i < n; i++) {
      for (let c = 0; c < ne; c++) {
        phi[2 * (i * n + c)] = s.q[2 * (i * 2 * n + c)];
        phi[2 * (i * n + c) + 1] = s.q[2 * (i * 2 * n + c) + 1];
      }
      out.forEach((p, a) => {
        phi[2 * (i * n + ne + a)] = p.vector[2 * i];
        phi[2 * (i * n + ne + a) + 1] = p.vector[2 * i + 1];
      });
    }
    const phiInv = denseLuSolve(denseLu(n, phi), identity(n), n);
    // columns of Φ⁻† for the outgoing modes: conj of rows ne + a of Φ⁻¹
    const dual = new Float64Array(2 * n * count);
    for (let a = 0; a < count; a++)
      for (let i = 0; i < n; i++) {
        dual[2 * (i * count + a)] = phiInv[2 * ((ne + a) * n + i)];
        dual[2 * (i * count + a) + 1] = -phiInv[2 * ((ne + a) * n + i) + 1];
      }
    const vh = conjugateTranspose(n, mm, this.coupling);
    const w = denseMultiply(mm, n, count, vh, denseMultiply(n, n, count, g, dual));
    const lambda = new Float64Array(2 * count);
    const vectors = new Float64Array(2 * n * count);
    out.forEach((p, a) => {
      lambda[2 * a] = p.lambdaRe;
      lambda[2 * a + 1] = p.lambdaIm;
      vectors.set(p.vector, 2 * n * a);
      const amp = Math.sqrt(p.velocity);
      // × sqrt(v)·λ̄
      const cr = amp * p.lambdaRe;
      const ci = -amp * p.lambdaIm;
      for (let r = 0; r < mm; r++) {
        const e = 2 * (r * count + a);
        const xr = w[e];
        const xi = w[e + 1];
        w[e] = xr * cr - xi * ci;
        w[e + 1] = xr * ci + xi * cr;
      }
    });
    return { energy, count, velocity: out.map((p) => p.velocity), lambda, modes: vectors, columns: w };
  }

  private project(g: Float64Array): Float64Array {
    const n = this.cell.size;
    const m = this.mouthSize;
    const gv = denseMultiply(n, n, m, g, this.coupling);
    return denseMultiply(m, n, m, conjugateTranspose(n, m, this.coupling), gv);
  }
}

function identity(n: number): Float64Array {
  const out = new Float64Array(2 * n * n);
  for (let i = 0; i < n; i++) out[2 * (i * n + i)] = 1;
  return out;
}

/**
 * Solves X − A·X·B = C (all n×n) through the Schur forms A = U S Uᴴ, B = W R Wᴴ:
 * Y − S·Y·R = UᴴCW column by column, (1 − R_jj S)·y_j = d_j + S·Σ_{k<j} y_k R_kj, each an
 * upper-triangular solve. Needs 1 − α_i β_j ≠ 0 for the eigenvalues α of A and β of B.
 * Cost O(n³).
 */
export function solveStein(n: number, a: Float64Array, b: Float64Array, c: Float64Array): Float64Array {
  const sa = complexSchur(n, a);
  const sb = complexSchur(n, b);
  const s = sa.t;
  const r = sb.t;
  const d = denseMultiply(n, n, n, denseMultiply(n, n, n, conjugateTranspose(n, n, sa.q), c), sb.q);
  const y = new Float64Array(2 * n * n);
  const rhs = new Float64Array(2 * n);
  const acc = new Float64Array(2 * n);
  for (let j = 0; j < n; j++) {
    // acc = Σ_{k<j} y_k R_kj
    acc.fill(0);
    for (let k = 0; k < j; k++) {
      const rr = r[2 * (k * n + j)];
      const ri = r[2 * (k * n + j) + 1];
      if (rr === 0 && ri === 0) continue;
      for (let i = 0; i < n; i++) {
        const yr = y[2 * (i * n + k)];
        const yi = y[2 * (i * n + k) + 1];
        acc[2 * i] += yr * rr - yi * ri;
        acc[2 * i + 1] += yr * ri + yi * rr;
      }
    }
    for (let i = 0; i < n; i++) {
      let xr = d[2 * (i * n + j)];
      let xi = d[2 * (i * n + j) + 1];
      for (let l = i; l < n; l++) {
        const sr = s[2 * (i * n + l)];
        const si = s[2 * (i * n + l) + 1];
        xr += sr * acc[2 * l] - si * acc[2 * l + 1];
        xi += sr * acc[2 * l + 1] + si * acc[2 * l];
      }
      rhs[2 * i] = xr;
      rhs[2 * i + 1] = xi;
    }
    const rjr = r[2 * (j * n + j)];
    const rji = r[2 * (j * n + j) + 1];
    for (let i = n - 1; i >= 0; i--) {
      // Σ_{l>i} S_il y_lj, times R_jj
      let tr = 0;
      let ti = 0;
      for (let l = i + 1; l < n; l++) {
        const sr = s[2 * (i * n + l)];
        const si = s[2 * (i * n + l) + 1];
        const yr = y[2 * (l * n + j)];
        const yi = y[2 * (l * n + j) + 1];
        tr += sr * yr - si * yi;
        ti += sr * yi + si * yr;
      }
      const numR = rhs[2 * i] + (rjr * tr - rji * ti);
      const numI = rhs[2 * i + 1] + (rjr * ti + rji * tr);
      const sr = s[2 * (i * n + i)];
      const si = s[2 * (i * n + i) + 1];
      const denR = 1 - (rjr * sr - rji * si);
      const denI = -(rjr * si + rji * sr);
      const den = denR * denR + denI * denI;
      y[2 * (i * n + j)] = (numR * denR + numI * denI) / den;
      y[2 * (i * n + j) + 1] = (numI * denR - numR * denI) / den;
    }
  }
  return denseMultiply(n, n, n, denseMultiply(n, n, n, sa.q, y), conjugateTranspose(n, n, sb.q));
}
