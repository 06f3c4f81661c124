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
import { forwardHopping, type LeadCellBlocks } from './numerical-lead-modes';

/** H(k) (n×n, interleaved) of a cell, or H′(k) (order 1) or H″(k) (order 2). */
function blochHamiltonian(cell: LeadCellBlocks, k: number, order = 0): Float64Array {
  const n = cell.size;
  const h1f = forwardHopping(cell);
  const out = new Float64Array(2 * n * n);
  const c = Math.cos(k);
  const s = Math.sin(k);
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      const e = 2 * (i * n + j);
      const ar = h1f[e];
      const ai = h1f[e + 1];
      const d = 2 * (j * n + i);
      const br = h1f[d];
      const bi = -h1f[d + 1]; // (H1†)[i,j]
      // p = e^{ik}H1, q = e^{−ik}H1†
      const pr = c * ar - s * ai;
      const pi = c * ai + s * ar;
      const qr = c * br + s * bi;
      const qi = c * bi - s * br;
      if (order === 0) {
        out[e] = cell.h0[e] + pr + qr;
        out[e + 1] = cell.h0[e + 1] + pi + qi;
      } else if (order === 1) {
        // i(p − q)
        out[e] = -(pi - qi);
        out[e + 1] = pr - qr;
      } else {
        out[e] = -(pr + qr);
        out[e + 1] = -(pi + qi);
      }
    }
  return out;
}

/** Sorted band energies at k (meV). Cost O(n³). */
export function leadBands(cell: LeadCellBlocks, k: number): Float64Array {
  return hermitianEigen(cell.size, blochHamiltonian(cell, k)).values;
}

function slopeAndCurvature(
  cell: LeadCellBlocks,
  k: number,
  band: number,
): { energy: number; slope: number; curvature: number; gap: number; near: { energy: number; slope: number } } {
  const n = cell.size;
  const { values, vectors } = hermitianEigen(n, blochHamiltonian(cell, k));
  const h1 = blochHamiltonian(cell, k, 1);
  const h2 = blochHamiltonian(cell, k, 2);
  const col = (c: number) => {
    const v = new Float64Array(2 * n);
    for (let i = 0; i < n; i++) {
      v[2 * i] = vectors[2 * (i * n + c)];
      v[2 * i + 1] = vectors[2 * (i * n + c) + 1];
    }
    return v;
  };
  const form = (a: Float64Array, x: Float64Array, y: Float64Array): [number, number] => {
    let re = 0;
    let im = 0;
    for (let i = 0; i < n; i++) {
      let sr = 0;
      let si = 0;
      for (let j = 0; j < n; j++) {
        const ar = a[2 * (i * n + j)];
        const ai = a[2 * (i * n + j) + 1];
        sr += ar * y[2 * j] - ai * y[2 * j + 1];
        si += ar * y[2 * j + 1] + ai * y[2 * j];
      }
      re += x[2 * i] * sr + x[2 * i + 1] * si;
      im += x[2 * i] * si - x[2 * i + 1] * sr;
    }
    return [re, im];
  };
  const phi = col(band);
  const slope = form(h1, phi, phi)[0];
  let curvature = form(h2, phi, phi)[0];
  let gap = Infinity;
  let nearest = band;
  for (let c = 0; c < n; c++) {
    if (c === band) continue;
    const de = values[band] - values[c];
    if (Math.abs(de) < gap) nearest = c;
    gap = Math.min(gap, Math.abs(de));
    if (Math.abs(de) < 1e-12 * (1 + Math.abs(values[band]))) continue;
    const [mr, mi] = form(h1, col(c), phi);
    curvature += (2 * (mr * mr + mi * mi)) / de;
  }
  const other = nearest === band ? phi : col(nearest);
  return { energy: values[band], slope, curvature, gap, near: { energy: values[nearest], slope: form(h1, other, other)[0] } };
}

/** One band edge: band index (sorted), its k and energy. */
export interface BandEdge {
  band: number;
  k: number;
  energy: number;
}

/**
 * Band edges of a cell: every local extremum of every sorted band over k ∈ [−π, π),
 * sampled at `samples` points and refined by safeguarded Newton on dE/dk = 0 to
 * |dE/dk| ≤ 1e-12·scale (scale = the largest |band energy|, at least 1). Edges at the
 * same energy (to 1e-12·scale) are merged. Cost O(samples·n³).
 */
