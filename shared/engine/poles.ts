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
 *    probes (for the block Hankel moments, contour-eigenvalues.ts).
 * 3. The count settles by bisecting panels (argument-principle.ts); the Hankel
 *    eigenvalues inside are refined by Newton (pole-refine.ts) and deduplicated.
 * 4. If the count and the poles found disagree: retry with every panel bisected and
 *    more moments, then cut the piece in two, and finally mark it uncertified.
 * Cost: one LU per contour node plus 2–3 per pole; each node also does ℓ solves.
 *
 * Files: pole-pieces.ts (step 1, cutting pieces), pole-piece-search.ts (steps 2–4 for
 * one piece), pole-certificate.ts (the certificate and the poles' observables).
 */
import { checkCancelled, type NonlinearOperator } from './operator';
import { SparseLuPlan } from './sparse-lu';
import { PANEL_ORDER } from './contour';
import { searchProbes, SerialPoleWork, type PoleWork, type PoleWorkSetup } from './pole-work';
import { assembleCertificate } from './pole-certificate';
import { windowPieces, type FoundPole, type Piece } from './pole-pieces';
import { searchPiece, type SearchState, type Steps, type WorkAnswer } from './pole-piece-search';
import type { PoleFactorPlan, PoleSearchOptions, PoleSearchResult, PoleWindow } from './pole-types';

export type { PoleSearchResult, PoleWindow } from './pole-types';
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

/** The search itself: piece set-up, the search of each piece, then the certificate. */
function* poleSearchSteps(op: NonlinearOperator, window: PoleWindow, options: PoleSearchOptions): Steps<PoleSearchResult> {
  const started = performance.now();
  const { probes, seed } = poleWorkSetup(options);
  const maxNodes = options.maxNodes ?? 4000;
  // the probe blocks are drawn first (the workers draw the same ones from the seed)
  const { random } = searchProbes(op.n, probes, seed);
  const { pieces, cuts, skipped } = windowPieces(op, window, maxNodes);

  const found: FoundPole[] = [];
  const done: Piece[] = [];
  const totalWidth = pieces.reduce((acc, p) => acc + (p.contour.x1 - p.contour.x0), 0);
  let widthDone = 0;
  let width = 0;
  let reported = 0;
  const report = (stage: string, fraction: number): void => {
    reported = Math.min(1, Math.max(reported, fraction)); // never step back, even when a piece is cut
    options.onProgress?.(stage, reported);
  };
  const state: SearchState = {
    op,
    probes,
    maxNodes,
    gammaMax: window.gammaMax,
    random,
    found,
    nodesSpent: 0,
    nodeFactorisations: 0,
    factorisations: 0,
    reportRefine: () => report('refine', (0.95 * (widthDone + 0.5 * width)) / totalWidth),
  };

  const queue = pieces.slice();
  while (queue.length) {
    checkCancelled(options);
    const piece = queue.shift()!;
    width = piece.contour.x1 - piece.contour.x0;
    report('contour', (0.95 * widthDone) / totalWidth);
    const halves = yield* searchPiece(state, piece);
    if (halves) {
      queue.unshift(...halves);
      continue;
    }
    done.push(piece);
    widthDone += width;
  }

  report('modes', 0.97);
  const { poles, certificate } = assembleCertificate(op, done, found, cuts, skipped);
  report('done', 1);
  return {
    poles,
    certificate,
    stats: {
      factorisations: state.factorisations,
      seconds: (performance.now() - started) / 1000,
      contourFactorisations: state.nodeFactorisations,
      refineFactorisations: state.factorisations - state.nodeFactorisations,
    },
  };
}

function validate(op: NonlinearOperator, w: PoleWindow, o: PoleSearchOptions): void {
  const where = 'findPoles';
  if (!w || typeof w !== 'object') throw new RangeError(`${where}: window must be an object { emin, emax, gammaMax }`);
  for (const key of ['emin', 'emax', 'gammaMax'] as const) {
    if (typeof w[key] !== 'number' || !Number.isFinite(w[key]))
      throw new RangeError(`${where}: window.${key} must be a finite number (meV), got ${String(w[key])}`);
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
