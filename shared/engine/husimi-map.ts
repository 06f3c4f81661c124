/**
 * Husimi direction maps of a state ψ on the cavity lattice (docs/physics-model.md,
 * "Current and Husimi maps"; the distribution is K. Husimi's, Proc. Phys.-Math.
 * Soc. Japan 22 (1940) 264). At each sample point r0 and direction n̂ the state is
 * projected on the coherent state
 *   φ(r) = N·exp(−|r − r0|²/(4σ²) + i·k·n̂·(r − r0) + iΛ(r0 → r)),
 * summed over the lattice sites (N normalises Σ|φ|² = 1 over the whole lattice),
 *   P(r0, n̂) = |Σ_s φ*(r_s)·ψ_s|².
 * Λ is the gauge's straight-line Peierls phase (gauge.ts), so ħk is the kinetic
 * momentum and the map is the same in every gauge. |k| solves the lattice
 * dispersion along n̂, 2t(2 − cos(k n_x a) − cos(k n_y a)) = E − V(r0), with V the
 * potential at the site nearest r0 (points where E ≤ V are "forbidden" and left 0).
 * A plane wave's distribution is a Gaussian in angle of standard deviation
 * 1/(2σk): that is the angular resolution reported. The vector sum
 * (1/N_dir)·Σ P(n̂)·n̂ tends to a multiple of the probability current as σk → 0
 * (expanding ψ to first order about r0 gives P ∝ |ψ|² + 4σ²k·n̂·Im(ψ*∇ψ)).
 * Peaks: local maxima of P over the directions (periodic) at least `peakThreshold`
 * times the point's largest value; each carries the share of the point's total in
 * its lobe (between the neighbouring minima) and its direction refined by a
 * parabola through the three samples around it.
 * Cost: O(points·(σ/a)²·directions) (a window of ±6σ around each point).
 */
import type { CavityLattice } from './lattice';
import { landauGauge, type Gauge } from './gauge';

export interface HusimiOptions {
  /** Energy E of the state (meV); Re z for a pole. */
  energy: number;
  /** Width σ of the coherent states (nm); default half the wavelength at the cavity's mean E − V. */
  sigmaNm?: number;
  /** Number of directions, evenly spaced from 0 (+x), counterclockwise; default 48. */
  directions?: number;
  /** Spacing of the square sampling grid (nm); default σ. */
  gridNm?: number;
  /** Relative height (to the point's largest value) a peak must reach; default 0.3. */
  peakThreshold?: number;
  /** Gauge of ψ's phases; default the engine's Landau gauge for the lattice's flux. */
  gauge?: Gauge;
  /** Largest number of sample points; default 4000. */
  maxPoints?: number;
  onProgress?: (fraction: number) => void;
}

export interface HusimiPeak {
  /** Index of the sample point. */
  point: number;
  /** Direction (rad, from +x counterclockwise, in (−π, π]). */
  angle: number;
  /** Share of the point's distribution in this peak's lobe (0..1). */
  share: number;
  /** P at the peak. */
  value: number;
}

export interface HusimiMap {
  energy: number;
  sigmaNm: number;
  gridNm: number;
  /** Directions (rad), evenly spaced from 0. */
  angles: Float64Array;
  /** Wavenumber at the mean kinetic energy along +x (1/nm), the one the defaults use. */
  meanWavenumber: number;
  /** 1/(2σk) at the mean wavenumber (rad). */
  angularResolution: number;
  /** Sample points (x, y) in nm, interleaved. */
  points: Float64Array;
  /** E − V at each point (meV); ≤ 0 marks a forbidden point. */
  kineticEnergy: Float64Array;
  /** P(point, direction), row-major points × directions. */
  distribution: Float64Array;
  /** (1/N_dir)·Σ P·n̂ per point, interleaved (x, y). */
  vectorSum: Float64Array;
  peaks: HusimiPeak[];
  peakThreshold: number;
}

