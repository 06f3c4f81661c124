/**
 * Bands E_b(k) of a lead cell and its thresholds (band edges), found numerically
 * (docs/physics-model.md, "Numerical leads"). With ψ_j = e^{ikj}φ,
 *   H(k) = H0 + e^{ik}H1 + e^{−ik}H1†,
 * (H1 here the block H[cell k, cell k+1] = forwardHopping(cell)), Hermitian for real k; its sorted eigenvalues are the bands. A threshold is an
 * energy where dE_b/dk = 0: sampled on a k grid over [−π, π), every local extremum of a
 * sorted band is refined by safeguarded Newton on f(k) = dE_b/dk with
 *   f  = φ_b†H′φ_b                                    (Hellmann–Feynman),
 *   f′ = φ_b†H″φ_b + 2·Σ_{c≠b} |φ_c†H′φ_b|²/(E_b − E_c)  (second-order perturbation),
 * H′ = i(e^{ik}H1 − e^{−ik}H1†), H″ = −(e^{ik}H1 + e^{−ik}H1†). A kink where two
 * sorted bands cross with non-zero slopes is not a threshold and is dropped (no velocity
 * on the degenerate subspace vanishes there); a degenerate point where one of them does
 * (an extremum touching crossing bands) is kept.
 */
import { hermitianEigen } from './hermitian-eigen';
import { blochHamiltonian, forwardHopping, type LeadCellBlocks } from './numerical-lead-modes';

/**
 * The k-dependence of one cell: H(k) built from the cached forward block, and the slope,
 * curvature and velocity matrix of bands from an eigen-decomposition at k (all O(n²) per
 * band once the decomposition is known).
 */
class BlochCell {
  readonly n: number;
  private readonly h0: Float64Array;
  private readonly h1f: Float64Array;
  /** H0 and H1 real: H(−k) = conj H(k), so E_b(−k) = E_b(k) (time reversal). */
  readonly real: boolean;
  /** Eigen-decompositions computed so far (a cost figure for benches and tests). */
  solves = 0;

  constructor(cell: LeadCellBlocks) {
    this.n = cell.size;
    this.h0 = cell.h0;
    this.h1f = forwardHopping(cell);
    let real = true;
    for (let e = 1; e < 2 * this.n * this.n && real; e += 2) real = cell.h0[e] === 0 && cell.h1[e] === 0;
    this.real = real;
  }

  hamiltonian(k: number): Float64Array {
    return blochHamiltonian(this.n, this.h0, this.h1f, Math.cos(k), Math.sin(k));
  }

  decompose(k: number): Decomposition {
    this.solves++;
    return { k, ...hermitianEigen(this.n, this.hamiltonian(k)) };
  }

  /** The decomposition at −k from the one at k (real cells only): conjugate vectors, same values. */
  mirror(d: Decomposition): Decomposition {
    const vectors = Float64Array.from(d.vectors);
    for (let e = 1; e < vectors.length; e += 2) vectors[e] = -vectors[e];
    return { k: -d.k, values: d.values, vectors };
  }

  /**
   * x = Φ†·H1·φ_b and y = Φ†·H1†·φ_b (length-n complex vectors), from which
   *   φ_c†H′φ_b = i(e^{ik}x_c − e^{−ik}y_c),  φ_b†H″φ_b = −(e^{ik}x_b + e^{−ik}y_b).
   */
  private couplings(d: Decomposition, b: number): { x: Float64Array; y: Float64Array } {
    const n = this.n;
    const v = d.vectors;
    const h = this.h1f;
    const u = new Float64Array(2 * n);
    const w = new Float64Array(2 * n);
    for (let i = 0; i < n; i++) {
      let ur = 0;
      let ui = 0;
      let wr = 0;
      let wi = 0;
      for (let j = 0; j < n; j++) {
        const pr = v[2 * (j * n + b)];
        const pi = v[2 * (j * n + b) + 1];
        const ar = h[2 * (i * n + j)];
        const ai = h[2 * (i * n + j) + 1];
        ur += ar * pr - ai * pi;
        ui += ar * pi + ai * pr;
        // (H1†)[i,j] = conj H1[j,i]
        const br = h[2 * (j * n + i)];
        const bi = -h[2 * (j * n + i) + 1];
        wr += br * pr - bi * pi;
        wi += br * pi + bi * pr;
      }
      u[2 * i] = ur;
      u[2 * i + 1] = ui;
      w[2 * i] = wr;
      w[2 * i + 1] = wi;
    }
    const x = new Float64Array(2 * n);
    const y = new Float64Array(2 * n);
    for (let c = 0; c < n; c++) {
      let xr = 0;
      let xi = 0;
      let yr = 0;
      let yi = 0;
      for (let i = 0; i < n; i++) {
        const fr = v[2 * (i * n + c)];
        const fi = -v[2 * (i * n + c) + 1];
        xr += fr * u[2 * i] - fi * u[2 * i + 1];
        xi += fr * u[2 * i + 1] + fi * u[2 * i];
        yr += fr * w[2 * i] - fi * w[2 * i + 1];
        yi += fr * w[2 * i + 1] + fi * w[2 * i];
      }
      x[2 * c] = xr;
      x[2 * c + 1] = xi;
      y[2 * c] = yr;
      y[2 * c + 1] = yi;
    }
    return { x, y };
  }

