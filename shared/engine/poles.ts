/**
 * The certified pole search: every resonance z = E − iΓ/2 of T(z) = z − H − Σ(z)
 * in a window [emin, emax] × [−gammaMax/2, 0], with an argument-principle
 * certificate per piece of the window (docs/physics-model.md, "How the pole search works").
 *
 * 1. The window is cut at every channel threshold; each piece has fixed sheet
 *    flags, so T is analytic on its strip and continuous up to its thresholds, and
 *    its contour runs through them (square-root panels at the branch points, so the
 *    whole window is counted). The contour's top edge lies at +gammaMax/2:
 *    above the real axis this continuation is the physical sheet (no poles), and
 *    narrow resonances then sit far from every edge.
 * 2. At each contour node one LU gives log det T (for the count) and T⁻¹V for ℓ
 *    probes (for the block Hankel moments, beyn.ts).
 * 3. The count settles by bisecting panels (argument-principle.ts); the Hankel
 *    eigenvalues inside are refined by Newton (pole-refine.ts) and deduplicated.
 * 4. If the count and the poles found disagree: retry with every panel bisected and
 *    more moments, then cut the piece in two, and finally mark it uncertified.
 * Cost: one LU per contour node plus 2–3 per pole; each node also does ℓ solves.
 */
import { HBAR_MEV_PS } from '../units/constants';
import { checkCancelled, type NonlinearOperator, type SheetFlags } from './operator';
import { SparseLuPlan } from './sparse-lu';
import { phaseSteps, settleSteps, type WindingCount } from './argument-principle';
import { contourEigenvalues } from './beyn';
import {
  PANEL_ORDER,
  panelPoints,
  rectangleContour,
  referenceVertical,
  splitRef,
  type Contour,
  type ContourNode,
  type Panel,
  type PanelRef,
} from './contour';
import { normalise, type RefinedPole } from './pole-refine';
import {
  randomBlock,
  searchProbes,
  SerialPoleWork,
  type NodeRequest,
  type PoleWork,
  type PoleWorkSetup,
  type RefineOutcome,
  type RefineRequest,
} from './pole-work';
import type {
  CertificatePiece,
  Pole,
  PoleFactorPlan,
  PoleSearchOptions,
  PoleSearchResult,
  PoleWindow,
} from './pole-types';

export type { CertificatePiece, Pole, PoleSearchOptions, PoleSearchResult, PoleWindow } from './pole-types';
export type { PoleWork, PoleWorkSetup } from './pole-work';

/** A batch of independent work the search needs before it can go on. */
type WorkRequest = { kind: 'nodes'; requests: NodeRequest[] } | { kind: 'refine'; requests: RefineRequest[] };
type WorkAnswer = ContourNode[] | RefineOutcome[];
type Steps<T> = Generator<WorkRequest, T, WorkAnswer>;

/** Largest number of Hankel blocks K per side (conditioning of s^p grows with p). */
const MAX_MOMENTS = 8;
/** How many times a piece may be cut in two when its count does not match. */
const MAX_CUT_DEPTH = 3;
/** Candidates with a relative residual above this after Newton are not poles. */
const SPURIOUS_RESIDUAL = 1e-8;

interface Piece {
  contour: Contour;
  sheet: SheetFlags;
  /** Threshold interval (open) that Newton iterates must stay in. */
  stripLo: number;
  stripHi: number;
  strip: number;
  depth: number;
  winding: number | null;
  note?: string;
}

interface FoundPole extends RefinedPole {
  strip: number;
  sheet: SheetFlags;
}

/**
 * Finds and certifies every pole of `op` in `window`, on this thread.
 * @throws RangeError naming the bad field when the window or an option is invalid
 * @throws WorkCancelled when options.signal is aborted
 */
