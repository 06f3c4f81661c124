/**
 * Links the poles of neighbouring steps into trajectories (docs/physics-model.md,
 * "Parameter studies"). From step k to k+1:
 * 1. every pole of k carried into k+1 by Newton (study-step.ts) is matched to the
 *    pole of k+1's certified list it converged to (same z within 1e-7·(|z| + 1e-3)
 *    meV); when several share that z (an exact crossing), the larger mode overlap wins;
 * 2. poles of k whose continuation failed or landed on no listed pole are matched
 *    by mode overlap alone (at least MIN_OVERLAP, the larger the better);
 * 3. what is left of k+1 starts new trajectories (poles entering the window), and
 *    what is left of k ends its trajectory (poles leaving it).
 * Matching is greedy on the score (continuation matches first, then by overlap),
 * so no pole is used twice. Cost O(P²·n) per step pair for P poles of n sites.
 */
import { modeOverlap, type SiteList } from './mode-overlap';
import type { ContinuedPole, StepPole } from './study-step';

/** Smallest overlap that links two poles without a continuation. */
export const MIN_OVERLAP = 0.5;

/** What the linker needs of one step (a StepResult has this shape). */
interface LinkableStep {
  poles: StepPole[];
  sites: SiteList;
  continued: ContinuedPole[] | null;
}

export interface TrajectoryPoint {
  step: number;
  pole: number;
  /** How this point was reached from the previous one. */
  link: 'start' | 'continuation' | 'overlap';
  /** Mode overlap with the previous point (null at the start). */
  overlap: number | null;
}

export interface Trajectory {
  id: number;
  points: TrajectoryPoint[];
  /** True when the first point is not at the first step (the pole entered the window). */
  entered: boolean;
  /** True when the last point is not at the last step (the pole left, or could not be followed). */
  left: boolean;
}

interface Linking {
  trajectories: Trajectory[];
  /**
   * Per step: true when continuation alone accounted for its poles (every pole of the
   * previous step continued onto a listed pole, and none entered). False for the first
   * step and wherever the certified search was needed to see a pole enter or leave.
   */
  coveredByContinuation: boolean[];
}

export function linkTrajectories(steps: readonly LinkableStep[]): Linking {
  const trajectories: Trajectory[] = [];
  const covered: boolean[] = steps.map(() => false);
  if (steps.length === 0) return { trajectories, coveredByContinuation: covered };
  // owner[p] = trajectory holding pole p of the current step
  let owner = steps[0].poles.map((_, p) => {
    trajectories.push({ id: trajectories.length, points: [{ step: 0, pole: p, link: 'start', overlap: null }], entered: false, left: false });
    return trajectories.length - 1;
  });
  for (let k = 0; k + 1 < steps.length; k++) {
    const a = steps[k];
    const b = steps[k + 1];
    const pairs: { p: number; q: number; score: number; link: 'continuation' | 'overlap'; overlap: number }[] = [];
    for (const c of a.continued ?? []) {
      const tol = 1e-7 * (Math.hypot(c.energy, c.width / 2) + 1e-3);
      b.poles.forEach((pole, q) => {
        if (Math.hypot(pole.energy - c.energy, (pole.width - c.width) / 2) > tol) return;
        const overlap = modeOverlap(c.mode, b.sites, pole.mode, b.sites);
        pairs.push({ p: c.from, q, score: 2 + overlap, link: 'continuation', overlap: modeOverlap(a.poles[c.from].mode, a.sites, pole.mode, b.sites) });
      });
    }
    // Overlap candidates for every pole: they only count where no continuation match is left.
    a.poles.forEach((pole, p) => {
      b.poles.forEach((other, q) => {
        const overlap = modeOverlap(pole.mode, a.sites, other.mode, b.sites);
        if (overlap >= MIN_OVERLAP) pairs.push({ p, q, score: overlap, link: 'overlap', overlap });
      });
    });
    pairs.sort((x, y) => y.score - x.score);
    const usedP = new Set<number>();
    const nextOwner: number[] = b.poles.map(() => -1);
    let viaContinuation = 0;
    for (const pair of pairs) {
      if (usedP.has(pair.p) || nextOwner[pair.q] >= 0) continue;
      usedP.add(pair.p);
      nextOwner[pair.q] = owner[pair.p];
      trajectories[owner[pair.p]].points.push({ step: k + 1, pole: pair.q, link: pair.link, overlap: pair.overlap });
      if (pair.link === 'continuation') viaContinuation++;
    }
    for (let p = 0; p < a.poles.length; p++) if (!usedP.has(p)) trajectories[owner[p]].left = true;
    for (let q = 0; q < b.poles.length; q++) {
      if (nextOwner[q] >= 0) continue;
      trajectories.push({ id: trajectories.length, points: [{ step: k + 1, pole: q, link: 'start', overlap: null }], entered: true, left: false });
      nextOwner[q] = trajectories.length - 1;
    }
    covered[k + 1] = a.continued !== null && viaContinuation === a.poles.length && viaContinuation === b.poles.length;
    owner = nextOwner;
  }
  return { trajectories, coveredByContinuation: covered };
}
