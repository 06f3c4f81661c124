/**
 * The independent pieces of work of a pole search, behind one interface so that a
 * caller can spread them over threads: contour nodes (one LU of T(z), log det T and
 * the probed resolvent UᴴT⁻¹V each) and Newton refinements of candidates (2–4 LUs
 * each). The search (poles.ts) asks for them in batches and uses the answers in
 * request order, so the result does not depend on who computed them or in which
 * order: a pool of threads gives the same poles and certificate as one thread.
 *
 * This file holds no Node API: server/jobs implements PoleWork with worker_threads;
 * SerialPoleWork is the one-thread implementation (and what each worker runs).
 */
import type { NonlinearOperator, SheetFlags } from './operator';
import type { ContourNode } from './contour';
import type { PoleFactorPlan } from './pole-types';
import { SparseLuPlan, type SparseLuFactors } from './sparse-lu';
import { factorNear, refinePole, type RefinedPole } from './pole-refine';

/** What every worker must agree on: the probe block (from the seed) and Newton's tolerance. */
export interface PoleWorkSetup {
  probes: number;
  seed: number;
  tolerance: number;
}

/** One contour node: T(z) on the given sheet. */
export interface NodeRequest {
  zRe: number;
  zIm: number;
  sheet: SheetFlags;
}

/** One Newton refinement from a candidate, with its start vector (interleaved, length 2n). */
export interface RefineRequest {
  zRe: number;
  zIm: number;
  sheet: SheetFlags;
  stripLo: number;
  stripHi: number;
  start: Float64Array;
}

export interface RefineOutcome {
  pole: RefinedPole | null;
  /** LUs the refinement spent (for the search's statistics). */
  factorisations: number;
}

/** The work of a search, asynchronous so that it can be farmed out. */
export interface PoleWork {
  readonly setup: PoleWorkSetup;
  evaluateNodes(requests: NodeRequest[]): Promise<ContourNode[]>;
  refine(requests: RefineRequest[]): Promise<RefineOutcome[]>;
}

/** Newton steps allowed per candidate. */
const REFINE_STEPS = 8;

/**
 * The probe blocks of a search: ℓ right and ℓ left random vectors (column-major n×ℓ,
 * complex entries uniform in the unit square around 0), drawn from a seeded
 * generator that the search keeps using for Newton start vectors.
 */
export function searchProbes(n: number, probes: number, seed: number): { right: Float64Array; left: Float64Array; random: () => number } {
  const random = mulberry32(seed);
  const right = randomBlock(n, probes, random);
  const left = randomBlock(n, probes, random);
  return { right, left, random };
}

/** A column-major n×ℓ block of complex entries uniform in the unit square around 0. */
export function randomBlock(n: number, l: number, random: () => number): Float64Array {
  const out = new Float64Array(2 * n * l);
  for (let k = 0; k < out.length; k++) out[k] = 2 * random() - 1;
  return out;
}

/** Small seeded generator (mulberry32, common practice, no source) so searches are reproducible. */
function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let r = Math.imul(a ^ (a >>> 15), 1 | a);
    r = (r + Math.imul(r ^ (r >>> 7), 61 | r)) ^ r;
    return ((r ^ (r >>> 14)) >>> 0) / 4294967296;
  };
}

/**
 * The work done on one thread. `onFactor` runs before every LU is used (statistics,
 * cancellation). Each node's LU takes over the storage of the previous node's
 * (SparseLuPlan only): it is finished with once its log det and probe solves are done.
 */
export class SerialPoleWork implements PoleWork {
  readonly setup: PoleWorkSetup;
  private readonly right: Float64Array;
  private readonly left: Float64Array;
  private readonly values: Float64Array;
  private readonly solved: Float64Array;
  private spare: SparseLuFactors | undefined;
  private readonly nodePlan: PoleFactorPlan;

  constructor(
    private readonly op: NonlinearOperator,
    private readonly plan: PoleFactorPlan,
    setup: PoleWorkSetup,
    private readonly onFactor: () => void = () => {},
  ) {
    this.setup = { ...setup };
    const probes = searchProbes(op.n, setup.probes, setup.seed);
    this.right = probes.right;
    this.left = probes.left;
    this.values = new Float64Array(2 * op.colPtr[op.n]);
    this.solved = new Float64Array(2 * op.n * setup.probes);
    const sparse = plan instanceof SparseLuPlan ? plan : undefined;
    this.nodePlan = sparse
      ? {
          factor: (v) => {
            const s = this.spare;
            this.spare = undefined;
            return sparse.factor(v, s);
          },
        }
      : plan;
  }

  /** One contour node: one LU, log det T and ℓ probe solves, projected to ℓ×ℓ. */
  node(zRe: number, zIm: number, sheet: SheetFlags): ContourNode {
    const op = this.op;
    const l = this.setup.probes;
    const f = factorNear(op, this.nodePlan, zRe, zIm, sheet, this.values);
    this.onFactor();
    const { logAbs, arg } = f.logDet();
    f.solve(this.right, l, this.solved);
    const probed = project(op.n, l, this.left, this.solved);
    if (this.plan instanceof SparseLuPlan) this.spare = f as SparseLuFactors;
    return { zRe, zIm, logAbs, arg, probed };
  }

  nodesSync(requests: NodeRequest[]): ContourNode[] {
    return requests.map((r) => this.node(r.zRe, r.zIm, r.sheet));
  }

  refineSync(requests: RefineRequest[]): RefineOutcome[] {
    return requests.map((r) => {
      let factorisations = 0;
      const pole = refinePole(
        {
          op: this.op,
          plan: this.plan,
          sheet: r.sheet,
          stripLo: r.stripLo,
          stripHi: r.stripHi,
          tolerance: this.setup.tolerance,
          maxSteps: REFINE_STEPS,
          onFactor: () => {
            factorisations++;
            this.onFactor();
          },
        },
        r.zRe,
        r.zIm,
        r.start,
      );
      return { pole, factorisations };
    });
  }

  evaluateNodes(requests: NodeRequest[]): Promise<ContourNode[]> {
    return Promise.resolve(this.nodesSync(requests));
  }

  refine(requests: RefineRequest[]): Promise<RefineOutcome[]> {
    return Promise.resolve(this.refineSync(requests));
  }
}

/** Y = Uᴴ X for column-major n×ℓ blocks U, X; Y row-major ℓ×ℓ. Cost O(nℓ²). */
function project(n: number, l: number, U: Float64Array, X: Float64Array): Float64Array {
  const Y = new Float64Array(2 * l * l);
  for (let a = 0; a < l; a++) {
    const ua = 2 * a * n;
    for (let b = 0; b < l; b++) {
      const xb = 2 * b * n;
      let re = 0;
      let im = 0;
      for (let i = 0; i < 2 * n; i += 2) {
        const ur = U[ua + i],
          ui = U[ua + i + 1],
          xr = X[xb + i],
          xi = X[xb + i + 1];
        re += ur * xr + ui * xi;
        im += ur * xi - ui * xr;
      }
      Y[2 * (a * l + b)] = re;
      Y[2 * (a * l + b) + 1] = im;
    }
  }
  return Y;
}