  /** φ_c†H′φ_b for every c (interleaved), from couplings. */
  private velocityColumn(k: number, x: Float64Array, y: Float64Array): Float64Array {
    const n = this.n;
    const cs = Math.cos(k);
    const sn = Math.sin(k);
    const out = new Float64Array(2 * n);
    for (let c = 0; c < n; c++) {
      // p = e^{ik}x_c − e^{−ik}y_c, out = i·p
      const pr = cs * x[2 * c] - sn * x[2 * c + 1] - (cs * y[2 * c] + sn * y[2 * c + 1]);
      const pi = cs * x[2 * c + 1] + sn * x[2 * c] - (cs * y[2 * c + 1] - sn * y[2 * c]);
      out[2 * c] = -pi;
      out[2 * c + 1] = pr;
    }
    return out;
  }

  /** The slope φ_b†H′φ_b of band b. */
  slope(d: Decomposition, b: number): number {
    const { x, y } = this.couplings(d, b);
    const cs = Math.cos(d.k);
    const sn = Math.sin(d.k);
    // Re(i(e^{ik}x_b − e^{−ik}y_b)) = −Im(e^{ik}x_b − e^{−ik}y_b)
    return -(cs * x[2 * b + 1] + sn * x[2 * b] - (cs * y[2 * b + 1] - sn * y[2 * b]));
  }

  /**
   * Slope f = φ_b†H′φ_b, curvature f′ = φ_b†H″φ_b + 2·Σ_{c≠b}|φ_c†H′φ_b|²/(E_b − E_c), the gap
   * to the nearest other band and that band's energy and slope.
   */
  bandAt(d: Decomposition, b: number): BandPoint {
    const n = this.n;
    const { values } = d;
    const { x, y } = this.couplings(d, b);
    const m = this.velocityColumn(d.k, x, y);
    const cs = Math.cos(d.k);
    const sn = Math.sin(d.k);
    const slope = m[2 * b];
    let curvature = -(cs * x[2 * b] - sn * x[2 * b + 1] + (cs * y[2 * b] + sn * y[2 * b + 1]));
    let gap = Infinity;
    let nearest = b;
    for (let c = 0; c < n; c++) {
      if (c === b) continue;
      const de = values[b] - values[c];
      if (Math.abs(de) < gap) nearest = c;
      gap = Math.min(gap, Math.abs(de));
      if (Math.abs(de) < 1e-12 * (1 + Math.abs(values[b]))) continue;
      curvature += (2 * (m[2 * c] * m[2 * c] + m[2 * c + 1] * m[2 * c + 1])) / de;
    }
    const nearSlope = nearest === b ? slope : this.slope(d, nearest);
    const coupling = Math.hypot(m[2 * nearest], m[2 * nearest + 1]);
    return { d, energy: values[b], slope, curvature, gap, near: { energy: values[nearest], slope: nearSlope, coupling } };
  }

  /** The smallest |velocity| among the bands within tol of energy (the velocity matrix on that degenerate subspace), and those bands. */
  degenerateVelocity(d: Decomposition, energy: number, tol: number): { velocity: number; bands: number[] } {
    const n = this.n;
    const bands: number[] = [];
    for (let c = 0; c < n; c++) if (Math.abs(d.values[c] - energy) <= tol) bands.push(c);
    const q = bands.length;
    const v = new Float64Array(2 * q * q);
    bands.forEach((b, col) => {
      const { x, y } = this.couplings(d, b);
      const m = this.velocityColumn(d.k, x, y);
      bands.forEach((a, row) => {
        v[2 * (row * q + col)] = m[2 * a];
        v[2 * (row * q + col) + 1] = m[2 * a + 1];
      });
    });
    const vals = hermitianEigen(q, v).values;
    return { velocity: Math.min(...Array.from(vals, Math.abs)), bands };
  }
}

