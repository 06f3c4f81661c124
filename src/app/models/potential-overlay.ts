/** One potential term drawn over the lattice, in SVG site units (y down). */
type TermDrawing =
  | { kind: 'block'; x: number; y: number; w: number; h: number; positive: boolean; label: string; short: string; labelAt: { x: number; y: number } }
  | { kind: 'gaussian'; x: number; y: number; r: number; positive: boolean; label: string; short: string; labelAt: { x: number; y: number } };

const isNum = (v: unknown): v is number => typeof v === 'number' && Number.isFinite(v);

/**
 * Where the blocks and Gaussian bumps of a potential sit on the lattice drawing.
 * Site (i, j) is at (x, y) = (i·a, j·a) nm and is drawn centred at (i + ½, ny − j − ½);
 * a block [x₀, x₀+w) × [y₀, y₀+h) covers the sites i·a in that range, so its
 * rectangle spans x₀/a … (x₀+w)/a in site units. A Gaussian is drawn as its 1σ
 * circle (and a dashed 2σ halo). Incomplete terms (a field still empty) are skipped.
 */
export function potentialOverlay(terms: readonly Record<string, unknown>[], nx: number, ny: number, a: number): TermDrawing[] {
  if (!(a > 0)) return [];
  const out: TermDrawing[] = [];
  terms.forEach((t, k) => {
    if (t['kind'] === 'block') {
      const { x0, y0, width, height, value } = t as Record<string, unknown>;
      if (![x0, y0, width, height, value].every(isNum)) return;
      const [bx, by, bw, bh, v] = [x0, y0, width, height, value] as number[];
      const x = bx / a;
      const w = bw / a;
      const top = ny - (by + bh) / a;
      const h = bh / a;
      const short = `${k + 1}: ${signed(v)} meV`;
      out.push({
        kind: 'block',
        x,
        y: top,
        w,
        h,
        positive: v >= 0,
        label: `Term ${k + 1}: block, V = ${v} meV`,
        short,
        labelAt: { x: x + w / 2, y: Math.max(top - 0.6, -nx * 0.02) },
      });
    } else if (t['kind'] === 'gaussian') {
      const { cx, cy, sigma, amplitude } = t as Record<string, unknown>;
      if (![cx, cy, sigma, amplitude].every(isNum)) return;
      const x = (cx as number) / a + 0.5;
      const y = ny - (cy as number) / a - 0.5;
      const r = (sigma as number) / a;
      const v = amplitude as number;
      out.push({
        kind: 'gaussian',
        x,
        y,
        r,
        positive: v >= 0,
        label: `Term ${k + 1}: Gaussian, A = ${v} meV, σ = ${sigma} nm`,
        short: `${k + 1}: ${signed(v)} meV`,
        labelAt: { x, y: y - r - 0.6 },
      });
    }
  });
  void nx;
  return out;
}

function signed(v: number): string {
  return v > 0 ? `+${v}` : String(v);
}
