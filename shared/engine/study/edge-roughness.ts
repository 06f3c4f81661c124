/**
 * Edge roughness of a lithographed cavity: the boundary moves in and out by a
 * random displacement δ with rms amplitude σ (nm) and a Gaussian correlation
 * ⟨δ(r)δ(r′)⟩ = σ²·exp(−|r − r′|²/(2L²)) along the edge (L the correlation length).
 * δ is a smooth random field on the grid (white noise convolved with a Gaussian of
 * width L/√2, normalised so its variance is σ² exactly; L = 0 gives independent
 * sites), and a site belongs to the rough cavity when d + δ > 0, with d its signed
 * distance to the nominal edge (inside positive, half a spacing from the last
 * site, a the lattice spacing). So σ = 0 gives back the nominal cavity, sites are
 * added or removed only near the edge, and neighbouring edge sites move together
 * over about L. Mouth sites of the leads always stay; pieces cut off from the
 * lead-bearing part are dropped and counted (an etched island would not be
 * contacted either). Cost O(B·N_band + nx·ny·L/a) for B edge sites.
 */
import { connectedComponents, mouthSites } from '../../model/geometry';
import type { Lead } from '../../model/cavity-model';
import { SeededRandom } from './seeded-random';

export interface RoughnessSpec {
  /** rms displacement of the edge (nm). */
  rmsNm: number;
  /** Correlation length along the edge (nm). */
  correlationNm: number;
}

interface RoughMask {
  mask: Uint8Array;
  added: number;
  removed: number;
  /** Sites dropped because roughness cut them off from the part holding the leads. */
  droppedIslands: number;
}

export function roughenMask(
  mask: Uint8Array,
  nx: number,
  ny: number,
  spacing: number,
  leads: readonly Pick<Lead, 'side' | 'start' | 'width'>[],
  spec: RoughnessSpec,
  seed: number,
): RoughMask {
  if (!(spec.rmsNm >= 0) || !(spec.correlationNm >= 0)) throw new RangeError('roughness: rmsNm and correlationNm must be ≥ 0');
  const out = new Uint8Array(mask);
  if (spec.rmsNm === 0) return { mask: out, added: 0, removed: 0, droppedIslands: 0 };
  const delta = randomField(nx, ny, spec.correlationNm / spacing, seed);
  // Only sites within a band of the edge can change: |δ| beyond 6σ has probability ~1e-9.
  const band = (6 * spec.rmsNm) / spacing + 1;
  const inner: number[] = [];
  const outer: number[] = [];
  const inside = (i: number, j: number) => i >= 0 && i < nx && j >= 0 && j < ny && mask[i * ny + j] === 1;
  for (let i = -1; i <= nx; i++) {
    for (let j = -1; j <= ny; j++) {
      const here = inside(i, j);
      const edge = inside(i - 1, j) !== here || inside(i + 1, j) !== here || inside(i, j - 1) !== here || inside(i, j + 1) !== here;
      if (edge) (here ? inner : outer).push(i, j);
    }
  }
  for (let i = 0; i < nx; i++) {
    for (let j = 0; j < ny; j++) {
      const s = i * ny + j;
      const here = mask[s] === 1;
      const list = here ? outer : inner;
      let best = Infinity;
      for (let k = 0; k < list.length; k += 2) {
        const di = list[k] - i;
        const dj = list[k + 1] - j;
        if (Math.abs(di) > band || Math.abs(dj) > band) continue;
        best = Math.min(best, di * di + dj * dj);
      }
      if (best === Infinity) continue;
      const d = (Math.sqrt(best) - 0.5) * spacing * (here ? 1 : -1);
      out[s] = d + spec.rmsNm * delta[s] > 0 ? 1 : 0;
    }
  }
  for (const lead of leads) {
    const m = mouthSites(lead, nx, ny);
    for (let p = 0; p < m.i.length; p++) out[m.i[p] * ny + m.j[p]] = 1;
  }
  const droppedIslands = keepLeadPart(out, nx, ny, leads);
  let added = 0;
  let removed = 0;
  for (let s = 0; s < mask.length; s++) {
    if (out[s] && !mask[s]) added++;
    if (!out[s] && mask[s]) removed++;
  }
  return { mask: out, added, removed, droppedIslands };
}

