/**
 * The retarded choice of a numerical lead's modes and its analytic continuation
 * into complex z inside one threshold piece (docs/physics-model.md, "Numerical leads").
 *
 * - Im z > 0 (physical sheet): the n modes with |λ| < 1.
 * - z = E real, inside a piece: |λ| < 1 off the unit circle (evanescent, decaying away
 *   from the cavity) plus the propagating modes with v = dE/dk > 0 (numerical-lead-modes.ts).
 * - Im z < 0: the continuation of that choice from the piece's real segment. No λ
 *   crosses the unit circle off the real axis (|λ| = 1 makes z an eigenvalue of the
 *   Hermitian H(k)), so the evanescent modes stay inside, the continued v > 0 modes
 *   stay outside and the continued v < 0 modes inside. Only the 2P continued
 *   propagating modes need telling apart from the evanescent ones on their side; they
 *   are followed from the real point x0 (Re z moved into the piece by at most
 *   max(|Im z|, 1e-6·width), never nearer a threshold than that) straight down to
 *   x0 + i·Im z and then across to z, with predicted steps λ + (dλ/dz)·Δz (first step
 *   dλ/dz = iλ/v) and a step accepted only when every predicted λ has its nearest
 *   eigenvalue on the expected side and at most a quarter as far as the next nearest
 *   (otherwise the step is halved). For the square lattice this reproduces the
 *   contract's frozen channel flags: an open channel's continued root is the outgoing
 *   one, a closed channel's the decaying one.
 * A piece with no propagating mode (below all bands, above them, or in a gap) needs
 * no tracking: its continuation is |λ| < 1 everywhere. Within 1e-10 of the piece's width of
 * the real axis the real axis's choice is taken (the side of a propagating λ is below rounding).
 */
import { leadPencil, realModes, realModesKept, type LeadCellBlocks, type LeadPencil } from './numerical-lead-modes';

/** A threshold piece (lo, hi) of the real axis; ±Infinity at the ends. */
export interface LeadPiece {
  lo: number;
  hi: number;
}

/** The pencil at z and the retarded (continued) choice per Schur diagonal entry. */
export interface RetardedChoice {
  pencil: LeadPencil;
  select: boolean[];
  /** Pencils solved along the tracking path (1 when no tracking was needed). */
  solves: number;
}

interface Tracked {
  re: number;
  im: number;
  slopeRe: number;
  slopeIm: number;
  outgoing: boolean;
}

/**
 * The retarded choice at z on the sheet of `piece`. Throws on a real z outside the
 * open piece, on a count other than n, and when the tracking cannot resolve the
 * modes (400 steps). Cost: one pencil (O(n³)) above the axis; one more per tracking
 * step below it (typically 2–6).
 */