/** An eigen-decomposition of H(k): values ascending, vectors as columns (hermitian-eigen.ts). */
interface Decomposition {
  k: number;
  values: Float64Array;
  vectors: Float64Array;
}

interface BandPoint {
  d: Decomposition;
  energy: number;
  slope: number;
  curvature: number;
  gap: number;
  /** The nearest other band: its energy, slope and |φ_near†H′φ_b|. */
  near: { energy: number; slope: number; coupling: number };
}

/**
 * Whether the point sits on two bands that cross, or avoid each other by less than tol: in
 * the two-band picture the coupling φ_near†H′φ_b of the two bands at a gap g away from an
 * avoided crossing of half-width Δ is about |Δv|·Δ/g (Δv the difference of their slopes), so
 * Δ ≈ coupling·g/|Δv|. Rounding gives a coupling of about ε‖H‖·|Δv|/g, i.e. Δ ≈ ε‖H‖.
 */
function narrow(p: BandPoint, tol: number): boolean {
  return p.near.coupling * p.gap <= tol * Math.abs(p.slope - p.near.slope);
}

/** Sorted band energies at k (meV). Cost O(n³). */
export function leadBands(cell: LeadCellBlocks, k: number): Float64Array {
  return hermitianEigen(cell.size, new BlochCell(cell).hamiltonian(k)).values;
}

/** One band edge: band index (sorted), its k and energy. */
export interface BandEdge {
  band: number;
  k: number;
  energy: number;
}

/** A degenerate point met while refining: its k and the bands within 1e-9·scale of it there. */
interface Meeting {
  k: number;
  bands: number[];
  /** The band whose refinement met it. */
  from: number;
}

/**
 * Band edges of a cell: every local extremum of every sorted band over k ∈ [−π, π),
 * sampled at `samples` points and refined by safeguarded Newton on dE/dk = 0 to
 * |dE/dk| ≤ 1e-12·scale (scale = the largest |band energy|, at least 1). Edges at the
 * same energy (to 1e-12·scale) are merged. With `stats`, the number of eigen-decompositions
 * is added to stats.solves. Cost O(samples·n³) for the samples, O(n³) per Newton step.
 *
 * Savings over refining every sampled extremum from scratch (the thresholds are the same):
 * the decompositions at the samples are reused for the first Newton step and the bracket's
 * sign; for a real cell (no field) E_b(−k) = E_b(k), so only k ∈ [0, π] and −π are sampled
 * and refined; a kink where sorted bands b and b+1 cross is refined once, from band b, and
 * band b+1's sampled extremum there is skipped; a tangent jump towards a crossing that at
 * least halves the gap is kept as the next step when the two bands cross or avoid each other
 * by less than 1e-10·scale (narrow), where Newton on dE/dk would only bisect.
 */
