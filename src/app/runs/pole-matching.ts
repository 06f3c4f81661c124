/** A pole as the comparison needs it: E and Γ (meV). */
interface MatchPole {
  energy: number;
  width: number;
}

interface PoleMatch<P extends MatchPole> {
  a: P | null;
  b: P | null;
  /** E_b − E_a and Γ_b − Γ_a (meV); null for a pole without partner. */
  dEnergy: number | null;
  dWidth: number | null;
  /** |z_b − z_a| with z = E − iΓ/2 (meV). */
  distance: number | null;
  /** True for a pole outside the energy range both runs searched: the other run could not have it. */
  outside: boolean;
}

/**
 * Pairs the poles of two runs by nearest pole in the complex energy plane
 * (z = E − iΓ/2): all pairs sorted by |z_a − z_b|, each pole used once, closest
 * first, so two close poles of A do not both claim one pole of B. Pairs further
 * apart than `maxDistance` stay unmatched. With `shared` (the energy range both
 * runs searched), only poles inside it are paired: a pole outside it has no
 * partner because the other run never looked there, and is marked `outside`.
 * Rows are sorted by energy. Cost O(n·m·log(n·m)).
 */
export function matchPoles<P extends MatchPole>(
  a: readonly P[],
  b: readonly P[],
  maxDistance = Infinity,
  shared: { emin: number; emax: number } | null = null,
): PoleMatch<P>[] {
  const inside = (p: P) => !shared || (p.energy >= shared.emin && p.energy <= shared.emax);
  const pairs: { i: number; j: number; d: number }[] = [];
  for (let i = 0; i < a.length; i++) {
    if (!inside(a[i])) continue;
    for (let j = 0; j < b.length; j++) {
      if (!inside(b[j])) continue;
      const d = Math.hypot(a[i].energy - b[j].energy, (a[i].width - b[j].width) / 2);
      if (d <= maxDistance) pairs.push({ i, j, d });
    }
  }
  pairs.sort((x, y) => x.d - y.d);
  const usedA = new Set<number>();
  const usedB = new Set<number>();
  const rows: PoleMatch<P>[] = [];
  for (const { i, j, d } of pairs) {
    if (usedA.has(i) || usedB.has(j)) continue;
    usedA.add(i);
    usedB.add(j);
    rows.push({ a: a[i], b: b[j], dEnergy: b[j].energy - a[i].energy, dWidth: b[j].width - a[i].width, distance: d, outside: false });
  }
  a.forEach((p, i) => usedA.has(i) || rows.push({ a: p, b: null, dEnergy: null, dWidth: null, distance: null, outside: !inside(p) }));
  b.forEach((p, j) => usedB.has(j) || rows.push({ a: null, b: p, dEnergy: null, dWidth: null, distance: null, outside: !inside(p) }));
  return rows.sort((x, y) => (x.a ?? x.b)!.energy - (y.a ?? y.b)!.energy);
}