export function findPoles(op: NonlinearOperator, window: PoleWindow, options: PoleSearchOptions = {}): PoleSearchResult {
  validate(op, window, options);
  const plan: PoleFactorPlan = options.plan ?? SparseLuPlan.analyse(op.n, op.colPtr, op.rowIdx, { sites: op.sites });
  const work = new SerialPoleWork(op, plan, poleWorkSetup(options), () => checkCancelled(options));
  const steps = poleSearchSteps(op, window, options);
  let answer: WorkAnswer | undefined;
  for (;;) {
    const next = steps.next(answer as WorkAnswer);
    if (next.done) return next.value;
    answer = next.value.kind === 'nodes' ? work.nodesSync(next.value.requests) : work.refineSync(next.value.requests);
  }
}

/**
 * The same search with its LUs done by `work` (e.g. a pool of worker threads, each
 * with its own copy of the operator). The batches and the order their answers are
 * used in are those of findPoles, so the poles and certificate are the same to the
 * last bit whenever the workers' LUs are. `work.setup` must be poleWorkSetup(options).
 */
export async function findPolesWith(op: NonlinearOperator, window: PoleWindow, options: PoleSearchOptions, work: PoleWork): Promise<PoleSearchResult> {
  validate(op, window, options);
  const setup = poleWorkSetup(options);
  if (work.setup.probes !== setup.probes || work.setup.seed !== setup.seed || work.setup.tolerance !== setup.tolerance) {
    throw new RangeError(`findPolesWith: the work's setup ${JSON.stringify(work.setup)} differs from the search's ${JSON.stringify(setup)}`);
  }
  const steps = poleSearchSteps(op, window, options);
  let answer: WorkAnswer | undefined;
  for (;;) {
    checkCancelled(options);
    const next = steps.next(answer as WorkAnswer);
    if (next.done) return next.value;
    answer = next.value.kind === 'nodes' ? await work.evaluateNodes(next.value.requests) : await work.refine(next.value.requests);
  }
}

/** The probe count, seed and Newton tolerance a search with these options uses. */
export function poleWorkSetup(options: PoleSearchOptions): PoleWorkSetup {
  return { probes: options.probes ?? 4, seed: options.seed ?? 1, tolerance: options.tolerance ?? 1e-12 };
}

