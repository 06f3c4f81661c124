/**
 * Valley-resolved Husimi maps of a state ψ on the honeycomb lattice (docs/physics-model.md,
 * "Current and Husimi maps"). Units of ℓ = a_CC inside; nm and 1/nm outside.
 *
 * Band (tight-binding.ts, Castro Neto et al., Rev. Mod. Phys. 81, 109 (2009), eqs. 5–6):
 * with ψ_s = u_sub·e^{ik·r_s} (real positions), g(k) = Σ_δ e^{ik·δ} over the three A → B
 * vectors δ = (±√3/2, 1/2)ℓ, (0, −1)ℓ of the brick wall,
 *   H(k) = E0 + 3t′ − t′|g|² + [[Δ, −t·g], [−t·g*, −Δ]],  E = E_D − t′|g|² ± √(Δ² + t²|g|²),
 * E_D = E0 + 3t′ (3t′ − t′|g|² is −t′(|g|² − 3)). The valleys are K = (4π/(3√3ℓ), 0) and
 * K′ = −K (g = −(3ℓ/2)(q_x + i q_y) near K). E depends on k through |g| only, so a level is
 * one contour |g(k)| = c around each valley, convex below the van Hove energy (c < 1).
 *
 * At a sample point r0, valley τ and ray direction n̂, the coherent state is
 *   φ(r_s) = N·exp(−|r_s − r0|²/(4σ²))·u_sub(s)(k)·exp(i k·(r_s − r0) + iΛ(r0 → r_s)),
 * k = K_τ + q on the contour of E − V(r0) (V at the atom nearest r0, the band of the sign of
 * E − V − E_D: electrons above E_D, holes below), q chosen so that the group velocity ∇_k E
 * points along n̂ (the reported angle is the ray direction; with trigonal warping q is not
 * along n̂). N normalises Σ|φ|² = 1 over the infinite lattice in the window of ±6σ, and
 *   P_τ(r0, n̂) = |Σ_s φ*(r_s)·ψ_s|²  (cavity atoms within 6σ).
 * Λ is the gauge's straight-line Peierls integral with positions in units of ℓ (the bond
 * phases of tight-binding.ts are the Landau gauge's), so P is gauge invariant.
 * Points where t·|g| < cutoff·t (|E − V − E_D| within about cutoff·t of the Dirac energy,
 * or inside the gap |Δ|) or beyond the van Hove energy (|g| ≥ 1, the valleys' contours join)
 * are left empty. Cost O(points·(σ/ℓ)²·directions) plus about 6·10³·directions evaluations of g per distinct V.
 */
import type { CavityLattice } from './lattice';
import { landauGauge } from './gauge';
import {
  addSite,
  distributionPeaks,
  husimiDirections,
  husimiSampleGrid,
  husimiWidths,
  type HusimiMap,
  type HusimiOptions,
  type HusimiPeak,
} from './husimi-map';

const SQ3 = Math.sqrt(3);
/** A → B nearest-neighbour vectors (units of ℓ). */
const DX = [SQ3 / 2, -SQ3 / 2, 0];
const DY = [0.5, 0.5, -1];
/** |K| (1/ℓ) and the distance from K to M, the farthest a level below the van Hove energy reaches. */
const K_LEN = (4 * Math.PI) / (3 * SQ3);
const Q_MAX = K_LEN / 2;

export interface HoneycombBand {
  /** Sublattice potential Δ (meV): +Δ on A, −Δ on B. */
  sublattice?: number;
  /** Next-nearest hopping t′ (meV). */
  nextHopping?: number;
  /** E0, the onsite energy before Δ and V (meV); 0 in the engine's honeycomb. */
  onsiteOffset?: number;
}

interface HoneycombHusimiOptions extends HusimiOptions {
  /** Δ, t′, E0 of the lattice's builder (modelTightBinding). */
  band: HoneycombBand;
  /** Points with t·|g(k)| below this fraction of t are left empty; default 0.01. */
  diracCutoff?: number;
}

