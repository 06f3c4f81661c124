/**
 * Modes of a lead of any cross-section (docs/physics-model.md, "Numerical leads").
 *
 * A lead is the semi-infinite repetition of a unit cell of n sites: cells j = 0, 1, 2, …
 * counted away from the cavity, H0 the Hamiltonian inside a cell and, in the formulas of
 * this module, H1 = H_{j,j+1} the block with rows in cell j and columns in cell j+1: the
 * adjoint of the cell's own h1 = H[cell j+1, cell j] (LeadCellBlocks, forwardHopping).
 * A Bloch solution ψ_j = λ^j φ
 * at energy z solves the quadratic eigenproblem
 *   (H0 − z + λ·H1 + λ⁻¹·H1†) φ = 0,
 * linearised with x = (φ, λφ) as the 2n×2n pencil A x = λ B x,
 *   A = [[0, 1], [−H1†, z − H0]],  B = [[1, 0], [0, H1]].
 * H1 may be singular (honeycomb ribbon cells): then λ = 0 (H1†φ = 0) and λ = ∞ are
 * eigenvalues. The pencil is turned into a standard eigenproblem by a shift-invert
 * (Möbius) map with a shift σ on the unit circle,
 *   C = (A − σB)⁻¹B,  μ = 1/(λ − σ),  λ = σ + 1/μ,
 * which sends λ = ∞ to μ = 0 and the unit circle |λ| = 1 to the line Re(σμ) = −½
 * (|λ| < 1 ⇔ Re(σμ) < −½), so "inside the unit circle" is read off μ without forming
 * λ. The complex Schur form of C (complex-schur.ts; Golub & Van Loan §7.4–7.6) then
 * gives the invariant subspace of any chosen set of modes as the leading columns of
 * its reordered Schur vectors, with no eigenvectors (robust at λ = 0 and for Jordan
 * blocks). This is the reduction to a standard eigenproblem of Golub & Van Loan §7.7.9
 * (a regular pencil A − λB with A − σB invertible), chosen over QZ for brevity; σ is
 * picked from a fixed list of phases so that A − σB is well conditioned (pivot ratio).
 */
import { complexSchur, schurEigenvalues, type ComplexSchur } from './complex-schur';
import { denseLu, denseLuSolve } from './dense-solve';
import { hermitianEigen } from './hermitian-eigen';

/**
 * The blocks of a lead cell: n sites, H0 = H[cell k, cell k] (n×n Hermitian) and
 * H1 = H[cell k+1, cell k] (n×n: rows in the cell farther from the cavity), row-major
 * interleaved. The same convention as the lattice's lead cells (lead-cell.ts), which
 * satisfy this interface.
 */
export interface LeadCellBlocks {
  size: number;
  h0: Float64Array;
  h1: Float64Array;
}

const forward = new WeakMap<Float64Array, Float64Array>();

/**
 * H0 + λ·H1 + λ*·H1† for a unit λ = c + i·s (e^{ik}: the cell's Bloch Hamiltonian at k), with H1
 * the forward hopping (forwardHopping); complex n×n, interleaved, row-major.
 */
export function blochHamiltonian(n: number, h0: Float64Array, h1: Float64Array, c: number, s: number): Float64Array {
  const out = new Float64Array(2 * n * n);
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      const e = 2 * (i * n + j);
      const ar = h1[e];
      const ai = h1[e + 1];
      // (H1†)[i,j] = conj(H1[j,i])
      const d = 2 * (j * n + i);
      const br = h1[d];
      const bi = -h1[d + 1];
      out[e] = h0[e] + (c * ar - s * ai) + (c * br + s * bi);
      out[e + 1] = h0[e + 1] + (c * ai + s * ar) + (c * bi - s * br);
    }
  return out;
}

/**
 * H[cell k, cell k+1] = H1† (rows in the cell nearer the cavity): the block the
 * formulas of this module call H1 (the mode equation (H0 − z + λ·H1† + λ⁻¹·H1)φ = 0 in
 * the cell's own H1). Cached per H1 array. Cost O(n²) once.
 */
export function forwardHopping(cell: LeadCellBlocks): Float64Array {
  let f = forward.get(cell.h1);
  if (!f) {
    const n = cell.size;
    f = new Float64Array(2 * n * n);
    for (let i = 0; i < n; i++)
      for (let j = 0; j < n; j++) {
        f[2 * (i * n + j)] = cell.h1[2 * (j * n + i)];
        f[2 * (i * n + j) + 1] = -cell.h1[2 * (j * n + i) + 1];
      }
    forward.set(cell.h1, f);
  }
  return f;
}

