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
import { PANEL_ORDER, splitRef, traverse, type Contour, type Panel } from './contour';

/**
 * Largest accepted phase step between neighbouring nodes. Well below π so an
 * aliased step (true step > π seen as its 2π complement) is out of reach, and small
 * enough that node spacing tracks the distance of nearby poles, which the contour
 * integral needs too (common practice, no source).
 */
export const PHASE_LIMIT = Math.PI / 6;

export interface WindingCount {
  /** The settled winding number, or null when the node budget ran out first. */
  winding: number | null;
  /** Largest |phase step| between neighbours on the final contour. */
  maxStep: number;
  /** Bisection rounds spent. */
  rounds: number;
  note?: string;
}

/** Evaluates the nodes of one panel (one LU per node); false when the node budget is spent. */
export type PanelEvaluator = (panel: Panel) => boolean;

/**
 * Phase steps between consecutive nodes of an evaluated contour (the last entry
 * closes the loop) and the winding number they add up to.
 */
export function phaseSteps(contour: Contour): { steps: Float64Array; winding: number; total: number } {
  const args: number[] = [];
  for (const { node } of traverse(contour)) args.push(node.arg);
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
 * Refines the contour in place until every phase step is below PHASE_LIMIT and the
 * count is stable under one extra bisection, then returns the winding number.
 * Panels without nodes are evaluated through `evaluate`.
 */
export function settleWinding(contour: Contour, evaluate: PanelEvaluator, maxRounds = 40): WindingCount {
  let lastSmooth: number | null = null;
  for (let round = 0; round < maxRounds; round++) {
    for (const ref of contour.refs) {
      if (!ref.panel.nodes && !evaluate(ref.panel)) {
        return { winding: null, maxStep: NaN, rounds: round, note: 'node budget spent before the count settled' };
      }
    }
    const { steps, winding, total } = phaseSteps(contour);
    const marked = new Set<number>();
    let maxStep = 0;
    let worst = 0;
    for (let k = 0; k < steps.length; k++) {
      const s = Math.abs(steps[k]);
      if (!(s <= maxStep)) {
        maxStep = s;
        worst = k;
      }
      if (!(s <= PHASE_LIMIT)) {
        marked.add(Math.floor(k / PANEL_ORDER));
        marked.add(Math.floor(((k + 1) % steps.length) / PANEL_ORDER));
      }
    }
    const integral = Number.isFinite(total) && Math.abs(total / (2 * Math.PI) - winding) < 1e-6;
    if (marked.size === 0 && integral) {
      if (lastSmooth === winding) return { winding, maxStep, rounds: round };
      lastSmooth = winding;
      // Consistency check: bisect the panels around the largest step once more.
      marked.add(Math.floor(worst / PANEL_ORDER));
      marked.add(Math.floor(((worst + 1) % steps.length) / PANEL_ORDER));
    } else {
      lastSmooth = null;
    }
    const refs = [];
    for (let p = 0; p < contour.refs.length; p++) {
      if (marked.has(p)) refs.push(...splitRef(contour.refs[p]));
      else refs.push(contour.refs[p]);
    }
    contour.refs = refs;
  }
  return { winding: null, maxStep: NaN, rounds: maxRounds, note: 'phase steps did not settle below the limit' };
}
