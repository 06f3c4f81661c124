/**
 * The search of one piece of a pole search's window (poles.ts): evaluate contour
 * panels until the argument-principle count settles (argument-principle.ts), with the
 * poles found so far divided out; between rounds, the block Hankel eigenvalues of the
 * contour moments (contour-eigenvalues.ts) are Newton-refined (pole-refine.ts) and
 * deduplicated. Written as a generator that yields batches of independent work
 * (contour nodes, refinements), so the LUs can run on other threads.
 */
import type { NonlinearOperator } from './operator';
import { phaseSteps, settleSteps, type WindingCount } from './argument-principle';
import { contourEigenvalues } from './contour-eigenvalues';
import { PANEL_ORDER, panelPoints, splitRef, type ContourNode, type Panel } from './contour';
import { normalise } from './pole-refine';
import { randomBlock, type NodeRequest, type RefineOutcome, type RefineRequest } from './pole-work';
import { cutPiece, inside, insideCount, type FoundPole, type Piece } from './pole-pieces';

/** A batch of independent work the search needs before it can go on. */
export type WorkRequest = { kind: 'nodes'; requests: NodeRequest[] } | { kind: 'refine'; requests: RefineRequest[] };
export type WorkAnswer = ContourNode[] | RefineOutcome[];
export type Steps<T> = Generator<WorkRequest, T, WorkAnswer>;

/** Largest number of Hankel blocks K per side (conditioning of s^p grows with p). */
const MAX_MOMENTS = 8;
/** How many times a piece may be cut in two when its count does not match. */
const MAX_CUT_DEPTH = 3;
/** Candidates with a relative residual above this after Newton are not poles. */
const SPURIOUS_RESIDUAL = 1e-8;

/** What the pieces of one search share: the poles found, the random probe stream and the LU counts. */
export interface SearchState {
  op: NonlinearOperator;
  probes: number;
  maxNodes: number;
  gammaMax: number;
  random: () => number;
  found: FoundPole[];
  nodesSpent: number;
  nodeFactorisations: number;
  factorisations: number;
  /** Progress of the refinement stage, as a fraction of the whole search. */
  reportRefine: () => void;
}

/**
 * Searches one piece: settles its count, refines the poles inside, and retries once
 * with every panel bisected and more moments. Returns the two halves when the piece
 * must be cut (the caller searches them in its place), else null: the piece is done,
 * with its winding number and, when the count and the poles disagree, a note.
 */
export function* searchPiece(state: SearchState, piece: Piece): Steps<[Piece, Piece] | null> {
  const { op, probes, found } = state;
  const evaluatePanels = function* (panels: Panel[]): Steps<boolean> {
    if (state.nodesSpent + PANEL_ORDER * panels.length > state.maxNodes) return false;
    const requests: NodeRequest[] = [];
    for (const panel of panels) {
      const pts = panelPoints(panel);
      for (let k = 0; k < PANEL_ORDER; k++) requests.push({ zRe: pts[2 * k], zIm: pts[2 * k + 1], sheet: piece.sheet });
    }
    const nodes = (yield { kind: 'nodes', requests }) as ContourNode[];
    state.nodesSpent += requests.length;
    state.nodeFactorisations += requests.length;
    state.factorisations += requests.length;
    panels.forEach((panel, k) => (panel.nodes = nodes.slice(k * PANEL_ORDER, (k + 1) * PANEL_ORDER)));
    return true;
  };

  let settled = false;
  let tooMany = false;
  for (let attempt = 0; attempt < 2 && !settled && !tooMany; attempt++) {
    if (attempt > 0) piece.contour.refs = piece.contour.refs.flatMap((r) => splitRef(r));
    const strip = (): FoundPole[] => found.filter((f) => f.strip === piece.strip);
    const rejected: [number, number][] = [];
    let eigenvaluePanels = -1;
    // Between rounds: new nodes → new Hankel candidates → Newton, so the deflated phase
    // check below always sees every pole found so far.
    const beforeCheck = function* (): Steps<void> {
      const panels = piece.contour.refs.length;
      if (panels === eigenvaluePanels) return;
      eigenvaluePanels = panels;
      const raw = phaseSteps(piece.contour).winding;
      const known = insideCount(found, piece);
      const guess = Math.max(raw, known + 1, 1);
      let K = Math.ceil((guess + Math.max(2, Math.ceil(guess / 2)) + 1) / probes) + attempt;
      if (K > MAX_MOMENTS) {
        tooMany = raw > MAX_MOMENTS * probes - 3;
        K = MAX_MOMENTS;
      }
      let eig = contourEigenvalues(piece.contour, probes, K);
      // A full-rank Hankel matrix means more eigenvalues than the block holds: widen it (no new LUs).
      while (eig.rank === probes * K && K < MAX_MOMENTS) eig = contourEigenvalues(piece.contour, probes, ++K);
      state.reportRefine();
      const spent = yield* refineCandidates(eig.values, piece, found, rejected, state.random, op, attempt > 0);
      state.factorisations += spent;
    };
    const shift = (zRe: number, zIm: number): number => {
      let a = 0;
      for (const f of strip()) a += Math.atan2(zIm - f.zIm, zRe - f.zRe);
      return a;
    };
    const settle = settleSteps(piece.contour, { shift });
    let count: WindingCount;
    let answer: boolean | undefined;
    for (;;) {
      const next = settle.next(answer as boolean);
      if (next.done) {
        count = next.value;
        break;
      }
      if (next.value.kind === 'panels') answer = yield* evaluatePanels(next.value.panels);
      else {
        yield* beforeCheck();
        answer = undefined;
      }
    }
    if (count.winding === null) {
      piece.winding = null;
      piece.note = count.note;
      break;
    }
    // winding of det T = winding of det T/Π(z − z_k) + the found zeros inside
    piece.winding = count.winding + insideCount(found, piece);
    settled = count.winding === 0;
  }

  if (!settled && piece.winding !== null && piece.depth < MAX_CUT_DEPTH) {
    const halves = cutPiece(piece, found, state.gammaMax);
    if (halves) return halves;
  }
  if (!settled && piece.winding !== null && !piece.note) {
    piece.note = `argument principle counts ${piece.winding} pole(s) but ${insideCount(found, piece)} were found`;
  }
  return null;
}