/** The shift-inverted pencil at z and its Schur form; lambda/modulus per Schur diagonal entry. */
export interface LeadPencil {
  zRe: number;
  zIm: number;
  sigmaRe: number;
  sigmaIm: number;
  schur: ComplexSchur;
  /** λ of each diagonal entry, interleaved (NaN, NaN for λ = ∞). */
  lambda: Float64Array;
  /** |λ| of each diagonal entry (Infinity for λ = ∞). */
  modulus: Float64Array;
  /** True when |λ| < 1 by the exact test Re(σμ) < −½. */
  inside: boolean[];
}

// Shift phases (radians), away from λ = ±1, ±i where band edges of symmetric leads sit.
const SHIFT_PHASES = [0.9, 2.3, 4.1, 5.6, 1.6, 3.3, 0.3];

/**
 * Builds the 2n×2n pencil at z, shift-inverts it and takes its Schur form.
 * Cost O(n³) (about 200n³ real flops).
 */
export function leadPencil(cell: LeadCellBlocks, zRe: number, zIm: number): LeadPencil {
  const n = cell.size;
  const h1 = forwardHopping(cell);
  const m = 2 * n;
  let best: { lu: ReturnType<typeof denseLu>; sr: number; si: number } | undefined;
  for (const phase of SHIFT_PHASES) {
    const sr = Math.cos(phase);
    const si = Math.sin(phase);
    const a = new Float64Array(2 * m * m);
    for (let i = 0; i < n; i++) {
      a[2 * (i * m + i)] = -sr;
      a[2 * (i * m + i) + 1] = -si;
      a[2 * (i * m + n + i)] = 1;
    }
    for (let i = 0; i < n; i++)
      for (let j = 0; j < n; j++) {
        // row n+i: [−H1†, z − H0 − σH1]
        a[2 * ((n + i) * m + j)] = -h1[2 * (j * n + i)];
        a[2 * ((n + i) * m + j) + 1] = h1[2 * (j * n + i) + 1];
        const hr = h1[2 * (i * n + j)];
        const hi = h1[2 * (i * n + j) + 1];
        a[2 * ((n + i) * m + n + j)] = -cell.h0[2 * (i * n + j)] - (sr * hr - si * hi);
        a[2 * ((n + i) * m + n + j) + 1] = -cell.h0[2 * (i * n + j) + 1] - (sr * hi + si * hr);
      }
    for (let i = 0; i < n; i++) {
      a[2 * ((n + i) * m + n + i)] += zRe;
      a[2 * ((n + i) * m + n + i) + 1] += zIm;
    }
    const lu = denseLu(m, a);
    if (!best || lu.pivotRatio > best.lu.pivotRatio) best = { lu, sr, si };
    if (lu.pivotRatio > 1e-3) break;
  }
  const { lu, sr, si } = best!;
  const b = new Float64Array(2 * m * m);
  for (let i = 0; i < n; i++) {
    b[2 * (i * m + i)] = 1;
    for (let j = 0; j < n; j++) {
      b[2 * ((n + i) * m + n + j)] = h1[2 * (i * n + j)];
      b[2 * ((n + i) * m + n + j) + 1] = h1[2 * (i * n + j) + 1];
    }
  }
  const c = denseLuSolve(lu, b, m);
  const schur = complexSchur(m, c);
  const mu = schurEigenvalues(schur);
  let cnorm = 0;
  for (let e = 0; e < c.length; e++) cnorm = Math.max(cnorm, Math.abs(c[e]));
  const lambda = new Float64Array(2 * m);
  const modulus = new Float64Array(m);
  const inside: boolean[] = [];
  for (let k = 0; k < m; k++) {
    const ur = mu[2 * k];
    const ui = mu[2 * k + 1];
    inside.push(sr * ur - si * ui < -0.5);
    const d = ur * ur + ui * ui;
    if (Math.sqrt(d) <= 1e-14 * cnorm) {
      lambda[2 * k] = NaN;
      lambda[2 * k + 1] = NaN;
      modulus[k] = Infinity;
      continue;
    }
    lambda[2 * k] = sr + ur / d;
    lambda[2 * k + 1] = si - ui / d;
    modulus[k] = Math.hypot(lambda[2 * k], lambda[2 * k + 1]);
  }
  return { zRe, zIm, sigmaRe: sr, sigmaIm: si, schur, lambda, modulus, inside };
}

