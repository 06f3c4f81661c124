import type { DrawingFrame } from './lattice-drawing';

/** One potential term drawn over the lattice, in drawing units (lattice-drawing.ts; y down). */
type TermDrawing =
  | { kind: 'block'; x: number; y: number; w: number; h: number; positive: boolean; label: string; short: string; labelAt: { x: number; y: number } }
  | { kind: 'gaussian'; x: number; y: number; r: number; positive: boolean; label: string; short: string; labelAt: { x: number; y: number } };

const isNum = (v: unknown): v is number => typeof v === 'number' && Number.isFinite(v);

/**
 * Where the blocks and Gaussian bumps of a potential sit on the lattice drawing (lattice-drawing.ts).
 * On the square lattice site (i, j) is at (x, y) = (i·a, j·a) and drawn as its cell, so a block
 * [x₀, x₀+w) × [y₀, y₀+h), which covers the sites i·a in that range, is drawn from the cell
 * edges x₀/a … (x₀+w)/a; on the honeycomb the atoms are points and the block is drawn at its real
 * place. A Gaussian is drawn as its 1σ circle (and a dashed 2σ halo) around its centre.
 * Incomplete terms (a field still empty) are skipped.
 */
export function potentialOverlay(terms: readonly Record<string, unknown>[], frame: DrawingFrame): TermDrawing[] {
  if (!(frame.unit > 0)) return [];
  const out: TermDrawing[] = [];
  terms.forEach((t, k) => {
    if (t['kind'] === 'block') {
      const { x0, y0, width, height, value } = t as Record<string, unknown>;
      if (![x0, y0, width, height, value].every(isNum)) return;
      const [bx, by, bw, bh, v] = [x0, y0, width, height, value] as number[];
      const x = frame.edgeX(bx);
      const w = frame.edgeX(bx + bw) - x;
      const top = frame.edgeY(by + bh);
      const h = frame.edgeY(by) - top;
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
        labelAt: { x: x + w / 2, y: Math.max(top - 0.6, -frame.width * 0.02) },
      });
    } else if (t['kind'] === 'gaussian') {
      const { cx, cy, sigma, amplitude } = t as Record<string, unknown>;
      if (![cx, cy, sigma, amplitude].every(isNum)) return;
      const x = frame.x(cx as number);
      const y = frame.y(cy as number);
      const r = (sigma as number) / frame.unit;
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
  return out;
}

function signed(v: number): string {
  return v > 0 ? `+${v}` : String(v);
}