export function retardedChoice(cell: LeadCellBlocks, zRe: number, zIm: number, piece: LeadPiece): RetardedChoice {
  const n = cell.size;
  const checkCount = (select: boolean[], where: string) => {
    const count = select.filter(Boolean).length;
    if (count !== n) throw new Error(`retardedChoice: ${count} retarded modes at z = ${zRe}${zIm >= 0 ? '+' : ''}${zIm}i (${where}), expected ${n}`);
  };
  // Within rounding of the real axis (|Im z| ≤ 1e-10 of the piece's width) the side of a
  // propagating λ is set by rounding, not by Im z: take the real axis's choice, its limit from
  // either side on this sheet (Σ differs from it by O(|Im z|·dΣ/dz)).
  const nearAxis = zIm !== 0 && Number.isFinite(piece.hi - piece.lo) && Math.abs(zIm) <= 1e-10 * (piece.hi - piece.lo) && zRe > piece.lo && zRe < piece.hi;
  if (nearAxis) {
    try {
      const modes = realModesKept(cell, zRe);
      return { pencil: modes.pencil, select: modes.retarded, solves: 1 };
    } catch (e) {
      // an exact band crossing at Re z: follow the modes as below
      if (!(e instanceof Error && /move both ways|retarded modes at/.test(e.message))) throw e;
    }
  }
  if (zIm > 0 || (zIm < 0 && (!Number.isFinite(piece.lo) || !Number.isFinite(piece.hi)))) {
    const pencil = leadPencil(cell, zRe, zIm);
    const select = pencil.inside.slice();
    checkCount(select, 'inside the unit circle');
    return { pencil, select, solves: 1 };
  }
  if (zIm === 0) {
    if (!(zRe > piece.lo && zRe < piece.hi)) throw new RangeError(`retardedChoice: real energy ${zRe} is not inside the piece (${piece.lo}, ${piece.hi})`);
    const modes = realModesKept(cell, zRe);
    return { pencil: modes.pencil, select: modes.retarded, solves: 1 };
  }
  const width = piece.hi - piece.lo;
  const delta = Math.min(0.25 * width, Math.max(Math.abs(zIm), 1e-6 * width));
  let x0 = Math.min(Math.max(zRe, piece.lo + delta), piece.hi - delta);
  let ref: ReferenceModes | undefined;
  // The continuation does not depend on where in the piece it starts: step aside from an
  // exact band crossing with opposite velocities (a degenerate λ the choice cannot split).
  for (const shift of [0, 0.01, -0.01, 0.03, -0.03]) {
    const x = Math.min(Math.max(x0 + shift * width, piece.lo + 0.5 * delta), piece.hi - 0.5 * delta);
    try {
      ref = referenceModes(cell, x);
      x0 = x;
      break;
    } catch (e) {
      if (!(e instanceof Error && /move both ways|retarded modes at/.test(e.message)) || shift === -0.03) throw e;
    }
  }
  if (!ref) throw new Error('retardedChoice: no reference energy in the piece');
  if (ref.propagating.length === 0) {
    const pencil = leadPencil(cell, zRe, zIm);
    const select = pencil.inside.slice();
    checkCount(select, 'no propagating modes in the piece');
    return { pencil, select, solves: ref.cached ? 1 : 2 };
  }
  const tracked: Tracked[] = ref.propagating.map((p) => ({
    re: p.lambdaRe,
    im: p.lambdaIm,
    slopeRe: -p.lambdaIm / p.velocity,
    slopeIm: p.lambdaRe / p.velocity,
    outgoing: p.velocity > 0,
  }));
  let cur = { re: x0, im: 0 };
  const legs = [{ re: x0, im: zIm }];
  if (zRe !== x0) legs.push({ re: zRe, im: zIm });
  let solves = ref.cached ? 0 : 1;
  let last: { pencil: LeadPencil; match: number[] } | undefined;
  for (const target of legs) {
    let h = Math.hypot(target.re - cur.re, target.im - cur.im);
    while (cur.re !== target.re || cur.im !== target.im) {
      const rest = Math.hypot(target.re - cur.re, target.im - cur.im);
      const full = h >= rest;
      const next = full ? { re: target.re, im: target.im } : { re: cur.re + ((target.re - cur.re) * h) / rest, im: cur.im + ((target.im - cur.im) * h) / rest };
      const pencil = leadPencil(cell, next.re, next.im);
      solves++;
      const match = matchTracked(pencil, tracked, next.re - cur.re, next.im - cur.im);
      if (!match) {
        h /= 2;
        if (solves > 400 || h < 1e-14 * (width + Math.abs(zIm)))
          throw new Error(`retardedChoice: could not follow the propagating modes to z = ${zRe}${zIm}i (modes too close together)`);
        continue;
      }
      const dzr = next.re - cur.re;
      const dzi = next.im - cur.im;
      const dz2 = dzr * dzr + dzi * dzi;
      tracked.forEach((t, j) => {
        const k = match[j];
        const nr = pencil.lambda[2 * k];
        const ni = pencil.lambda[2 * k + 1];
        const dr = nr - t.re;
        const di = ni - t.im;
        t.slopeRe = (dr * dzr + di * dzi) / dz2;
        t.slopeIm = (di * dzr - dr * dzi) / dz2;
        t.re = nr;
        t.im = ni;
      });
      cur = next;
      last = { pencil, match };
      h *= 2;
    }
  }
  const { pencil, match } = last!;
  const select = pencil.inside.slice();
  tracked.forEach((t, j) => {
    select[match[j]] = t.outgoing;
  });
  checkCount(select, 'continued from the real axis');
  return { pencil, select, solves };
}

/** The propagating modes at a real energy, as the tracking reads them (λ and velocity). */
interface ReferenceModes {
  propagating: readonly { lambdaRe: number; lambdaIm: number; velocity: number }[];
  /** Taken from the cache (no pencil solved for it this time). */
  cached: boolean;
}

/** Reference energies kept per cell: nodes of a contour side share Re z, hence x0. */
const REFERENCE_CACHE_SIZE = 32;
const referenceCache = new WeakMap<LeadCellBlocks, Map<number, ReferenceModes>>();

/**
 * realModes(cell, x) reduced to what the tracking reads, kept for the last few x of each cell
 * (only a cache: the same numbers as a fresh solve; failures are not kept). Cost O(n³) when new.
 */
function referenceModes(cell: LeadCellBlocks, x: number): ReferenceModes {
  let cache = referenceCache.get(cell);
  if (!cache) {
    cache = new Map();
    referenceCache.set(cell, cache);
  }
  const hit = cache.get(x);
  if (hit) return { ...hit, cached: true };
  const modes = realModes(cell, x);
  const fresh: ReferenceModes = {
    propagating: modes.propagating.map((p) => ({ lambdaRe: p.lambdaRe, lambdaIm: p.lambdaIm, velocity: p.velocity })),
    cached: false,
  };
  if (cache.size >= REFERENCE_CACHE_SIZE) cache.delete(cache.keys().next().value!);
  cache.set(x, fresh);
  return fresh;
}

/** Matches each tracked mode to an eigenvalue of the pencil, or undefined when ambiguous. */
function matchTracked(pencil: LeadPencil, tracked: Tracked[], dzr: number, dzi: number): number[] | undefined {
  const m = pencil.modulus.length;
  const used = new Set<number>();
  const out: number[] = [];
  for (const t of tracked) {
    const pr = t.re + (t.slopeRe * dzr - t.slopeIm * dzi);
    const pi = t.im + (t.slopeRe * dzi + t.slopeIm * dzr);
    let best = -1;
    let d1 = Infinity;
    let d2 = Infinity;
    for (let k = 0; k < m; k++) {
      if (!Number.isFinite(pencil.modulus[k])) continue;
      const d = Math.hypot(pencil.lambda[2 * k] - pr, pencil.lambda[2 * k + 1] - pi);
      if (d < d1) {
        d2 = d1;
        d1 = d;
        best = k;
      } else if (d < d2) d2 = d;
    }
    if (best < 0 || d1 > 0.25 * d2 || used.has(best) || pencil.inside[best] === t.outgoing) return undefined;
    used.add(best);
    out.push(best);
  }
  return out;
}
