/**
 * Marks where two trajectories meet (docs/physics-model.md, "Parameter studies").
 * For each pair followed over common steps, every interior step where their
 * distance |z_a − z_b| has a local minimum at least APPROACH times smaller than on
 * both sides (walking outwards until it has grown that much) is an encounter. Its
 * kind is read from the order of E and of Γ before and after:
 * - crossing: E_a − E_b changes sign (the poles pass each other; exact for modes of
 *   different symmetry);
 * - width exchange: the E order is kept but the Γ order flips (the broad and the
 *   narrow resonance trade widths, as in a two-level effective Hamiltonian near an
 *   exceptional point);
 * - avoided crossing: both orders kept (level repulsion).
 * The largest Petermann factor of the pair near the encounter is reported: a large
 * one (> 1.2) says the pair is near-coalescing (close to an exceptional point).
 * Encounters whose distance never grows APPROACH-fold on one side (the ends of the
 * sweep) are not marked. Cost O(T²·S) for T trajectories over S steps.
 */
import type { Trajectory } from './trajectory-linking';
import type { StepPole } from './study-step';

/** How many times closer than on both sides a pair must come to be an encounter. */
const APPROACH = 3;

export interface TrajectoryMark {
  kind: 'crossing' | 'avoided-crossing' | 'width-exchange';
  trajectories: [number, number];
  /** Step of the closest approach. */
  step: number;
  /** Closest distance |z_a − z_b| (meV). */
  distance: number;
  /** Steps on either side where the distance had grown APPROACH-fold. */
  from: number;
  to: number;
  /** Largest Petermann factor of the two poles from `from` to `to`. */
  petermann: number;
  /** Γ_a + Γ_b at `from`, `step` and `to` (the trace check of a two-level exchange). */
  widthSums: [number, number, number];
}

export function trajectoryMarks(trajectories: readonly Trajectory[], stepPoles: readonly (readonly StepPole[])[]): TrajectoryMark[] {
  const marks: TrajectoryMark[] = [];
  const at = trajectories.map((t) => {
    const m = new Map<number, StepPole>();
    for (const p of t.points) m.set(p.step, stepPoles[p.step][p.pole]);
    return m;
  });
  for (let a = 0; a < trajectories.length; a++) {
    for (let b = a + 1; b < trajectories.length; b++) {
      const common: number[] = [];
      for (const s of at[a].keys()) if (at[b].has(s)) common.push(s);
      common.sort((x, y) => x - y);
      if (common.length < 3) continue;
      const d = common.map((s) => distance(at[a].get(s)!, at[b].get(s)!));
      for (let k = 1; k + 1 < common.length; k++) {
        if (!(d[k] <= d[k - 1] && d[k] < d[k + 1])) continue;
        let lo = k;
        while (lo > 0 && !(d[lo] >= APPROACH * d[k])) lo--;
        let hi = k;
        while (hi < common.length - 1 && !(d[hi] >= APPROACH * d[k])) hi++;
        if (!(d[lo] >= APPROACH * d[k]) || !(d[hi] >= APPROACH * d[k])) continue;
        const [pa0, pb0] = [at[a].get(common[lo])!, at[b].get(common[lo])!];
        const [pa1, pb1] = [at[a].get(common[hi])!, at[b].get(common[hi])!];
        const eFlip = Math.sign(pa0.energy - pb0.energy) * Math.sign(pa1.energy - pb1.energy) < 0;
        const gFlip = Math.sign(pa0.width - pb0.width) * Math.sign(pa1.width - pb1.width) < 0;
        let petermann = 1;
        for (let s = lo; s <= hi; s++) petermann = Math.max(petermann, at[a].get(common[s])!.petermann, at[b].get(common[s])!.petermann);
        const pk = [at[a].get(common[k])!, at[b].get(common[k])!];
        marks.push({
          kind: eFlip ? 'crossing' : gFlip ? 'width-exchange' : 'avoided-crossing',
          trajectories: [trajectories[a].id, trajectories[b].id],
          step: common[k],
          distance: d[k],
          from: common[lo],
          to: common[hi],
          petermann,
          widthSums: [pa0.width + pb0.width, pk[0].width + pk[1].width, pa1.width + pb1.width],
        });
      }
    }
  }
  return marks.sort((x, y) => x.step - y.step);
}

function distance(p: StepPole, q: StepPole): number {
  return Math.hypot(p.energy - q.energy, (p.width - q.width) / 2);
}