/** A propagating mode at a real energy: λ = e^{ik}, unit-norm φ (φ†φ = 1), v = dE/dk (meV). */
interface PropagatingMode {
  lambdaRe: number;
  lambdaIm: number;
  velocity: number;
  /** φ over the n cell sites, interleaved; for a degenerate λ, the basis that diagonalises the velocity. */
  vector: Float64Array;
  /** Diagonal entry of the pencil's Schur form this mode stands for. */
  index: number;
}

/** Modes at a real energy E: the propagating ones with their velocities, on a pencil at E. */
interface RealModes {
  energy: number;
  pencil: LeadPencil;
  propagating: PropagatingMode[];
  /** Retarded choice per Schur diagonal entry: |λ| < 1 off the circle, or on it with v > 0. */
  retarded: boolean[];
}

/** |λ| within this of 1 counts as a propagating mode at a real energy. */
const UNIT_CIRCLE_TOLERANCE = 1e-7;

/**
 * Classifies the modes at a real energy E (not on a threshold): propagating modes
 * (||λ| − 1| < 1e-7) get their φ as the null vectors of the Hermitian M(λ) =
 * H0 − E + λH1 + λ̄H1† and their velocity v = dE/dk = φ†(iλH1 − iλ̄H1†)φ (Hellmann–
 * Feynman); modes with the same λ are rotated to diagonalise that velocity matrix.
 * Retarded: v > 0 (moving away from the cavity) and |λ| < 1. Throws when a degenerate
 * λ holds both signs of velocity (the choice would split a Schur entry) or when the
 * count is not n. Cost O(n³) per distinct propagating λ.
 */
export function realModes(cell: LeadCellBlocks, energy: number, pencil = leadPencil(cell, energy, 0)): RealModes {
  const n = cell.size;
  const h1 = forwardHopping(cell);
  const m = 2 * n;
  const onCircle: number[] = [];
  for (let k = 0; k < m; k++) if (Math.abs(pencil.modulus[k] - 1) < UNIT_CIRCLE_TOLERANCE) onCircle.push(k);
  const lam = pencil.lambda;
  const clusters: number[][] = [];
  for (const k of onCircle) {
    const c = clusters.find((cl) => Math.hypot(lam[2 * cl[0]] - lam[2 * k], lam[2 * cl[0] + 1] - lam[2 * k + 1]) < 1e-7);
    if (c) c.push(k);
    else clusters.push([k]);
  }
  const propagating: PropagatingMode[] = [];
  const retarded = pencil.inside.map((x, k) => x && !onCircle.includes(k));
  for (const cl of clusters) {
    let lr = 0;
    let li = 0;
    for (const k of cl) {
      lr += lam[2 * k];
      li += lam[2 * k + 1];
    }
    const norm = Math.hypot(lr, li);
    lr /= norm;
    li /= norm;
    const mm = blochHamiltonian(n, cell.h0, h1, lr, li);
    for (let i = 0; i < n; i++) mm[2 * (i * n + i)] -= energy;
    const eig = hermitianEigen(n, mm);
    const cols = Array.from({ length: n }, (_, k) => k)
      .sort((x, y) => Math.abs(eig.values[x]) - Math.abs(eig.values[y]))
      .slice(0, cl.length);
    const d = cl.length;
    const phis = cols.map((col) => {
      const v = new Float64Array(2 * n);
      for (let i = 0; i < n; i++) {
        v[2 * i] = eig.vectors[2 * (i * n + col)];
        v[2 * i + 1] = eig.vectors[2 * (i * n + col) + 1];
      }
      return v;
    });
    // velocity matrix V_ab = φ_a†(iλH1 − iλ̄H1†)φ_b = 2·Re-Hermitian part of (iλ φ_a†H1φ_b)
    const vel = new Float64Array(2 * d * d);
    const h1phi = phis.map((p) => multiplyVector(n, h1, p));
    for (let a = 0; a < d; a++)
      for (let b = 0; b < d; b++) {
        // X_ab = φ_a†H1φ_b, Y_ab = φ_a†H1†φ_b = conj(X_ba)
        const [xr, xi] = dot(phis[a], h1phi[b]);
        const [yr0, yi0] = dot(phis[b], h1phi[a]);
        const yr = yr0;
        const yi = -yi0;
        // iλX − iλ̄Y
        const ax = lr * xr - li * xi;
        const bx = lr * xi + li * xr;
        const ay = lr * yr + li * yi;
        const by = lr * yi - li * yr;
        vel[2 * (a * d + b)] = -bx + by;
        vel[2 * (a * d + b) + 1] = ax - ay;
      }
    const ve = hermitianEigen(d, vel);
    const signs = new Set<number>();
    for (let q = 0; q < d; q++) {
      const vector = new Float64Array(2 * n);
      for (let a = 0; a < d; a++) {
        const cr = ve.vectors[2 * (a * d + q)];
        const ci = ve.vectors[2 * (a * d + q) + 1];
        for (let i = 0; i < n; i++) {
          vector[2 * i] += cr * phis[a][2 * i] - ci * phis[a][2 * i + 1];
          vector[2 * i + 1] += cr * phis[a][2 * i + 1] + ci * phis[a][2 * i];
        }
      }
      fixPhase(vector);
      const velocity = ve.values[q];
      signs.add(Math.sign(velocity));
      propagating.push({ lambdaRe: lr, lambdaIm: li, velocity, vector, index: cl[q] });
      retarded[cl[q]] = velocity > 0;
    }
    if (signs.size > 1)
      throw new Error(`realModes: modes with the same λ move both ways at E = ${energy} (a band crossing with opposite velocities); move the energy slightly`);
  }
  const count = retarded.filter(Boolean).length;
  if (count !== n) throw new Error(`realModes: ${count} retarded modes at E = ${energy}, expected ${n} (energy too close to a threshold?)`);
  return { energy, pencil, propagating, retarded };
}