export function leadBandEdges(cell: LeadCellBlocks, samples = 128, stats?: { solves: number }): BandEdge[] {
  const n = cell.size;
  const bc = new BlochCell(cell);
  const ks = Array.from({ length: samples }, (_, i) => -Math.PI + (2 * Math.PI * i) / samples);
  const symmetric = bc.real && samples % 2 === 0;
  // index of −k_i on the grid (for even samples: samples − i, and 0 ↔ 0 at k = −π ≡ π)
  const mirrorOf = (i: number) => (samples - i) % samples;
  const computed = (i: number) => !symmetric || i === 0 || i >= samples / 2;
  // The samples' decompositions are kept for the refinement unless they would take more than 32 MB.
  const keep = samples * 2 * n * n <= 1 << 22;
  const decs: (Decomposition | undefined)[] = new Array(samples);
  const bands: Float64Array[] = new Array(samples);
  for (let i = 0; i < samples; i++)
    if (computed(i)) {
      const d = bc.decompose(ks[i]);
      bands[i] = d.values;
      if (keep) decs[i] = d;
    }
  for (let i = 0; i < samples; i++) if (!computed(i)) bands[i] = bands[mirrorOf(i)];
  const sample = (i: number): Decomposition => {
    const j = ((i % samples) + samples) % samples;
    const d = decs[j];
    if (d) return d;
    if (computed(j)) return bc.decompose(ks[j]);
    const m = bc.mirror(decs[mirrorOf(j)] ?? bc.decompose(ks[mirrorOf(j)]));
    if (keep) decs[j] = m;
    return m;
  };
  let scale = 1;
  for (const b of bands) for (const e of b) scale = Math.max(scale, Math.abs(e));
  const tight = 1e-9 * scale;
  const edges: BandEdge[] = [];
  const meetings: Meeting[] = [];
  const h = (2 * Math.PI) / samples;
  for (let b = 0; b < n; b++) {
    for (let i = 0; i < samples; i++) {
      if (!computed(i)) continue;
      const e0 = bands[(i - 1 + samples) % samples][b];
      const e1 = bands[i][b];
      const e2 = bands[(i + 1) % samples][b];
      const isMin = e1 <= e0 && e1 < e2;
      const isMax = e1 >= e0 && e1 > e2;
      if (!isMin && !isMax) continue;
      // A flat stretch (a Landau level's plateau) holds many rounding-level extrema: refine one.
      if (edges.some((e) => e.band === b && Math.abs(e.energy - e1) <= 1e-10 * scale)) continue;
      // A crossing of this band, met inside this bracket while refining the band it crosses.
      if (meetings.some((m) => m.from !== b && m.bands.includes(b) && Math.abs(wrap(m.k - ks[i])) < h)) continue;
      let lo = ks[i] - h;
      let hi = ks[i] + h;
      // f(lo) has the sign opposite to f(hi) across an extremum: bracket for bisection.
      const fLo = bc.slope(sample(i - 1), b);
      let k = ks[i];
      let s = bc.bandAt(sample(i), b);
      let found: BandEdge | undefined;
      for (let it = 0; it < 60; it++) {
        // A sorted band's kink where two bands cross (slopes of both signs, never zero) is
        // approached by bisection only linearly in the gap: jump to where the two nearest bands'
        // tangents meet, and go on from there while the gap at least halves (Newton on the
        // difference of the two bands, quadratic at an exact crossing).
        let jumped = false;
        if (s.gap > tight && s.near.slope !== s.slope) {
          const kc = k + (s.near.energy - s.energy) / (s.slope - s.near.slope);
          if (kc > lo && kc < hi && kc !== k) {
            const c = bc.bandAt(bc.decompose(kc), b);
            if (c.gap <= tight || (c.gap <= 0.5 * s.gap && narrow(s, 1e-10 * scale) && narrow(c, 1e-10 * scale))) {
              k = kc;
              s = c;
              jumped = c.gap > tight;
            }
          }
        }
        if (s.gap <= tight) {
          // (Nearly) degenerate: an edge when one of the velocities on the degenerate subspace
          // vanishes (a band extremum touching other bands); a plain crossing has none.
          const dv = bc.degenerateVelocity(s.d, s.energy, tight);
          if (dv.velocity <= 1e-7 * scale) found = { band: b, k: wrap(k), energy: s.energy };
          meetings.push({ k: wrap(k), bands: dv.bands, from: b });
          break;
        }
        if (Math.abs(s.slope) <= 1e-12 * scale) {
          found = { band: b, k: wrap(k), energy: s.energy };
          break;
        }
        if (Math.sign(s.slope) === Math.sign(fLo)) lo = k;
        else hi = k;
        if (jumped) continue;
        let next = k - s.slope / s.curvature;
        if (!(next > lo && next < hi) || !Number.isFinite(next)) next = 0.5 * (lo + hi);
        if (hi - lo < 1e-15) break;
        k = next;
        s = bc.bandAt(bc.decompose(k), b);
      }
      if (found) edges.push(found);
    }
  }
  if (stats) stats.solves += bc.solves;
  edges.sort((x, y) => x.energy - y.energy);
  const merged: BandEdge[] = [];
  for (const e of edges) if (!merged.length || e.energy - merged[merged.length - 1].energy > 1e-12 * scale) merged.push(e);
  return merged;
}

function wrap(k: number): number {
  let x = k;
  while (x >= Math.PI) x -= 2 * Math.PI;
  while (x < -Math.PI) x += 2 * Math.PI;
  return x;
}