/** The search itself: asks for nodes and refinements in batches, and does the rest. */
function* poleSearchSteps(op: NonlinearOperator, window: PoleWindow, options: PoleSearchOptions): Steps<PoleSearchResult> {
  const started = performance.now();
  const t = op.hopping;
  const { probes, seed } = poleWorkSetup(options);
  const maxNodes = options.maxNodes ?? 4000;
  const { emin, emax, gammaMax } = window;
  const y0 = -gammaMax / 2;
  const y1 = gammaMax / 2;
  // the probe blocks are drawn first (the workers draw the same ones from the seed)
  const { random } = searchProbes(op.n, probes, seed);

  let factorisations = 0;
  let nodesSpent = 0;
  let nodeFactorisations = 0;

  // The strips between thresholds. Each contour runs up to the thresholds themselves: with
  // frozen channel flags T is continuous there and analytic inside; only the square-root
  // branch point sits on the vertical edge, at Im z = 0, where the two panels touching it
  // use the square-root rule (contour.ts), so no strip of the window is left uncounted.
  const cuts = op.thresholds.filter((e) => e > emin && e < emax);
  const bounds = [emin, ...cuts, emax];
  const pieces: Piece[] = [];
  const skipped: string[] = [];
  // Panels of about 1.5·Γmax: narrow poles lie Γmax/2 from the top edge, and the deflated
  // phase check adds nodes only where a pole sits closer (tuned on the bench, see docs)
  // (at most a quarter of the node budget goes to the first bottom and top edges)
  const horizontalPanel = Math.max(1.5 * gammaMax, (emax - emin) / Math.max(1, Math.floor(maxNodes / (8 * PANEL_ORDER))));
  for (let s = 0; s + 1 < bounds.length; s++) {
    const a = bounds[s];
    const b = bounds[s + 1];
    if (!(b > a)) {
      skipped.push(`[${a}, ${b}]`);
      continue;
    }
    const leftIsThreshold = s > 0 || op.thresholds.includes(a);
    const rightIsThreshold = s + 1 < bounds.length - 1 || op.thresholds.includes(b);
    const mid = 0.5 * (a + b);
    const lo = op.thresholds.filter((e) => e <= a).pop() ?? -Infinity;
    const hi = op.thresholds.find((e) => e >= b) ?? Infinity;
    const vertical = { maxPanel: gammaMax };
    const atThreshold = { maxPanel: gammaMax, branchOnEdge: true };
    const contour = rectangleContour(
      a,
      b,
      y0,
      y1,
      { maxPanel: horizontalPanel },
      leftIsThreshold ? atThreshold : vertical,
      rightIsThreshold ? atThreshold : vertical,
    );
    pieces.push({ contour, sheet: op.sheetAt(mid), stripLo: lo, stripHi: hi, strip: s, depth: 0, winding: null });
  }

  const found: FoundPole[] = [];
  const done: Piece[] = [];
  const totalWidth = pieces.reduce((acc, p) => acc + (p.contour.x1 - p.contour.x0), 0);
  let widthDone = 0;
  let reported = 0;
  const report = (stage: string, fraction: number): void => {
    reported = Math.min(1, Math.max(reported, fraction)); // never step back, even when a piece is cut
    options.onProgress?.(stage, reported);
  };

  const queue = pieces.slice();
  while (queue.length) {
    checkCancelled(options);
    const piece = queue.shift()!;
    const width = piece.contour.x1 - piece.contour.x0;
    report('contour', (0.95 * widthDone) / totalWidth);
    const evaluatePanels = function* (panels: Panel[]): Steps<boolean> {
      if (nodesSpent + PANEL_ORDER * panels.length > maxNodes) return false;
      const requests: NodeRequest[] = [];
      for (const panel of panels) {
        const pts = panelPoints(panel);
        for (let k = 0; k < PANEL_ORDER; k++) requests.push({ zRe: pts[2 * k], zIm: pts[2 * k + 1], sheet: piece.sheet });
      }
      const nodes = (yield { kind: 'nodes', requests }) as ContourNode[];
      nodesSpent += requests.length;
      nodeFactorisations += requests.length;
      factorisations += requests.length;
      panels.forEach((panel, k) => (panel.nodes = nodes.slice(k * PANEL_ORDER, (k + 1) * PANEL_ORDER)));
      return true;
    };

    let settled = false;
    let tooMany = false;
    for (let attempt = 0; attempt < 2 && !settled && !tooMany; attempt++) {
      if (attempt > 0) piece.contour.refs = piece.contour.refs.flatMap((r) => splitRef(r));
      const strip = (): FoundPole[] => found.filter((f) => f.strip === piece.strip);
      const rejected: [number, number][] = [];
      let beynPanels = -1;
      // Between rounds: new nodes → new Hankel candidates → Newton, so the deflated phase
      // check below always sees every pole found so far.
      const beforeCheck = function* (): Steps<void> {
        const panels = piece.contour.refs.length;
        if (panels === beynPanels) return;
        beynPanels = panels;
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
        report('refine', (0.95 * (widthDone + 0.5 * width)) / totalWidth);
        const spent = yield* refineCandidates(eig.values, piece, found, rejected, random, op, attempt > 0);
        factorisations += spent;
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
      const halves = cutPiece(piece, found, gammaMax);
      if (halves) {
        queue.unshift(...halves);
        continue;
      }
    }
    if (!settled && piece.winding !== null && !piece.note) {
      piece.note = `argument principle counts ${piece.winding} pole(s) but ${insideCount(found, piece)} were found`;
    }
    done.push(piece);
    widthDone += width;
  }

  done.sort((p, q) => p.contour.x0 - q.contour.x0);
  report('modes', 0.97);
  const poles: Pole[] = [];
  const certPieces: CertificatePiece[] = done.map((p) => ({
    emin: p.contour.x0,
    emax: p.contour.x1,
    polesFound: 0,
    windingNumber: p.winding,
    certified: false,
    nodes: distinctNodes(p.contour),
    ...(p.note ? { note: p.note } : {}),
  }));
  const boundTolerance = 1e-10 * t;
  found.sort((p, q) => p.zRe - q.zRe || p.zIm - q.zIm);
  for (const f of found) {
    const k = done.findIndex((p) => p.strip === f.strip && inside(p.contour, f.zRe, f.zIm));
    if (k < 0) continue; // outside every contour (below the window, or beside it)
    certPieces[k].polesFound++;
    if (f.zIm > boundTolerance) {
      // det T has no zeros above the real axis on a correct continuation: say so rather than list it
      certPieces[k].note = `a zero of det T above the real axis at ${f.zRe} + ${f.zIm}i (operator fault?)`;
      continue;
    }
    poles.push(describePole(op, f, k, boundTolerance));
  }
  for (const c of certPieces) c.certified = c.windingNumber !== null && c.windingNumber === c.polesFound;
  const certified = certPieces.length > 0 && certPieces.every((c) => c.certified) && skipped.length === 0;
  const bad = certPieces.filter((c) => !c.certified).length;
  let summary = certified
    ? `${poles.length} pole(s) in ${certPieces.length} piece(s); every count confirmed by the argument principle`
    : `${poles.length} pole(s) in ${certPieces.length} piece(s); ${bad} piece(s) not certified`;
  if (cuts.length) summary += `; the contours run through ${cuts.length} channel threshold(s) (square-root panels at each branch point), so no strip is left out`;
  if (skipped.length) summary += `; intervals too narrow to search: ${skipped.join(', ')}`;
  report('done', 1);
  return {
    poles,
    certificate: { pieces: certPieces, certified, summary },
    stats: {
      factorisations,
      seconds: (performance.now() - started) / 1000,
      contourFactorisations: nodeFactorisations,
      refineFactorisations: factorisations - nodeFactorisations,
    },
  };
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
  const same = found.filter(
    (q) => q.strip === p.strip && Math.hypot(q.zRe - p.zRe, q.zIm - p.zIm) <= 1e-9 * (t + Math.hypot(p.zRe, p.zIm)),
  );
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

function inside(c: Contour, re: number, im: number): boolean {
  return re > c.x0 && re < c.x1 && im > c.y0 && im < c.y1;
}

function insideCount(found: FoundPole[], piece: Piece): number {
  return found.filter((f) => f.strip === piece.strip && inside(piece.contour, f.zRe, f.zIm)).length;
}

function distinctNodes(c: Contour): number {
  return new Set(c.refs.map((r) => r.panel)).size * PANEL_ORDER;
}

/**
 * Cuts a piece by a vertical line near its middle, as far as possible from the
 * poles already found, reusing the evaluated panels of the bottom and top edges.
 */
function cutPiece(piece: Piece, found: FoundPole[], gammaMax: number): [Piece, Piece] | null {
  const c = piece.contour;
  const width = c.x1 - c.x0;
  const poles = found.filter((f) => f.strip === piece.strip && inside(c, f.zRe, f.zIm)).map((f) => f.zRe);
  let best = 0.5 * (c.x0 + c.x1);
  let bestScore = -Infinity;
  for (let k = 1; k < 16; k++) {
    const x = c.x0 + 0.25 * width + (0.5 * width * k) / 16;
    const clearance = poles.reduce((m, e) => Math.min(m, Math.abs(e - x)), Infinity);
    const score = Math.min(clearance, 0.5 * width) - 0.25 * Math.abs(x - 0.5 * (c.x0 + c.x1));
    if (score > bestScore) {
      bestScore = score;
      best = x;
    }
  }
  const x = best;
  const leftRefs: PanelRef[] = [];
  const rightRefs: PanelRef[] = [];
  const bottom: PanelRef[] = [];
  const top: PanelRef[] = [];
  const rightEdge: PanelRef[] = [];
  const leftEdge: PanelRef[] = [];
  for (const r of c.refs) {
    const p = r.panel;
    if (p.aIm === c.y0 && p.bIm === c.y0) bottom.push(r);
    else if (p.aIm === c.y1 && p.bIm === c.y1) top.push(r);
    else if (p.aRe === c.x1) rightEdge.push(r);
    else leftEdge.push(r);
  }
  const splitAt = (refs: PanelRef[]): { low: PanelRef[]; high: PanelRef[] } => {
    const low: PanelRef[] = [];
    const high: PanelRef[] = [];
    for (const r of refs) {
      const p = r.panel;
      const lo = Math.min(p.aRe, p.bRe);
      const hi = Math.max(p.aRe, p.bRe);
      if (hi <= x) low.push(r);
      else if (lo >= x) high.push(r);
      else {
        // a panel straddling the cut becomes two fresh panels, in traversal order
        const forward = p.bRe > p.aRe;
        const pa: Panel = { aRe: p.aRe, aIm: p.aIm, bRe: x, bIm: p.bIm, nodes: null };
        const pb: Panel = { aRe: x, aIm: p.aIm, bRe: p.bRe, bIm: p.bIm, nodes: null };
        if (forward) {
          low.push({ panel: pa, reversed: r.reversed });
          high.push({ panel: pb, reversed: r.reversed });
        } else {
          high.push({ panel: pa, reversed: r.reversed });
          low.push({ panel: pb, reversed: r.reversed });
        }
      }
    }
    return { low, high };
  };
  const b = splitAt(bottom);
  const tp = splitAt(top);
  const cutPanels: Panel[] = [];
  const height = c.y1 - c.y0;
  const count = Math.max(1, Math.ceil(height / gammaMax - 1e-9));
  for (let k = 0; k < count; k++) {
    cutPanels.push({ aRe: x, aIm: c.y0 + (height * k) / count, bRe: x, bIm: k + 1 === count ? c.y1 : c.y0 + (height * (k + 1)) / count, nodes: null });
  }
  leftRefs.push(...b.low, ...referenceVertical(cutPanels, false), ...tp.low, ...leftEdge);
  rightRefs.push(...b.high, ...rightEdge, ...tp.high, ...referenceVertical(cutPanels, true));
  if (!b.low.length || !b.high.length) return null;
  const make = (refs: PanelRef[], x0: number, x1: number): Piece => ({
    ...piece,
    contour: { x0, x1, y0: c.y0, y1: c.y1, refs },
    depth: piece.depth + 1,
    winding: null,
    note: undefined,
  });
  return [make(leftRefs, c.x0, x), make(rightRefs, x, c.x1)];
}

/** The reported observables of a refined pole (contract, "Observables"). */
function describePole(op: NonlinearOperator, f: FoundPole, piece: number, boundTolerance: number): Pole {
  const bound = Math.abs(f.zIm) <= boundTolerance;
  const width = bound ? 0 : -2 * f.zIm;
  const z = { re: f.zRe, im: bound ? 0 : f.zIm };
  const psi = f.right;
  let norm2 = 0;
  for (let i = 0; i < psi.length; i++) norm2 += psi[i] * psi[i];
  const partialWidths: number[] = [];
  for (let l = 0; l < op.leadCount; l++) partialWidths.push(op.leadWidthForm(z, f.sheet, l, psi) / norm2);
  const K = petermann(f.left, psi);
  let nearThreshold: Pole['nearThreshold'] = null;
  if (!bound) {
    for (const th of op.thresholds) {
      const d = Math.abs(f.zRe - th);
      if (d < 3 * width && (!nearThreshold || d / width < nearThreshold.distanceInWidths)) {
        nearThreshold = { threshold: th, distanceInWidths: d / width };
      }
    }
  }
  return {
    energy: f.zRe,
    width,
    lifetimePs: bound ? null : HBAR_MEV_PS / width,
    quality: bound ? null : f.zRe / width,
    partialWidths,
    petermann: K,
    residual: f.residual,
    bound,
    nearThreshold,
    sheet: f.sheet.map((row) => row.slice()),
    piece,
    mode: modeImage(op, psi),
  };
}

/** K = (ψ_L†ψ_L)(ψ_R†ψ_R)/|ψ_Lᵀψ_R|². */
function petermann(l: Float64Array, r: Float64Array): number {
  let ll = 0;
  let rr = 0;
  let re = 0;
  let im = 0;
  for (let i = 0; i < r.length; i += 2) {
    ll += l[i] * l[i] + l[i + 1] * l[i + 1];
    rr += r[i] * r[i] + r[i + 1] * r[i + 1];
    re += l[i] * r[i] - l[i + 1] * r[i + 1];
    im += l[i] * r[i + 1] + l[i + 1] * r[i];
  }
  return (ll * rr) / (re * re + im * im);
}

/**
 * ψ normalised to Σ|ψ|² = 1 and rotated so its largest-magnitude site is real
 * positive; ties within 1e-9 relative go to the first site in (i, j) order (contract).
 */
export function modeImage(op: NonlinearOperator, psi: Float64Array): Float64Array {
  const out = Float64Array.from(psi);
  normalise(out);
  let maxAbs = 0;
  for (let s = 0; s < op.n; s++) maxAbs = Math.max(maxAbs, Math.hypot(out[2 * s], out[2 * s + 1]));
  let pick = -1;
  for (let s = 0; s < op.n; s++) {
    if (Math.hypot(out[2 * s], out[2 * s + 1]) < maxAbs * (1 - 1e-9)) continue;
    if (pick < 0 || op.sites.i[s] < op.sites.i[pick] || (op.sites.i[s] === op.sites.i[pick] && op.sites.j[s] < op.sites.j[pick])) pick = s;
  }
  const a = Math.hypot(out[2 * pick], out[2 * pick + 1]);
  const cr = out[2 * pick] / a;
  const ci = -out[2 * pick + 1] / a;
  for (let s = 0; s < op.n; s++) {
    const xr = out[2 * s], xi = out[2 * s + 1];
    out[2 * s] = xr * cr - xi * ci;
    out[2 * s + 1] = xr * ci + xi * cr;
  }
  out[2 * pick + 1] = 0;
  return out;
}

function validate(op: NonlinearOperator, w: PoleWindow, o: PoleSearchOptions): void {
  const where = 'findPoles';
  if (!w || typeof w !== 'object') throw new RangeError(`${where}: window must be an object { emin, emax, gammaMax }`);
  for (const key of ['emin', 'emax', 'gammaMax'] as const) {
    if (typeof w[key] !== 'number' || !Number.isFinite(w[key])) throw new RangeError(`${where}: window.${key} must be a finite number (meV), got ${String(w[key])}`);
  }
  if (!(w.emax > w.emin)) throw new RangeError(`${where}: window.emax (${w.emax}) must exceed window.emin (${w.emin})`);
  if (!(w.gammaMax > 0)) throw new RangeError(`${where}: window.gammaMax must be positive (meV), got ${w.gammaMax}`);
  if (o.probes !== undefined && !(Number.isInteger(o.probes) && o.probes >= 1 && o.probes <= 32)) {
    throw new RangeError(`${where}: options.probes must be an integer from 1 to 32, got ${o.probes}`);
  }
  if (o.maxNodes !== undefined && !(Number.isInteger(o.maxNodes) && o.maxNodes >= 4 * PANEL_ORDER)) {
    throw new RangeError(`${where}: options.maxNodes must be an integer of at least ${4 * PANEL_ORDER}, got ${o.maxNodes}`);
  }
  if (o.tolerance !== undefined && !(o.tolerance > 0 && o.tolerance < 1e-4)) {
    throw new RangeError(`${where}: options.tolerance must lie in (0, 1e-4), got ${o.tolerance}`);
  }
  if (o.seed !== undefined && !Number.isInteger(o.seed)) throw new RangeError(`${where}: options.seed must be an integer, got ${o.seed}`);
  if (!(op.n > 0) || op.colPtr.length !== op.n + 1) throw new RangeError(`${where}: operator has ${op.n} unknowns but ${op.colPtr.length} column pointers`);
  if (!(op.hopping > 0)) throw new RangeError(`${where}: operator hopping must be positive, got ${op.hopping}`);
}
