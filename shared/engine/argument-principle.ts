/**
 * Counting the zeros of det T(z) inside a contour by the argument principle:
 * N = (1/2π) Σ_k wrap(arg det T(z_{k+1}) − arg det T(z_k)) around the closed chain
 * of nodes, wrap() into (−π, π] (Ahlfors, "Complex Analysis", 3rd ed., ch. 5.2;
 * T is analytic inside one piece, so there are no poles of det T to subtract).
 *
 * The count is only right when no true phase increment between neighbours reaches
 * π, so panels are bisected wherever an observed increment exceeds PHASE_LIMIT,
 * and the settled count must survive one further bisection of the panels around
 * the largest increment. Cost: one LU per new node, no solves needed for the count.
 */
import { PANEL_ORDER, splitRefInto, traverse, type Contour, type Panel } from './contour';

/**
 * Largest accepted phase step between neighbouring nodes. Well below π so an
 * aliased step (true step > π seen as its 2π complement) is out of reach, and small
 * enough that node spacing tracks the distance of nearby poles, which the contour
 * integral needs too (common practice, no source).
 */
const PHASE_LIMIT = Math.PI / 4;

export interface WindingCount {
  /** The settled winding number, or null when the node budget ran out first. */
  winding: number | null;
  /** Largest |phase step| between neighbours on the final contour. */
  maxStep: number;
  /** Bisection rounds spent. */
  rounds: number;
  note?: string;
}

/**
 * A phase to take off arg det T at z: Σ_k arg(z − z_k) over zeros z_k already found.
 * det T(z)/Π(z − z_k) winds (count − found inside) times and, once the zeros near the
 * contour are known, its phase is smooth, so far fewer nodes settle the count.
 */
type PhaseShift = (zRe: number, zIm: number) => number;

interface SettleOptions {
  /** Phase taken off every node before the steps are checked. */
  shift?: PhaseShift;
  /** Called each round once all panels are evaluated, before the check (it may change `shift`'s zeros). */
  beforeCheck?: () => void;
  maxRounds?: number;
}

/** Evaluates the nodes of one panel (one LU per node); false when the node budget is spent. */
type PanelEvaluator = (panel: Panel) => boolean;

/**
 * Phase steps between consecutive nodes of an evaluated contour (the last entry
 * closes the loop) and the winding number they add up to.
 */
export function phaseSteps(contour: Contour, shift?: PhaseShift): { steps: Float64Array; winding: number; total: number } {
  const args: number[] = [];
  for (const { node } of traverse(contour)) args.push(shift ? node.arg - shift(node.zRe, node.zIm) : node.arg);
  const m = args.length;
  const steps = new Float64Array(m);
  let total = 0;
  for (let k = 0; k < m; k++) {
    const d = args[(k + 1) % m] - args[k];
    const s = Number.isFinite(d) ? wrapPhase(d) : Infinity;
    steps[k] = s;
    total += s;
  }
  return { steps, winding: Math.round(total / (2 * Math.PI)) + 0, total }; // + 0 turns −0 into 0
}

/** Wraps a phase difference into (−π, π]. */
export function wrapPhase(d: number): number {
  let r = d % (2 * Math.PI);
  if (r > Math.PI) r -= 2 * Math.PI;
  else if (r <= -Math.PI) r += 2 * Math.PI;
  return r;
}

/**
 * What the count asks its driver for: the nodes of these unevaluated panels (answer
 * true once they are all evaluated, false when the node budget does not allow it),
 * or a pause before the phase check (the pole search refines candidates there).
 */
type SettleRequest = { kind: 'panels'; panels: Panel[] } | { kind: 'check' };

/**
 * Refines the contour in place until every phase step is below PHASE_LIMIT and the
 * count is stable under one extra bisection, then returns the winding number (of
 * det T, or of det T/Π(z − z_k) when options.shift is given).
 * Panels without nodes are evaluated through `evaluate`.
 */
export function settleWinding(contour: Contour, evaluate: PanelEvaluator, options: SettleOptions = {}): WindingCount {
  const steps = settleSteps(contour, options);
  let answer: boolean | undefined;
  for (;;) {
    const next = steps.next(answer as boolean);
    if (next.done) return next.value;
    if (next.value.kind === 'panels') answer = next.value.panels.every((p) => evaluate(p));
    else {
      options.beforeCheck?.();
      answer = undefined;
    }
  }
}

/**
 * settleWinding as a generator: each round it yields every unevaluated panel at once
 * (so a driver may evaluate their nodes in parallel), then a 'check' pause. The
 * result does not depend on how the driver evaluates the panels.
 */
export function* settleSteps(contour: Contour, options: Omit<SettleOptions, 'beforeCheck'> = {}): Generator<SettleRequest, WindingCount, boolean> {
  const maxRounds = options.maxRounds ?? 40;
  let lastSmooth: number | null = null;
  for (let round = 0; round < maxRounds; round++) {
    const fresh = contour.refs.filter((r) => !r.panel.nodes).map((r) => r.panel);
    if (fresh.length && !(yield { kind: 'panels', panels: fresh })) {
      return { winding: null, maxStep: NaN, rounds: round, note: 'node budget spent before the count settled' };
    }
    yield { kind: 'check' };
    const { steps, winding, total } = phaseSteps(contour, options.shift);
    // panel index → number of parts to cut it into; a step s needs about s/PHASE_LIMIT
    // times finer spacing, so cut in that many parts at once rather than bisect repeatedly
    // (every cut discards the panel's LUs)
    const marked = new Map<number, number>();
    const mark = (panel: number, parts: number): void => {
      marked.set(panel, Math.max(marked.get(panel) ?? 0, parts));
    };
    let maxStep = 0;
    let worst = 0;
    for (let k = 0; k < steps.length; k++) {
      const s = Math.abs(steps[k]);
      if (!(s <= maxStep)) {
        maxStep = s;
        worst = k;
      }
      if (!(s <= PHASE_LIMIT)) {
        const parts = Number.isFinite(s) ? Math.min(6, Math.ceil((1.2 * s) / PHASE_LIMIT)) : 2;
        mark(Math.floor(k / PANEL_ORDER), parts);
        mark(Math.floor(((k + 1) % steps.length) / PANEL_ORDER), parts);
      }
    }
    const integral = Number.isFinite(total) && Math.abs(total / (2 * Math.PI) - winding) < 1e-6;
    if (marked.size === 0 && integral) {
      if (lastSmooth === winding) return { winding, maxStep, rounds: round };
      lastSmooth = winding;
      // Consistency check: bisect the panels around the largest step once more.
      mark(Math.floor(worst / PANEL_ORDER), 2);
      mark(Math.floor(((worst + 1) % steps.length) / PANEL_ORDER), 2);
    } else {
      lastSmooth = null;
    }
    const refs = [];
    for (let p = 0; p < contour.refs.length; p++) {
      const parts = marked.get(p);
      if (parts) refs.push(...splitRefInto(contour.refs[p], parts));
      else refs.push(contour.refs[p]);
    }
    contour.refs = refs;
  }
  return { winding: null, maxStep: NaN, rounds: maxRounds, note: 'phase steps did not settle below the limit' };
}