interface ValleyMap {
  name: 'K' | 'K′';
  /** Valley centre (1/nm). */
  centre: [number, number];
  /** P_τ(point, direction), row-major like `distribution`. */
  distribution: Float64Array;
  vectorSum: Float64Array;
  peaks: HusimiPeak[];
}

export interface HoneycombHusimiMap extends HusimiMap {
  /** E_D = E0 + 3t′ (meV). `kineticEnergy` holds E − V − E_D per point (below 0: hole-like). */
  diracEnergy: number;
  /** `distribution`, `vectorSum` and `peaks` are of P_K + P_K′; these are per valley. */
  valleys: [ValleyMap, ValleyMap];
  /** Share of valley K in each point's total, NaN for an empty point. */
  valleyShare: Float64Array;
  /** +1 electron-like, −1 hole-like, 0 empty (near the Dirac energy, in the gap or beyond the van Hove energy). */
  carrier: Int8Array;
  diracCutoff: number;
}

/** g(k) and ∇|g|² at k (units of ℓ). */
function gAt(kx: number, ky: number, out: Float64Array): void {
  let gr = 0,
    gi = 0,
    dxr = 0,
    dxi = 0,
    dyr = 0,
    dyi = 0;
  for (let b = 0; b < 3; b++) {
    const ph = kx * DX[b] + ky * DY[b];
    const c = Math.cos(ph);
    const s = Math.sin(ph);
    gr += c;
    gi += s;
    // ∂g = Σ iδ e^{ik·δ}
    dxr -= DX[b] * s;
    dxi += DX[b] * c;
    dyr -= DY[b] * s;
    dyi += DY[b] * c;
  }
  out[0] = gr;
  out[1] = gi;
  out[2] = 2 * (gr * dxr + gi * dxi);
  out[3] = 2 * (gr * dyr + gi * dyi);
}

interface Level {
  /** |g| on the contour; 0 when the level is empty. */
  c: number;
  /** +1 electrons, −1 holes. */
  s: number;
}

/** The contour |g| = c of a level e = E − V − E_D, or c = 0 when it defines no direction. */
function levelOf(e: number, t: number, delta: number, t2: number, cutoff: number): Level {
  const s = e >= 0 ? 1 : -1;
  // f(c²) = −t′c² + s√(Δ² + t²c²) − e, monotone for |t′| < t/2.
  const f = (c2: number) => -t2 * c2 + s * Math.sqrt(delta * delta + t * t * c2) - e;
  const f0 = f(0);
  const f1 = f(1);
  if (f0 === 0 || f0 * f1 >= 0) return { c: 0, s };
  let lo = 0;
  let hi = 1;
  for (let it = 0; it < 80; it++) {
    const mid = 0.5 * (lo + hi);
    if (f(mid) * f0 > 0) lo = mid;
    else hi = mid;
  }
  const c = Math.sqrt(0.5 * (lo + hi));
  return { c: c < cutoff ? 0 : c, s };
}