/**
 * Newton-refines the Hankel eigenvalues that lie in (or just around) the piece's
 * contour, those inside first, as one batch of independent refinements. A candidate
 * next to a pole already found (or to one that already failed) is skipped: it is that
 * pole again, unless `nearKnown` asks to try them too (a degenerate partner is
 * missing). Returns the LUs spent.
 */
function* refineCandidates(
  values: Float64Array,
  piece: Piece,
  found: FoundPole[],
  rejected: [number, number][],
  random: () => number,
  op: NonlinearOperator,
  nearKnown: boolean,
): Steps<number> {
  const c = piece.contour;
  // Poles just outside (mostly below the bottom edge) are refined too: once known, they are
  // divided out of det T and no longer force fine panels on the nearby edge.
  const mx = 0.05 * (c.x1 - c.x0);
  const below = 0.5 * (c.y1 - c.y0);
  const my = 0.02 * (c.y1 - c.y0);
  const near = 1e-4 * Math.min(c.x1 - c.x0, c.y1 - c.y0);
  const candidates: { re: number; im: number; inner: boolean }[] = [];
  for (let k = 0; k < values.length / 2; k++) {
    const re = values[2 * k];
    const im = values[2 * k + 1];
    if (re > c.x0 - mx && re < c.x1 + mx && im > c.y0 - below && im < c.y1 + my) candidates.push({ re, im, inner: inside(c, re, im) });
  }
  candidates.sort((p, q) => Number(q.inner) - Number(p.inner) || p.re - q.re);
  const chosen: { re: number; im: number }[] = [];
  const requests: RefineRequest[] = [];
  for (const cand of candidates) {
    const close = (re: number, im: number): boolean => Math.hypot(re - cand.re, im - cand.im) < near;
    if (rejected.some(([re, im]) => close(re, im))) continue;
    // a cluster of m candidates at one place stands for m poles (a degenerate pole)
    const cluster = candidates.filter((o) => close(o.re, o.im)).length;
    const held = found.filter((f) => f.strip === piece.strip && close(f.zRe, f.zIm)).length;
    const planned = chosen.filter((o) => close(o.re, o.im)).length;
    if (!nearKnown && held + planned >= cluster) continue;
    chosen.push(cand);
    requests.push({ zRe: cand.re, zIm: cand.im, sheet: piece.sheet, stripLo: piece.stripLo, stripHi: piece.stripHi, start: randomBlock(op.n, 1, random) });
  }
  if (!requests.length) return 0;
  const outcomes = (yield { kind: 'refine', requests }) as RefineOutcome[];
  let spent = 0;
  outcomes.forEach((o, k) => {
    spent += o.factorisations;
    const r = o.pole;
    if (!r || !(r.residual <= SPURIOUS_RESIDUAL)) rejected.push([chosen[k].re, chosen[k].im]);
    else addPole(found, { ...r, strip: piece.strip, sheet: piece.sheet }, op.hopping);
  });
  return spent;
}

/**
 * Adds a refined pole unless it repeats one already found: same z to 1e-9·(t + |z|)
 * and a mode inside the span of the modes already held at that z (less than 30% of
 * its norm left after projecting them out). Independent modes at one z (a degenerate
 * pole) are each kept, as the argument principle counts the pole that many times.
 */
function addPole(found: FoundPole[], p: FoundPole, t: number): boolean {
  const same = found.filter((q) => q.strip === p.strip && Math.hypot(q.zRe - p.zRe, q.zIm - p.zIm) <= 1e-9 * (t + Math.hypot(p.zRe, p.zIm)));
  if (same.length) {
    // Gram–Schmidt of the held modes, then the part of p's mode outside their span
    const basis: Float64Array[] = [];
    const rest = Float64Array.from(p.right);
    for (const q of same) {
      const v = Float64Array.from(q.right);
      for (const b of basis) subtractProjection(v, b);
      if (normalise(v)) basis.push(v);
    }
    for (const b of basis) subtractProjection(rest, b);
    let r2 = 0;
    for (let i = 0; i < rest.length; i++) r2 += rest[i] * rest[i];
    if (Math.sqrt(r2) < 0.3) return false;
  }
  found.push(p);
  return true;
}

/** v ← v − b(bᴴv) for a unit vector b. */
function subtractProjection(v: Float64Array, b: Float64Array): void {
  let re = 0;
  let im = 0;
  for (let i = 0; i < v.length; i += 2) {
    re += b[i] * v[i] + b[i + 1] * v[i + 1];
    im += b[i] * v[i + 1] - b[i + 1] * v[i];
  }
  for (let i = 0; i < v.length; i += 2) {
    v[i] -= b[i] * re - b[i + 1] * im;
    v[i + 1] -= b[i] * im + b[i + 1] * re;
  }
}