/** Unit-variance Gaussian random field with correlation exp(−r²/(2ℓ²)), ℓ in sites. */
function randomField(nx: number, ny: number, ell: number, seed: number): Float64Array {
  const rng = new SeededRandom(seed);
  const pad = Math.ceil(3 * ell);
  const wx = nx + 2 * pad;
  const wy = ny + 2 * pad;
  const white = new Float64Array(wx * wy);
  for (let k = 0; k < white.length; k++) white[k] = rng.normal();
  if (pad === 0 || ell < 1e-9) {
    const f = new Float64Array(nx * ny);
    for (let i = 0; i < nx; i++) for (let j = 0; j < ny; j++) f[i * ny + j] = white[(i + pad) * wy + j + pad];
    return f;
  }
  // Kernel exp(−r²/ℓ²) = exp(−r²/(2s²)) with s = ℓ/√2 gives correlation exp(−r²/(2ℓ²)); separable.
  const kernel = new Float64Array(2 * pad + 1);
  let sq = 0;
  for (let k = -pad; k <= pad; k++) kernel[k + pad] = Math.exp(-(k * k) / (ell * ell));
  for (const v of kernel) sq += v * v;
  // Two passes give variance perPass⁴·(ΣK²)², which is 1 with this factor.
  const perPass = 1 / Math.sqrt(sq);
  const tmp = new Float64Array(wx * wy);
  for (let i = 0; i < wx; i++) {
    for (let j = pad; j < wy - pad; j++) {
      let acc = 0;
      for (let k = -pad; k <= pad; k++) acc += kernel[k + pad] * white[i * wy + j + k];
      tmp[i * wy + j] = acc * perPass;
    }
  }
  const f = new Float64Array(nx * ny);
  for (let i = 0; i < nx; i++) {
    for (let j = 0; j < ny; j++) {
      let acc = 0;
      for (let k = -pad; k <= pad; k++) acc += kernel[k + pad] * tmp[(i + pad + k) * wy + j + pad];
      f[i * ny + j] = acc * perPass;
    }
  }
  return f;
}

/** Keeps the connected piece holding the first lead's mouth (or the largest piece); returns the sites dropped. */
function keepLeadPart(mask: Uint8Array, nx: number, ny: number, leads: readonly Pick<Lead, 'side' | 'start' | 'width'>[]): number {
  const parts = connectedComponents(mask, nx, ny);
  if (parts.length <= 1) return 0;
  let seedSite: number;
  if (leads.length) {
    const m = mouthSites(leads[0], nx, ny);
    seedSite = m.i[0] * ny + m.j[0];
  } else {
    const big = parts.reduce((a, b) => (b.size > a.size ? b : a));
    seedSite = big.firstI * ny + big.firstJ;
  }
  const keep = new Uint8Array(mask.length);
  const stack = [seedSite];
  keep[seedSite] = 1;
  while (stack.length) {
    const s = stack.pop()!;
    const i = Math.floor(s / ny);
    const j = s - i * ny;
    for (const [ii, jj] of [
      [i - 1, j],
      [i + 1, j],
      [i, j - 1],
      [i, j + 1],
    ]) {
      if (ii < 0 || ii >= nx || jj < 0 || jj >= ny) continue;
      const t = ii * ny + jj;
      if (mask[t] && !keep[t]) {
        keep[t] = 1;
        stack.push(t);
      }
    }
  }
  let dropped = 0;
  for (let s = 0; s < mask.length; s++) {
    if (mask[s] && !keep[s]) {
      mask[s] = 0;
      dropped++;
    }
  }
  return dropped;
}

/** The mask as the model's bitmap shape over the whole grid (rows bottom first, most significant bit leftmost). */
export function maskToBitmap(
  mask: Uint8Array,
  nx: number,
  ny: number,
): { kind: 'bitmap'; i0: number; j0: number; width: number; height: number; data: string } {
  const rowBytes = Math.ceil(nx / 8);
  const bytes = new Uint8Array(rowBytes * ny);
  for (let j = 0; j < ny; j++) {
    for (let i = 0; i < nx; i++) if (mask[i * ny + j]) bytes[j * rowBytes + (i >> 3)] |= 0x80 >> (i & 7);
  }
  let text = '';
  for (let k = 0; k < bytes.length; k++) text += String.fromCharCode(bytes[k]);
  return { kind: 'bitmap', i0: 0, j0: 0, width: nx, height: ny, data: btoa(text) };
}
