/**
 * Reproducible random numbers for ensembles: a realisation's numbers depend only
 * on its recorded seed, on every platform. mulberry32 (a 32-bit counter generator
 * with a murmur-style finaliser; common practice, no source) for uniforms, and the
 * Box–Muller transform for normal deviates (Numerical Recipes §7.3).
 */
export class SeededRandom {
  private state: number;
  private spare: number | null = null;

  constructor(seed: number) {
    this.state = seed >>> 0;
  }

  /** Uniform in (0, 1). */
  uniform(): number {
    this.state = (this.state + 0x6d2b79f5) >>> 0;
    let x = this.state;
    x = Math.imul(x ^ (x >>> 15), x | 1);
    x ^= x + Math.imul(x ^ (x >>> 7), x | 61);
    return (((x ^ (x >>> 14)) >>> 0) + 0.5) / 4294967296;
  }

  /** Standard normal deviate. */
  normal(): number {
    if (this.spare !== null) {
      const s = this.spare;
      this.spare = null;
      return s;
    }
    const r = Math.sqrt(-2 * Math.log(this.uniform()));
    const phi = 2 * Math.PI * this.uniform();
    this.spare = r * Math.sin(phi);
    return r * Math.cos(phi);
  }
}

/** The seed of realisation r (1-based) of an ensemble with base seed `seed`: a 32-bit hash of both. */
export function realisationSeed(seed: number, r: number): number {
  let h = (Math.imul(seed >>> 0, 0x9e3779b1) ^ Math.imul(r >>> 0, 0x85ebca77)) >>> 0;
  h = Math.imul(h ^ (h >>> 16), 0x7feb352d);
  h = Math.imul(h ^ (h >>> 15), 0x846ca68b);
  return (h ^ (h >>> 16)) >>> 0;
}