export function leadBandEdges(cell: LeadCellBlocks, samples = 128): BandEdge[] {
  const n = cell.size;
  const ks = Array.from({ length: samples }, (_, i) => -Math.PI + (2 * Math.PI * i) / samples);
  const bands = ks.map((k) => leadBands(cell, k));
  let scale = 1;
  for (const b of bands) for (const e of b) scale = Math.max(scale, Math.abs(e));
  const edges: BandEdge[] = [];
  for (let b = 0; b < n; b++) {
    for (let i = 0; i < samples; i++) {
      const e0 = bands[(i - 1 + samples) % samples][b];
      const e1 = bands[i][b];
      const e2 = bands[(i + 1) % samples][b];
      const isMin = e1 <= e0 && e1 < e2;
      const isMax = e1 >= e0 && e1 > e2;
      if (!isMin && !isMax) continue;
      // A flat stretch (a Landau level's plateau) holds many rounding-level extrema: refine one.
      if (edges.some((e) => e.band === b && Math.abs(e.energy - e1) <= 1e-10 * scale)) continue;
      const h = (2 * Math.PI) / samples;
      let lo = ks[i] - h;
      let hi = ks[i] + h;
      // f(lo) has the sign opposite to f(hi) across an extremum: bracket for bisection.
      const fLo = slopeAndCurvature(cell, lo, b).slope;
      let k = ks[i];
      let found: BandEdge | undefined;
      for (let it = 0; it < 60; it++) {
        let s = slopeAndCurvature(cell, k, b);
        // A sorted band's kink where two bands cross (slopes of both signs, never zero) is
        // approached by bisection only linearly in the gap: jump to where the two nearest bands'
        // tangents meet, and take that point when they do meet there (an exact crossing).
        if (s.gap > 1e-9 * scale && s.near.slope !== s.slope) {
          const kc = k + (s.near.energy - s.energy) / (s.slope - s.near.slope);
          if (kc > lo && kc < hi && kc !== k) {
            const c = slopeAndCurvature(cell, kc, b);
            if (c.gap <= 1e-9 * scale) {
              k = kc;
              s = c;
            }
          }
        }
        if (s.gap <= 1e-9 * scale) {
          // (Nearly) degenerate: an edge when one of the velocities on the degenerate subspace
          // vanishes (a band extremum touching other bands); a plain crossing has none.
          if (degenerateVelocity(cell, k, s.energy, 1e-9 * scale) <= 1e-7 * scale) found = { band: b, k: wrap(k), energy: s.energy };
          break;
        }
        if (Math.abs(s.slope) <= 1e-12 * scale) {
          if (s.gap > 1e-9 * scale || degenerateVelocity(cell, k, s.energy, 1e-9 * scale) <= 1e-9 * scale) found = { band: b, k: wrap(k), energy: s.energy };
          break;
        }
        if (Math.sign(s.slope) === Math.sign(fLo)) lo = k;
        else hi = k;
        let next = k - s.slope / s.curvature;
        if (!(next > lo && next < hi) || !Number.isFinite(next)) next = 0.5 * (lo + hi);
        if (hi - lo < 1e-15) break;
        k = next;
      }
      if (found) edges.push(found);
    }
  }
  edges.sort((x, y) => x.energy - y.energy);
  const merged: BandEdge[] = [];
  for (const e of edges) if (!merged.length || e.energy - merged[merged.length - 1].energy > 1e-12 * scale) merged.push(e);
  return merged;
}

/** The smallest |velocity| among the bands within tol of energy at k (the velocity matrix on that degenerate subspace). */
function degenerateVelocity(cell: LeadCellBlocks, k: number, energy: number, tol: number): number {
  const n = cell.size;
  const { values, vectors } = hermitianEigen(n, blochHamiltonian(cell, k));
  const cols: number[] = [];
  for (let c = 0; c < n; c++) if (Math.abs(values[c] - energy) <= tol) cols.push(c);
  const h1 = blochHamiltonian(cell, k, 1);
  const d = cols.length;
  const v = new Float64Array(2 * d * d);
  for (let a = 0; a < d; a++)
    for (let b = 0; b < d; b++) {
      let re = 0;
      let im = 0;
      for (let i = 0; i < n; i++) {
        const xr = vectors[2 * (i * n + cols[a])];
        const xi = vectors[2 * (i * n + cols[a]) + 1];
        for (let j = 0; j < n; j++) {
          const hr = h1[2 * (i * n + j)];
          const hi = h1[2 * (i * n + j) + 1];
          const yr = vectors[2 * (j * n + cols[b])];
          const yi = vectors[2 * (j * n + cols[b]) + 1];
          const pr = hr * yr - hi * yi;
          const pi = hr * yi + hi * yr;
          re += xr * pr + xi * pi;
          im += xr * pi - xi * pr;
        }
      }
      v[2 * (a * d + b)] = re;
      v[2 * (a * d + b) + 1] = im;
    }
  const vals = hermitianEigen(d, v).values;
  return Math.min(...Array.from(vals, Math.abs));
}

function wrap(k: number): number {
  let x = k;
  while (x >= Math.PI) x -= 2 * Math.PI;
  while (x < -Math.PI) x += 2 * Math.PI;
  return x;
}
