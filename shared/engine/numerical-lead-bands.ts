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
 * (an extremum touching crossing bands) is kept. Two bands avoiding each other by a smallest
 * gap 2|c| > AVOIDED·scale (the 2×2 problem on their subspace, degenerateVelocity) are smooth
 * there: the maximum of the lower and the minimum of the upper are edges, however narrow.
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

  /** The slopes φ_b†H′φ_b of all bands, H′ = i(e^{ik}H1 − e^{−ik}H1†). Cost O(n³). */
  slopes(d: Decomposition): Float64Array {
    const n = this.n;
    const h = this.h1f;
    const cs = Math.cos(d.k);
    const sn = Math.sin(d.k);
    const hp = new Float64Array(2 * n * n);
    for (let i = 0; i < n; i++)
      for (let j = 0; j < n; j++) {
        const ar = h[2 * (i * n + j)];
        const ai = h[2 * (i * n + j) + 1];
        const br = h[2 * (j * n + i)];
        const bi = -h[2 * (j * n + i) + 1];
        // p = e^{ik}H1[i,j] − e^{−ik}(H1†)[i,j]; H′ = i·p
        const pr = cs * ar - sn * ai - (cs * br + sn * bi);
        const pi = cs * ai + sn * ar - (cs * bi - sn * br);
        hp[2 * (i * n + j)] = -pi;
        hp[2 * (i * n + j) + 1] = pr;
      }
    const v = d.vectors;
    const out = new Float64Array(n);
    for (let b = 0; b < n; b++) {
      let acc = 0;
      for (let i = 0; i < n; i++) {
        let wr = 0;
        let wi = 0;
        for (let j = 0; j < n; j++) {
          const xr = hp[2 * (i * n + j)];
          const xi = hp[2 * (i * n + j) + 1];
          const pr = v[2 * (j * n + b)];
          const pi = v[2 * (j * n + b) + 1];
          wr += xr * pr - xi * pi;
          wi += xr * pi + xi * pr;
        }
        // Re(conj φ_i · w_i)
        acc += v[2 * (i * n + b)] * wr + v[2 * (i * n + b) + 1] * wi;
      }
      out[b] = acc;
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
  degenerateVelocity(d: Decomposition, energy: number, tol: number): { velocity: number; bands: number[]; halfGap: number } {
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
    // Two bands: the 2×2 problem H ≈ diag(E_p, E_q) + δk·V on their subspace. In V's eigenbasis
    // (the diabatic states, straight lines in k) the off-diagonal of H is c, with
    // |c| = |E_q − E_p|·|V_pq| / √((V_pp − V_qq)² + 4|V_pq|²), and the smallest gap over k is 2|c|.
    let halfGap = 0;
    if (q === 2) {
      const g = Math.abs(d.values[bands[1]] - d.values[bands[0]]);
      const w = Math.hypot(v[2], v[3]);
      const den = Math.hypot(v[0] - v[6], 2 * w);
      halfGap = den > 0 ? (g * w) / den : 0.5 * g;
    }
    return { velocity: Math.min(...Array.from(vals, Math.abs)), bands, halfGap };
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
/**
 * Piece boundaries of a lead from its band edges: the sorted energies, those within
 * PIECE_MERGE·scale above the previous boundary merged into it (scale = the largest |energy|,
 * at least 1). Edges that close (the two sides of an avoided crossing narrower than that) bound
 * a piece in which the propagating modes sit within 1e-7 of the unit circle, where
 * numerical-lead-modes.ts cannot tell them from evanescent ones; the piece above is used there.
 */
export function pieceThresholds(edges: readonly BandEdge[]): number[] {
  const sorted = edges.map((e) => e.energy).sort((x, y) => x - y);
  const scale = Math.max(1, ...sorted.map(Math.abs));
  const out: number[] = [];
  for (const e of sorted) if (!out.length || e - out[out.length - 1] > PIECE_MERGE * scale) out.push(e);
  return out;
}

/** Band edges closer than this (of the band scale) are one piece boundary. */
const PIECE_MERGE = 1e-7;

/** Smallest gap (of the band scale) of an avoided crossing: two bands closer than that cross. */
const AVOIDED = 1e-11;

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
 *
 * Then every sample interval where a band's slope changes sign with no edge or crossing of that
 * band found inside is refined as well, after halving (down to 1/64 of the step) the intervals
 * whose Hermite interpolant hides a pair of extrema (docs/physics-model.md, "Thresholds").
 * The result holds every edge; pieceThresholds merges those too close to bound a piece.
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
  /**
   * Band b's edge in the bracket [lo, hi] of a sign change of its slope (fLo the sign at lo),
   * from k with the decomposition d; a crossing met on the way is noted in meetings.
   */
  const refine = (b: number, lo0: number, hi0: number, k0: number, d0: Decomposition, fLo: number, fHi: number): BandEdge | undefined => {
    // A true bracket: the slope has opposite signs at its ends, so a root lies inside it.
    const bracketed = fLo * fHi < 0;
    let lo = lo0;
    let hi = hi0;
    let k = k0;
    let s = bc.bandAt(d0, b);
    let found: BandEdge | undefined;
    let modelled = false;
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
      let avoided = false;
      if (s.gap <= tight) {
        // (Nearly) degenerate. Two bands whose 2×2 problem has a smallest gap 2|c| above
        // AVOIDED·scale avoid each other: the sorted bands are smooth there, and an extremum of
        // band b (a maximum of the lower, a minimum of the upper) is refined as any other.
        // Otherwise it is a crossing: an edge when one of the velocities on the degenerate
        // subspace vanishes (a band extremum touching other bands); a plain crossing has none.
        const dv = bc.degenerateVelocity(s.d, s.energy, tight);
        avoided = 2 * dv.halfGap > AVOIDED * scale;
        if (!avoided) {
          if (dv.velocity <= 1e-7 * scale) found = { band: b, k: wrap(k), energy: s.energy };
          meetings.push({ k: wrap(k), bands: dv.bands, from: b });
          break;
        }
      }
      // Converged when the slope vanishes to 1e-12·scale, or when the energy is known to
      // 1e-13·scale (|slope| times the bracket): near a narrow avoided crossing the curvature is
      // about v²/|c|, and the slope cannot be resolved below that times the k rounding.
      if (Math.abs(s.slope) <= 1e-12 * scale || (bracketed && Math.abs(s.slope) * (hi - lo) <= 1e-13 * scale)) {
        found = { band: b, k: wrap(k), energy: s.energy };
        break;
      }
      if (Math.sign(s.slope) === Math.sign(fLo)) lo = k;
      else hi = k;
      if (jumped) continue;
      let next = k - s.slope / s.curvature;
      // Newton leaving the bracket: the two-band model's extremum when there is one (not twice
      // in a row, so that a poor model cannot stall the search), else bisection.
      if (!(next > lo && next < hi) || !Number.isFinite(next)) {
        const step: number | undefined = modelled ? undefined : twoBandStep(s, lo - k, hi - k, AVOIDED * scale);
        modelled = step !== undefined;
        next = step === undefined ? 0.5 * (lo + hi) : k + step;
      } else modelled = false;
      if (hi - lo <= 4 * Number.EPSILON * Math.max(1, Math.abs(k))) {
        // The bracket of a sign change of the slope has shrunk to rounding: an extremum of a
        // smooth band (apart from its neighbours by more than a crossing) lies inside it.
        if (bracketed && (s.gap > tight || avoided)) found = { band: b, k: wrap(k), energy: s.energy };
        break;
      }
      k = next;
      s = bc.bandAt(bc.decompose(k), b);
    }
    return found;
  };
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
      // f(lo) has the sign opposite to f(hi) across an extremum: bracket for bisection.
      const found = refine(b, ks[i] - h, ks[i] + h, ks[i], sample(i), bc.slope(sample(i - 1), b), bc.slope(sample(i + 1), b));
      if (found) edges.push(found);
    }
  }
  // Second pass: a band's slope changes sign between two samples without a sampled energy
  // extremum there (two extrema close together, or an avoided crossing between samples). The
  // slopes of all bands at the samples are compared; an interval whose cubic Hermite
  // interpolant of a band (energies and slopes at its ends) turns inside while the end slopes
  // agree in sign hides a pair of extrema and is halved, down to h/2^DEPTH. Every interval left
  // with a sign change of a band's slope and no edge or crossing of that band found inside is
  // refined from its left end.
  interface Point {
    k: number;
    d: Decomposition;
    v: Float64Array;
  }
  const minSlope = 1e-12 * scale;
  const slopesAt: (Float64Array | undefined)[] = new Array(samples);
  const pointAt = (i: number, k: number): Point => {
    const j = ((i % samples) + samples) % samples;
    let v = slopesAt[j];
    if (!v) {
      if (computed(j)) v = bc.slopes(sample(j));
      else {
        const m = slopesAt[mirrorOf(j)] ?? bc.slopes(sample(mirrorOf(j)));
        slopesAt[mirrorOf(j)] = m;
        v = m.map((x) => -x);
      }
      slopesAt[j] = v;
    }
    return { k, d: sample(j), v };
  };
  const candidates: { b: number; a: Point; c: Point }[] = [];
  const scan = (a: Point, c: Point, depth: number): void => {
    const width = c.k - a.k;
    let split = false;
    const here: number[] = [];
    for (let b = 0; b < n; b++) {
      const va = a.v[b];
      const vc = c.v[b];
      if ((va > minSlope && vc < -minSlope) || (va < -minSlope && vc > minSlope)) here.push(b);
      else if (depth < DEPTH && hiddenTurn(a.d.values[b], c.d.values[b], va * width, vc * width, minSlope * width)) split = true;
    }
    if (split) {
      const km = 0.5 * (a.k + c.k);
      const dm = bc.decompose(km);
      const m = { k: km, d: dm, v: bc.slopes(dm) };
      scan(a, m, depth + 1);
      scan(m, c, depth + 1);
      return;
    }
    for (const b of here) candidates.push({ b, a, c });
  };
  for (let i = 0; i < samples; i++) {
    if (symmetric && i < samples / 2) continue;
    scan(pointAt(i, ks[i]), pointAt(i + 1, ks[i] + h), 0);
  }
  const inside = (k: number, a: number, width: number) => {
    const x = wrap(k - a);
    const y = x < -Math.PI + width ? x + 2 * Math.PI : x;
    return (y >= -1e-12 && y <= width + 1e-12) || (x >= -1e-12 && x <= width + 1e-12);
  };
  for (const { b, a, c } of candidates) {
    const width = c.k - a.k;
    if (edges.some((e) => e.band === b && inside(e.k, a.k, width))) continue;
    if (meetings.some((m) => m.bands.includes(b) && inside(m.k, a.k, width))) continue;
    const found = refine(b, a.k, c.k, a.k, a.d, a.v[b], c.v[b]);
    if (found) edges.push(found);
  }
  if (stats) stats.solves += bc.solves;
  edges.sort((x, y) => x.energy - y.energy);
  const merged: BandEdge[] = [];
  for (const e of edges) if (!merged.length || e.energy - merged[merged.length - 1].energy > 1e-12 * scale) merged.push(e);
  return merged;
}