/** Distance q from K_τ along (cos φ, sin φ) to the contour |g| = c (first crossing, bisection). */
function rayToContour(kx0: number, ky0: number, cph: number, sph: number, c2: number, buf: Float64Array): number {
  const steps = 24;
  let lo = 0;
  let hi = Q_MAX;
  for (let m = 1; m <= steps; m++) {
    const q = (m * Q_MAX) / steps;
    gAt(kx0 + q * cph, ky0 + q * sph, buf);
    if (buf[0] * buf[0] + buf[1] * buf[1] >= c2) {
      hi = q;
      break;
    }
    lo = q;
  }
  for (let it = 0; it < 56; it++) {
    const mid = 0.5 * (lo + hi);
    gAt(kx0 + mid * cph, ky0 + mid * sph, buf);
    if (buf[0] * buf[0] + buf[1] * buf[1] < c2) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

const wrap = (a: number) => Math.atan2(Math.sin(a), Math.cos(a));

/**
 * For each ray direction, the k (1/ℓ) on the level's contour around K_τ whose group velocity
 * points along it, and the band's spinor there: out rows (k_x, k_y, Re u_A, Im u_A, Re u_B, Im u_B).
 */
function contourStates(kx0: number, ky0: number, level: Level, t: number, delta: number, t2: number, cosA: Float64Array, sinA: Float64Array): Float64Array {
  const nDir = cosA.length;
  const c2 = level.c * level.c;
  const buf = new Float64Array(4);
  // dE/d|g|²: its sign says whether v is along +∇|g|² (outward) or −∇|g|².
  const sign = -t2 + (level.s * t * t) / (2 * Math.sqrt(delta * delta + t * t * c2)) >= 0 ? 1 : -1;
  const rayAngle = (phi: number): number => {
    const q = rayToContour(kx0, ky0, Math.cos(phi), Math.sin(phi), c2, buf);
    gAt(kx0 + q * Math.cos(phi), ky0 + q * Math.sin(phi), buf);
    return Math.atan2(sign * buf[3], sign * buf[2]);
  };
  const m = 4 * nDir;
  const phis = Float64Array.from({ length: m + 1 }, (_, j) => (2 * Math.PI * j) / m);
  const rays = phis.map(rayAngle);
  const out = new Float64Array(6 * nDir);
  for (let d = 0; d < nDir; d++) {
    const target = Math.atan2(sinA[d], cosA[d]);
    // The ray angle turns once around as φ does (a convex contour): find the sample interval holding the target.
    let a = -1;
    for (let j = 0; j < m; j++) {
      const h0 = wrap(rays[j] - target);
      const h1 = wrap(rays[j + 1] - target);
      if (h0 <= 0 && h1 > 0 && h1 - h0 < Math.PI) {
        a = j;
        break;
      }
    }
    let phi: number;
    if (a < 0) {
      phi = target + (sign < 0 ? Math.PI : 0);
    } else {
      let lo = phis[a];
      let hi = phis[a + 1];
      for (let it = 0; it < 32; it++) {
        const mid = 0.5 * (lo + hi);
        if (wrap(rayAngle(mid) - target) <= 0) lo = mid;
        else hi = mid;
      }
      phi = 0.5 * (lo + hi);
    }
    const q = rayToContour(kx0, ky0, Math.cos(phi), Math.sin(phi), c2, buf);
    const kx = kx0 + q * Math.cos(phi);
    const ky = ky0 + q * Math.sin(phi);
    gAt(kx, ky, buf);
    // Eigenvector of [[Δ, b], [b*, −Δ]], b = −t·g, eigenvalue λ = s·R: (b, λ − Δ) or (λ + Δ, b*), the better conditioned.
    const br = -t * buf[0];
    const bi = -t * buf[1];
    const lam = level.s * Math.sqrt(delta * delta + br * br + bi * bi);
    let ar: number, ai: number, cr: number, ci: number;
    if (Math.abs(lam + delta) >= Math.abs(lam - delta)) {
      ar = lam + delta;
      ai = 0;
      cr = br;
      ci = -bi;
    } else {
      ar = br;
      ai = bi;
      cr = lam - delta;
      ci = 0;
    }
    const nrm = Math.hypot(ar, ai, cr, ci);
    out.set([kx, ky, ar / nrm, ai / nrm, cr / nrm, ci / nrm], 6 * d);
  }
  return out;
}

/** The valley-resolved Husimi map of ψ (interleaved over the atoms) on a honeycomb of a_CC = `length` nm. */
export function honeycombHusimiMap(lattice: CavityLattice, length: number, psi: Float64Array, options: HoneycombHusimiOptions): HoneycombHusimiMap {
  if (lattice.kind !== 'honeycomb') throw new Error(`honeycombHusimiMap: the lattice is ${lattice.kind}, not honeycomb`);
  const n = lattice.onsite.length;
  if (psi.length !== 2 * n) throw new RangeError(`husimi: psi has length ${psi.length}, expected 2·sites = ${2 * n}`);
  const { energy } = options;
  if (!Number.isFinite(energy)) throw new RangeError(`husimi: energy must be a finite number of meV, got ${energy}`);
  const t = lattice.hopping;
  const delta = options.band.sublattice ?? 0;
  const t2 = options.band.nextHopping ?? 0;
  const e0 = options.band.onsiteOffset ?? 0;
  if (Math.abs(t2) >= t / 2) throw new RangeError(`husimi: t′ = ${t2} meV must stay below t/2 for the band to rise away from the Dirac point`);
  const diracEnergy = e0 + 3 * t2;
  const cutoff = options.diracCutoff ?? 0.01;
  if (!(cutoff > 0 && cutoff < 1)) throw new RangeError(`husimi: diracCutoff must lie in (0, 1), got ${cutoff}`);
  const { nDir, threshold } = husimiDirections(options);
  const gauge = options.gauge ?? landauGauge(lattice.flux);
  const l = length;
  const dxl = SQ3 / 2;
  const dyl = 1.5;
  const { i: si, j: sj } = lattice.sites;
  const odd = (i: number, j: number) => ((i + j) & 1) === 1;
  /** E − V − E_D at an atom. */
  const levelEnergy = (s: number) => energy - lattice.onsite[s] + (odd(si[s], sj[s]) ? -delta : delta) - 3 * t2;

  const levels = new Map<number, Level>();
  const levelAt = (e: number): Level => {
    let lv = levels.get(e);
    if (!lv) {
      lv = levelOf(e, t, delta, t2, cutoff);
      levels.set(e, lv);
    }
    return lv;
  };

  // Defaults: the distance from K to the contour along +x at each allowed atom, averaged.
  const buf = new Float64Array(4);
  const qx = new Map<number, number>();
  let qSum = 0;
  let qCount = 0;
  for (let s = 0; s < n; s++) {
    const e = levelEnergy(s);
    const lv = levelAt(e);
    if (lv.c === 0) continue;
    let q = qx.get(e);
    if (q === undefined) {
      q = rayToContour(K_LEN, 0, 1, 0, lv.c * lv.c, buf);
      qx.set(e, q);
    }
    qSum += q;
    qCount++;
  }
  if (qCount === 0)
    throw new RangeError(
      `husimi: E = ${energy} meV lies within ${cutoff}·t of the Dirac energy (or in the gap, or beyond the van Hove energy) on every atom, so no direction of motion is defined`,
    );
  const meanK = qSum / qCount / l;
  const { sigmaNm, gridNm } = husimiWidths(options, meanK);

  // Sample points (units of ℓ): a grid centred on the atoms' bounding box, kept where the nearest atom of the infinite lattice is in the cavity.
  const yOf = (i: number, j: number) => j * dyl + (odd(i, j) ? 0.5 : 0);
  const atomX = Float64Array.from(lattice.positions.x, (v) => v / l);
  const atomY = Float64Array.from(lattice.positions.y, (v) => v / l);
  const { xs, ys, near, pointsNm } = husimiSampleGrid(atomX, atomY, l, gridNm, options.maxPoints ?? 4000, (x, y) => {
    const i0 = Math.round(x / dxl);
    const j0 = Math.round(y / dyl);
    let best = Infinity;
    let bi = 0,
      bj = 0;
    for (let i = i0 - 2; i <= i0 + 2; i++)
      for (let j = j0 - 2; j <= j0 + 2; j++) {
        const d2 = (i * dxl - x) ** 2 + (yOf(i, j) - y) ** 2;
        if (d2 < best) {
          best = d2;
          bi = i;
          bj = j;
        }
      }
    if (bi < 0 || bj < 0 || bi >= lattice.nx || bj >= lattice.ny) return -1;
    return lattice.siteIndex[bi * lattice.ny + bj];
  });
  const points = xs.length;

  const angles = Float64Array.from({ length: nDir }, (_, d) => (2 * Math.PI * d) / nDir);
  const cosA = angles.map(Math.cos);
  const sinA = angles.map(Math.sin);
  const sl = sigmaNm / l;
  const reach = 6 * sl;
  const centres: [number, number][] = [
    [K_LEN, 0],
    [-K_LEN, 0],
  ];
  const valleyDist = [new Float64Array(points * nDir), new Float64Array(points * nDir)];
  const valleyVec = [new Float64Array(2 * points), new Float64Array(2 * points)];
  const valleyPeaks: HusimiPeak[][] = [[], []];
  const distribution = new Float64Array(points * nDir);
  const vectorSum = new Float64Array(2 * points);
  const kineticEnergy = new Float64Array(points);
  const valleyShare = new Float64Array(points).fill(NaN);
  const carrier = new Int8Array(points);
  const peaks: HusimiPeak[] = [];
  const states = new Map<number, Float64Array[]>();
  // Per valley and direction: sums over A and over B atoms of w·e^{−ik·(r − r0)} (without the spinor).
  const accA = new Float64Array(4 * nDir);
  const accB = new Float64Array(4 * nDir);

  for (let p = 0; p < points; p++) {
    options.onProgress?.(p / points);
    const x0 = xs[p];
    const y0 = ys[p];
    const e = levelEnergy(near[p]);
    kineticEnergy[p] = e;
    const lv = levelAt(e);
    if (lv.c === 0) continue;
    carrier[p] = lv.s;
    let st = states.get(e);
    if (!st) {
      st = centres.map(([kx, ky]) => contourStates(kx, ky, lv, t, delta, t2, cosA, sinA));
      states.set(e, st);
    }
    const ia = Math.ceil((x0 - reach) / dxl);
    const ib = Math.floor((x0 + reach) / dxl);
    const ja = Math.floor((y0 - reach - 0.5) / dyl);
    const jb = Math.ceil((y0 + reach) / dyl);
    const nc = ib - ia + 1;
    const nr = jb - ja + 1;
    // e^{−ik_x(x − x0)} per column, e^{−ik_y(j·Δy − y0)} per row, and e^{−ik_y/2} for the lift of B atoms, per valley and direction.
    const ex = new Float64Array(4 * nDir * nc);
    const ey = new Float64Array(4 * nDir * nr);
    const lift = new Float64Array(4 * nDir);
    for (let v = 0; v < 2; v++)
      for (let d = 0; d < nDir; d++) {
        const vd = v * nDir + d;
        const kx = st[v][6 * d];
        const ky = st[v][6 * d + 1];
        for (let c = 0; c < nc; c++) {
          const ph = -kx * ((ia + c) * dxl - x0);
          ex[2 * (vd * nc + c)] = Math.cos(ph);
          ex[2 * (vd * nc + c) + 1] = Math.sin(ph);
        }
        for (let r = 0; r < nr; r++) {
          const ph = -ky * ((ja + r) * dyl - y0);
          ey[2 * (vd * nr + r)] = Math.cos(ph);
          ey[2 * (vd * nr + r) + 1] = Math.sin(ph);
        }
        lift[2 * vd] = Math.cos(-ky * 0.5);
        lift[2 * vd + 1] = Math.sin(-ky * 0.5);
      }
    // Gaussian weights over the infinite lattice in the square window, per sublattice (the norm needs |u_A|², |u_B|²).
    const yw = [0, 0, 0, 0]; // Σ over even j / odd j of the A-height and the B-height (lifted) weights
    for (let j = ja; j <= jb; j++) {
      const par = j & 1;
      yw[par] += Math.exp(-((j * dyl - y0) ** 2) / (2 * sl * sl));
      yw[2 + par] += Math.exp(-((j * dyl + 0.5 - y0) ** 2) / (2 * sl * sl));
    }
    let sumA = 0;
    let sumB = 0;
    for (let i = ia; i <= ib; i++) {
      const xw = Math.exp(-((i * dxl - x0) ** 2) / (2 * sl * sl));
      const par = i & 1;
      // A: i + j even; B: i + j odd (lifted).
      sumA += xw * yw[par];
      sumB += xw * yw[2 + (1 - par)];
    }
    accA.fill(0);
    accB.fill(0);
    for (let c = 0; c < nc; c++) {
      const i = ia + c;
      if (i < 0 || i >= lattice.nx) continue;
      for (let r = 0; r < nr; r++) {
        const j = ja + r;
        if (j < 0 || j >= lattice.ny) continue;
        const s = lattice.siteIndex[i * lattice.ny + j];
        if (s < 0) continue;
        const x = i * dxl;
        const y = yOf(i, j);
        const d2 = (x - x0) ** 2 + (y - y0) ** 2;
        if (d2 > reach * reach) continue;
        const gw = Math.exp(-d2 / (4 * sl * sl));
        addSite(odd(i, j) ? accB : accA, ex, ey, nc, nr, c, r, 2 * nDir, gw, gauge.lineIntegral(x0, y0, x, y), psi, s);
      }
    }
    const row = p * nDir;
    const totals = [0, 0];
    for (let v = 0; v < 2; v++) {
      let vx = 0;
      let vy = 0;
      const dist = valleyDist[v];
      for (let d = 0; d < nDir; d++) {
        const vd = v * nDir + d;
        const o = 6 * d;
        const [uar, uai, ubr, ubi] = [st[v][o + 2], st[v][o + 3], st[v][o + 4], st[v][o + 5]];
        // B sums carry the lift phase; then amplitude = u_A*·A + u_B*·lift·B.
        const br0 = accB[2 * vd] * lift[2 * vd] - accB[2 * vd + 1] * lift[2 * vd + 1];
        const bi0 = accB[2 * vd] * lift[2 * vd + 1] + accB[2 * vd + 1] * lift[2 * vd];
        const ar = uar * accA[2 * vd] + uai * accA[2 * vd + 1] + ubr * br0 + ubi * bi0;
        const ai = uar * accA[2 * vd + 1] - uai * accA[2 * vd] + ubr * bi0 - ubi * br0;
        const norm = (uar * uar + uai * uai) * sumA + (ubr * ubr + ubi * ubi) * sumB;
        const val = (ar * ar + ai * ai) / norm;
        dist[row + d] = val;
        distribution[row + d] += val;
        vx += val * cosA[d];
        vy += val * sinA[d];
        totals[v] += val;
      }
      valleyVec[v][2 * p] = vx / nDir;
      valleyVec[v][2 * p + 1] = vy / nDir;
      vectorSum[2 * p] += vx / nDir;
      vectorSum[2 * p + 1] += vy / nDir;
      for (const peak of distributionPeaks(dist.subarray(row, row + nDir), threshold)) valleyPeaks[v].push({ point: p, ...peak });
    }
    valleyShare[p] = totals[0] + totals[1] > 0 ? totals[0] / (totals[0] + totals[1]) : NaN;
    for (const peak of distributionPeaks(distribution.subarray(row, row + nDir), threshold)) peaks.push({ point: p, ...peak });
  }
  options.onProgress?.(1);
  const names = ['K', 'K′'] as const;
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
    diracEnergy,
    diracCutoff: cutoff,
    valleyShare,
    carrier,
    valleys: [0, 1].map((v) => ({
      name: names[v],
      centre: [centres[v][0] / l, centres[v][1] / l] as [number, number],
      distribution: valleyDist[v],
      vectorSum: valleyVec[v],
      peaks: valleyPeaks[v],
    })) as [ValleyMap, ValleyMap],
  };
}