/** Real energies whose modes are kept per cell (a transmission energy asks for them up to five times). */
const REAL_MODES_CACHE_SIZE = 4;
const realModesCache = new WeakMap<LeadCellBlocks, Map<number, RealModes>>();

/**
 * realModes(cell, energy), kept for the last few energies of each cell: Σ, the open channels
 * and their coupling columns at one energy all start from the same modes. Each call gets its
 * own copy (callers reorder the Schur form in place), so the numbers are those of a fresh
 * solve. Failures are not kept. Cost O(n³) when new, O(n²) when kept.
 */
export function realModesKept(cell: LeadCellBlocks, energy: number): RealModes {
  let cache = realModesCache.get(cell);
  if (!cache) {
    cache = new Map();
    realModesCache.set(cell, cache);
  }
  let kept = cache.get(energy);
  if (!kept) {
    kept = realModes(cell, energy);
    if (cache.size >= REAL_MODES_CACHE_SIZE) cache.delete(cache.keys().next().value!);
    cache.set(energy, kept);
  }
  const p = kept.pencil;
  return {
    energy: kept.energy,
    pencil: {
      ...p,
      schur: { n: p.schur.n, t: p.schur.t.slice(), q: p.schur.q.slice() },
      lambda: p.lambda.slice(),
      modulus: p.modulus.slice(),
      inside: p.inside.slice(),
    },
    propagating: kept.propagating.map((m) => ({ ...m, vector: m.vector.slice() })),
    retarded: kept.retarded.slice(),
  };
}

/** y = A·x for an n×n A and an n-vector x (interleaved). */
function multiplyVector(n: number, a: Float64Array, x: Float64Array): Float64Array {
  const y = new Float64Array(2 * n);
  for (let i = 0; i < n; i++) {
    let re = 0;
    let im = 0;
    for (let j = 0; j < n; j++) {
      const ar = a[2 * (i * n + j)];
      const ai = a[2 * (i * n + j) + 1];
      re += ar * x[2 * j] - ai * x[2 * j + 1];
      im += ar * x[2 * j + 1] + ai * x[2 * j];
    }
    y[2 * i] = re;
    y[2 * i + 1] = im;
  }
  return y;
}

/** x†y (interleaved vectors of the same length). */
function dot(x: Float64Array, y: Float64Array): [number, number] {
  let re = 0;
  let im = 0;
  for (let i = 0; i < x.length; i += 2) {
    re += x[i] * y[i] + x[i + 1] * y[i + 1];
    im += x[i] * y[i + 1] - x[i + 1] * y[i];
  }
  return [re, im];
}

/** Rotates x so that its first component of the largest modulus (within 1e-9 relative) is real and positive. */
function fixPhase(x: Float64Array): void {
  let big = 0;
  for (let i = 0; i < x.length; i += 2) big = Math.max(big, Math.hypot(x[i], x[i + 1]));
  for (let i = 0; i < x.length; i += 2) {
    const a = Math.hypot(x[i], x[i + 1]);
    if (a >= big * (1 - 1e-9)) {
      const cr = x[i] / a;
      const ci = -x[i + 1] / a;
      for (let k = 0; k < x.length; k += 2) {
        const re = x[k] * cr - x[k + 1] * ci;
        x[k + 1] = x[k] * ci + x[k + 1] * cr;
        x[k] = re;
      }
      return;
    }
  }
}