/**
 * The step to band b's extremum in the two-band model of the point p and its nearest band n:
 * H(k + δ) ≈ diag(E_b, E_n) + δ·V, V = [[v_b, w], [w*, v_n]] (w = φ_n†H′φ_b). Its eigenvalues
 * are m + uδ ± √P(δ), u = (v_b + v_n)/2, P = (g/2 + Δvδ/2)² + |w|²δ² (g = E_b − E_n,
 * Δv = v_b − v_n), smallest at δ0 = −β/γ with P_min, γ = Δv²/4 + |w|², β = gΔv/4. An extremum
 * exists when γ > u² (the diabatic slopes have opposite signs), at δ0 + x with
 * x² = u²·P_min/(γ(γ − u²)), γx of the sign of u on the lower band, of −u on the upper. Used
 * when the bands' crossing δ0 lies in the bracket (dlo, dhi): there Newton on the slope would
 * only bisect towards a sharp (narrowly avoided) extremum. Undefined otherwise.
 */
function twoBandStep(p: BandPoint, dlo: number, dhi: number, avoidedGap: number): number | undefined {
  if (p.near.energy === p.energy) return undefined;
  const g = p.energy - p.near.energy;
  const dv = p.slope - p.near.slope;
  const w = p.near.coupling;
  const gamma = 0.25 * dv * dv + w * w;
  if (gamma === 0) return undefined;
  const beta = 0.25 * g * dv;
  const d0 = -beta / gamma;
  if (!(d0 > dlo && d0 < dhi)) return undefined;
  const u = 0.5 * (p.slope + p.near.slope);
  if (!(gamma > u * u)) return undefined;
  const pMin = Math.max(0, (0.25 * g * g * w * w) / gamma);
  // a crossing (2|c| = 2√P_min below AVOIDED·scale) is left to the tangent jump of the search
  if (2 * Math.sqrt(pMin) <= avoidedGap) return undefined;
  const lower = g < 0;
  const x = (lower ? Math.sign(u) : -Math.sign(u)) * Math.abs(u) * Math.sqrt(pMin / (gamma * (gamma - u * u)));
  const step = d0 + x;
  return step > dlo && step < dhi && step !== 0 ? step : undefined;
}

/** Halvings of a sample interval at most (2^6 = 64: 128 samples become 8,192 where needed). */
const DEPTH = 6;

/**
 * Whether the cubic Hermite interpolant of a band on an interval (energies ea, ec, slopes
 * times the interval's width sa, sc of one sign) has a slope of the other sign inside,
 * beyond `floor`: p′(t) = sa + (6S − 4sa − 2sc)t + (3sa + 3sc − 6S)t², S = ec − ea, t ∈ [0, 1].
 */
function hiddenTurn(ea: number, ec: number, sa: number, sc: number, floor: number): boolean {
  const S = ec - ea;
  const A = 3 * sa + 3 * sc - 6 * S;
  const B = 6 * S - 4 * sa - 2 * sc;
  if (A === 0) return false;
  const t = -B / (2 * A);
  if (!(t > 0 && t < 1)) return false;
  const q = sa + B * t + A * t * t;
  const sign = sa !== 0 ? Math.sign(sa) : Math.sign(sc);
  return sign !== 0 && q * sign < -floor;
}

function wrap(k: number): number {
  let x = k;
  while (x >= Math.PI) x -= 2 * Math.PI;
  while (x < -Math.PI) x += 2 * Math.PI;
  return x;
}