/** |k|·a along (c, s) = (cos θ, sin θ) for kinetic energy e on the square lattice's band (bisection). */
export function latticeWavenumber(e: number, t: number, c: number, s: number): number {
  const m = Math.max(Math.abs(c), Math.abs(s));
  let lo = 0;
  let hi = Math.PI / m;
  const f = (k: number) => 2 * t * (2 - Math.cos(k * c) - Math.cos(k * s));
  if (e >= f(hi)) return hi;
  for (let it = 0; it < 80; it++) {
    const mid = 0.5 * (lo + hi);
    if (f(mid) < e) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

/** The Husimi direction map of ψ (interleaved over the lattice sites); spacing a in nm. */
export function husimiMap(lattice: CavityLattice, spacing: number, psi: Float64Array, options: HusimiOptions): HusimiMap {
  if (lattice.kind !== 'square') {
    throw new Error(
      `husimiMap follows the square lattice's dispersion; this cavity is on a ${lattice.kind} lattice (use honeycombHusimiMap, husimi-honeycomb.ts)`,
    );
  }
  const n = lattice.onsite.length;
  if (psi.length !== 2 * n) throw new RangeError(`husimi: psi has length ${psi.length}, expected 2·sites = ${2 * n}`);
  const { energy } = options;
  if (!Number.isFinite(energy)) throw new RangeError(`husimi: energy must be a finite number of meV, got ${energy}`);
  const t = lattice.hopping;
  const a = spacing;
  const { nDir, threshold } = husimiDirections(options);
  const gauge = options.gauge ?? landauGauge(lattice.flux);

  let vSum = 0;
  let vCount = 0;
  for (let s = 0; s < n; s++) {
    const v = lattice.onsite[s] - 4 * t;
    if (energy > v) {
      vSum += v;
      vCount++;
    }
  }
  if (vCount === 0) throw new RangeError(`husimi: E = ${energy} meV lies below the potential on every site, so no direction of motion is allowed`);
  const meanK = latticeWavenumber(energy - vSum / vCount, t, 1, 0) / a;
  const { sigmaNm, gridNm } = husimiWidths(options, meanK);

  // Sample points (lattice units): a grid centred on the cavity's bounding box, kept where the nearest site is in the cavity.
  const {
    xs: i0s,
    ys: j0s,
    near,
    pointsNm,
  } = husimiSampleGrid(lattice.sites.i, lattice.sites.j, a, gridNm, options.maxPoints ?? 4000, (x, y) => {
    const ri = Math.round(x);
    const rj = Math.round(y);
    if (ri < 0 || rj < 0 || ri >= lattice.nx || rj >= lattice.ny) return -1;
    return lattice.siteIndex[ri * lattice.ny + rj];
  });
  const points = i0s.length;

  const angles = Float64Array.from({ length: nDir }, (_, d) => (2 * Math.PI * d) / nDir);
  const cosA = angles.map(Math.cos);
  const sinA = angles.map(Math.sin);
  const sl = sigmaNm / a;
  const reach = 6 * sl;
  const distribution = new Float64Array(points * nDir);
  const vectorSum = new Float64Array(2 * points);
  const kineticEnergy = new Float64Array(points);
  const peaks: HusimiPeak[] = [];
  const kn = new Float64Array(nDir);
  const acc = new Float64Array(2 * nDir);

  for (let p = 0; p < points; p++) {
    options.onProgress?.(p / points);
    const x0 = i0s[p];
    const y0 = j0s[p];
    const ekin = energy - (lattice.onsite[near[p]] - 4 * t);
    kineticEnergy[p] = ekin;
    if (ekin <= 0) continue;
    for (let d = 0; d < nDir; d++) kn[d] = latticeWavenumber(ekin, t, cosA[d], sinA[d]);
    const ia = Math.max(0, Math.ceil(x0 - reach));
    const ib = Math.min(lattice.nx - 1, Math.floor(x0 + reach));
    const ja = Math.max(0, Math.ceil(y0 - reach));
    const jb = Math.min(lattice.ny - 1, Math.floor(y0 + reach));
    const nc = ib - ia + 1;
    const nr = jb - ja + 1;
    // e^{−i k n_x (x − x0)} per column and e^{−i k n_y (y − y0)} per row, per direction.
    const ex = new Float64Array(2 * nDir * nc);
    const ey = new Float64Array(2 * nDir * nr);
    for (let d = 0; d < nDir; d++) {
      for (let c = 0; c < nc; c++) {
        const ph = -kn[d] * cosA[d] * (ia + c - x0);
        ex[2 * (d * nc + c)] = Math.cos(ph);
        ex[2 * (d * nc + c) + 1] = Math.sin(ph);
      }
      for (let r = 0; r < nr; r++) {
        const ph = -kn[d] * sinA[d] * (ja + r - y0);
        ey[2 * (d * nr + r)] = Math.cos(ph);
        ey[2 * (d * nr + r) + 1] = Math.sin(ph);
      }
    }
    // Norm of the coherent state over the whole lattice in the window (the rest is below e^{−18}).
    let nx = 0;
    for (let i = Math.ceil(x0 - reach); i <= Math.floor(x0 + reach); i++) nx += Math.exp(-((i - x0) ** 2) / (2 * sl * sl));
    let ny = 0;
    for (let j = Math.ceil(y0 - reach); j <= Math.floor(y0 + reach); j++) ny += Math.exp(-((j - y0) ** 2) / (2 * sl * sl));
    const norm = nx * ny;
    acc.fill(0);
    for (let c = 0; c < nc; c++) {
      const i = ia + c;
      for (let r = 0; r < nr; r++) {
        const j = ja + r;
        const s = lattice.siteIndex[i * lattice.ny + j];
        if (s < 0) continue;
        const d2 = (i - x0) ** 2 + (j - y0) ** 2;
        if (d2 > reach * reach) continue;
        const gw = Math.exp(-d2 / (4 * sl * sl));
        // w = g·e^{−iΛ(r0→r)}·ψ_s  (conj of the coherent state's gauge phase)
        addSite(acc, ex, ey, nc, nr, c, r, nDir, gw, gauge.lineIntegral(x0, y0, i, j), psi, s);
      }
    }
    let vx = 0;
    let vy = 0;
    const row = p * nDir;
    for (let d = 0; d < nDir; d++) {
      const v = (acc[2 * d] ** 2 + acc[2 * d + 1] ** 2) / norm;
      distribution[row + d] = v;
      vx += v * cosA[d];
      vy += v * sinA[d];
    }
    vectorSum[2 * p] = vx / nDir;
    vectorSum[2 * p + 1] = vy / nDir;
    for (const peak of distributionPeaks(distribution.subarray(row, row + nDir), threshold)) peaks.push({ point: p, ...peak });
  }
  options.onProgress?.(1);
  return {
    energy,
    sigmaNm,
    gridNm,
    angles,
    meanWavenumber: meanK,
    angularResolution: 1 / (2 * sigmaNm * meanK),
    points: pointsNm,
    kineticEnergy,
    distribution,
    vectorSum,
    peaks,
    peakThreshold: threshold,
  };
}

/** Directions and peak threshold of the options, checked; shared by both lattices' maps. */
export function husimiDirections(options: HusimiOptions): { nDir: number; threshold: number } {
  const nDir = options.directions ?? 48;
  if (!Number.isInteger(nDir) || nDir < 4 || nDir > 720) throw new RangeError(`husimi: directions must be an integer from 4 to 720, got ${nDir}`);
  const threshold = options.peakThreshold ?? 0.3;
  if (!(threshold > 0 && threshold <= 1)) throw new RangeError(`husimi: peakThreshold must lie in (0, 1], got ${threshold}`);
  return { nDir, threshold };
}

/** σ and the grid spacing (nm) of the options, checked; σ defaults to half the wavelength at wavenumber meanK (1/nm). */
export function husimiWidths(options: HusimiOptions, meanK: number): { sigmaNm: number; gridNm: number } {
  const sigmaNm = options.sigmaNm ?? Math.PI / meanK;
  if (!(sigmaNm > 0) || !Number.isFinite(sigmaNm)) throw new RangeError(`husimi: sigmaNm must be a positive number of nm, got ${sigmaNm}`);
  const gridNm = options.gridNm ?? sigmaNm;
  if (!(gridNm > 0) || !Number.isFinite(gridNm)) throw new RangeError(`husimi: gridNm must be a positive number of nm, got ${gridNm}`);
  return { sigmaNm, gridNm };
}

/**
 * Sample points of a Husimi map: a square grid of gridNm, in units of `unit` nm like the site
 * coordinates (x[s], y[s]), centred on their bounding box and kept where nearest(x, y) names a
 * cavity site (≥ 0). Returns the points in those units, their nearest sites, and the points in
 * nm, interleaved (x, y).
 */
export function husimiSampleGrid(
  x: ArrayLike<number>,
  y: ArrayLike<number>,
  unit: number,
  gridNm: number,
  maxPoints: number,
  nearest: (x: number, y: number) => number,
): { xs: number[]; ys: number[]; near: number[]; pointsNm: Float64Array } {
  let xmin = Infinity,
    xmax = -Infinity,
    ymin = Infinity,
    ymax = -Infinity;
  for (let s = 0; s < x.length; s++) {
    xmin = Math.min(xmin, x[s]);
    xmax = Math.max(xmax, x[s]);
    ymin = Math.min(ymin, y[s]);
    ymax = Math.max(ymax, y[s]);
  }
  const g = gridNm / unit;
  const cols = Math.floor((xmax - xmin) / g) + 1;
  const rows = Math.floor((ymax - ymin) / g) + 1;
  if (cols * rows > 4 * maxPoints)
    throw new RangeError(`husimi: a grid of ${gridNm} nm gives about ${cols * rows} sample points; use a coarser grid (at most ${maxPoints} points)`);
  const xs: number[] = [];
  const ys: number[] = [];
  const near: number[] = [];
  const cx0 = xmin + (xmax - xmin - (cols - 1) * g) / 2;
  const cy0 = ymin + (ymax - ymin - (rows - 1) * g) / 2;
  for (let r = 0; r < rows; r++) {
    for (let c = 0; c < cols; c++) {
      const px = cx0 + c * g;
      const py = cy0 + r * g;
      const site = nearest(px, py);
      if (site < 0) continue;
      xs.push(px);
      ys.push(py);
      near.push(site);
    }
  }
  const points = xs.length;
  if (points > maxPoints)
    throw new RangeError(`husimi: a grid of ${gridNm} nm gives ${points} sample points; use a coarser grid (at most ${maxPoints} points)`);
  const pointsNm = new Float64Array(2 * points);
  for (let p = 0; p < points; p++) {
    pointsNm[2 * p] = xs[p] * unit;
    pointsNm[2 * p + 1] = ys[p] * unit;
  }
  return { xs, ys, near, pointsNm };
}

/**
 * Adds one site to the projections: w = gw·e^{−iλ}·ψ_s (the conjugate of the coherent state's
 * gauge phase λ), then acc[q] += w·ex[q, column c]·ey[q, row r] for q < count (complex,
 * interleaved; ex has nc columns and ey nr rows per q).
 */
export function addSite(
  acc: Float64Array,
  ex: Float64Array,
  ey: Float64Array,
  nc: number,
  nr: number,
  c: number,
  r: number,
  count: number,
  gw: number,
  lam: number,
  psi: Float64Array,
  s: number,
): void {
  const cl = gw * Math.cos(lam);
  const sn = -gw * Math.sin(lam);
  const wr = cl * psi[2 * s] - sn * psi[2 * s + 1];
  const wi = cl * psi[2 * s + 1] + sn * psi[2 * s];
  for (let q = 0; q < count; q++) {
    const xr = ex[2 * (q * nc + c)];
    const xi = ex[2 * (q * nc + c) + 1];
    const yr = ey[2 * (q * nr + r)];
    const yi = ey[2 * (q * nr + r) + 1];
    const pr = xr * yr - xi * yi;
    const pi = xr * yi + xi * yr;
    acc[2 * q] += wr * pr - wi * pi;
    acc[2 * q + 1] += wr * pi + wi * pr;
  }
}

/**
 * Peaks of a periodic angular distribution (evenly spaced from angle 0): local maxima
 * at least `threshold` × the largest value, with the share of the total in their lobe.
 */
export function distributionPeaks(values: ArrayLike<number>, threshold: number): { angle: number; share: number; value: number }[] {
  const m = values.length;
  let max = 0;
  let total = 0;
  for (let d = 0; d < m; d++) {
    max = Math.max(max, values[d]);
    total += values[d];
  }
  if (!(max > 0)) return [];
  const at = (d: number) => values[((d % m) + m) % m];
  const out: { angle: number; share: number; value: number }[] = [];
  const step = (2 * Math.PI) / m;
  for (let d = 0; d < m; d++) {
    const v = values[d];
    if (v < threshold * max || !(v > at(d - 1) && v >= at(d + 1))) continue;
    // Lobe: walk down on both sides while the values keep falling (at most half the circle).
    let lobe = v;
    for (const dir of [-1, 1]) {
      for (let k = 1; k < m / 2; k++) {
        const cur = at(d + dir * k);
        if (cur > at(d + dir * (k - 1))) break;
        lobe += cur;
      }
    }
    // Parabola through (d−1, d, d+1) for the refined direction.
    const y0 = at(d - 1);
    const y2 = at(d + 1);
    const den = y0 - 2 * v + y2;
    const shift = den < 0 ? Math.max(-0.5, Math.min(0.5, (0.5 * (y0 - y2)) / den)) : 0;
    let angle = (d + shift) * step;
    if (angle > Math.PI) angle -= 2 * Math.PI;
    out.push({ angle, share: Math.min(1, lobe / total), value: v });
  }
  return out;
}
