/**
 * The pieces of a pole search's window (poles.ts): the window cut at every channel
 * threshold, each piece a rectangle contour with fixed sheet flags, plus cutting a
 * piece in two when its count does not settle, and the tests of whether a pole lies
 * inside a piece.
 */
import type { NonlinearOperator, SheetFlags } from './operator';
import { PANEL_ORDER, rectangleContour, referenceVertical, type Contour, type Panel, type PanelRef } from './contour';
import type { RefinedPole } from './pole-refine';
import type { PoleWindow } from './pole-types';

/** One piece of the window: its contour, its sheet, and what its search found. */
export interface Piece {
  contour: Contour;
  sheet: SheetFlags;
  /** Threshold interval (open) that Newton iterates must stay in. */
  stripLo: number;
  stripHi: number;
  strip: number;
  depth: number;
  winding: number | null;
  note?: string;
}

/** A refined pole with the strip and sheet of the piece it was found in. */
export interface FoundPole extends RefinedPole {
  strip: number;
  sheet: SheetFlags;
}

/** The window's pieces, the thresholds that cut it, and intervals too narrow to search. */
interface WindowPieces {
  pieces: Piece[];
  cuts: number[];
  skipped: string[];
}

/**
 * Cuts the window at every channel threshold inside it. Each contour runs up to the
 * thresholds themselves: with frozen channel flags T is continuous there and analytic
 * inside; only the square-root branch point sits on the vertical edge, at Im z = 0,
 * where the two panels touching it use the square-root rule (contour.ts), so no strip
 * of the window is left uncounted. The contour's top edge lies at +gammaMax/2.
 */
export function windowPieces(op: NonlinearOperator, window: PoleWindow, maxNodes: number): WindowPieces {
  const { emin, emax, gammaMax } = window;
  const y0 = -gammaMax / 2;
  const y1 = gammaMax / 2;
  const cuts = op.thresholds.filter((e) => e > emin && e < emax);
  const bounds = [emin, ...cuts, emax];
  const pieces: Piece[] = [];
  const skipped: string[] = [];
  // Panels of about 1.5·Γmax: narrow poles lie Γmax/2 from the top edge, and the deflated
  // phase check adds nodes only where a pole sits closer (tuned on the bench, see docs)
  // (at most a quarter of the node budget goes to the first bottom and top edges)
  const horizontalPanel = Math.max(1.5 * gammaMax, (emax - emin) / Math.max(1, Math.floor(maxNodes / (8 * PANEL_ORDER))));
  for (let s = 0; s + 1 < bounds.length; s++) {
    const a = bounds[s];
    const b = bounds[s + 1];
    if (!(b > a)) {
      skipped.push(`[${a}, ${b}]`);
      continue;
    }
    const leftIsThreshold = s > 0 || op.thresholds.includes(a);
    const rightIsThreshold = s + 1 < bounds.length - 1 || op.thresholds.includes(b);
    const mid = 0.5 * (a + b);
    const lo = op.thresholds.filter((e) => e <= a).pop() ?? -Infinity;
    const hi = op.thresholds.find((e) => e >= b) ?? Infinity;
    const vertical = { maxPanel: gammaMax };
    const atThreshold = { maxPanel: gammaMax, branchOnEdge: true };
    const contour = rectangleContour(
      a,
      b,
      y0,
      y1,
      { maxPanel: horizontalPanel },
      leftIsThreshold ? atThreshold : vertical,
      rightIsThreshold ? atThreshold : vertical,
    );
    pieces.push({ contour, sheet: op.sheetAt(mid), stripLo: lo, stripHi: hi, strip: s, depth: 0, winding: null });
  }
  return { pieces, cuts, skipped };
}

export function inside(c: Contour, re: number, im: number): boolean {
  return re > c.x0 && re < c.x1 && im > c.y0 && im < c.y1;
}

export function insideCount(found: FoundPole[], piece: Piece): number {
  return found.filter((f) => f.strip === piece.strip && inside(piece.contour, f.zRe, f.zIm)).length;
}

export function distinctNodes(c: Contour): number {
  return new Set(c.refs.map((r) => r.panel)).size * PANEL_ORDER;
}

/**
 * Cuts a piece by a vertical line near its middle, as far as possible from the
 * poles already found, reusing the evaluated panels of the bottom and top edges.
 */
export function cutPiece(piece: Piece, found: FoundPole[], gammaMax: number): [Piece, Piece] | null {
  const c = piece.contour;
  const width = c.x1 - c.x0;
  const poles = found.filter((f) => f.strip === piece.strip && inside(c, f.zRe, f.zIm)).map((f) => f.zRe);
  let best = 0.5 * (c.x0 + c.x1);
  let bestScore = -Infinity;
  for (let k = 1; k < 16; k++) {
    const x = c.x0 + 0.25 * width + (0.5 * width * k) / 16;
    const clearance = poles.reduce((m, e) => Math.min(m, Math.abs(e - x)), Infinity);
    const score = Math.min(clearance, 0.5 * width) - 0.25 * Math.abs(x - 0.5 * (c.x0 + c.x1));
    if (score > bestScore) {
      bestScore = score;
      best = x;
    }
  }
  const x = best;
  const leftRefs: PanelRef[] = [];
  const rightRefs: PanelRef[] = [];
  const bottom: PanelRef[] = [];
  const top: PanelRef[] = [];
  const rightEdge: PanelRef[] = [];
  const leftEdge: PanelRef[] = [];
  for (const r of c.refs) {
    const p = r.panel;
    if (p.aIm === c.y0 && p.bIm === c.y0) bottom.push(r);
    else if (p.aIm === c.y1 && p.bIm === c.y1) top.push(r);
    else if (p.aRe === c.x1) rightEdge.push(r);
    else leftEdge.push(r);
  }
  const splitAt = (refs: PanelRef[]): { low: PanelRef[]; high: PanelRef[] } => {
    const low: PanelRef[] = [];
    const high: PanelRef[] = [];
    for (const r of refs) {
      const p = r.panel;
      const lo = Math.min(p.aRe, p.bRe);
      const hi = Math.max(p.aRe, p.bRe);
      if (hi <= x) low.push(r);
      else if (lo >= x) high.push(r);
      else {
        // a panel straddling the cut becomes two fresh panels, in traversal order
        const forward = p.bRe > p.aRe;
        const pa: Panel = { aRe: p.aRe, aIm: p.aIm, bRe: x, bIm: p.bIm, nodes: null };
        const pb: Panel = { aRe: x, aIm: p.aIm, bRe: p.bRe, bIm: p.bIm, nodes: null };
        if (forward) {
          low.push({ panel: pa, reversed: r.reversed });
          high.push({ panel: pb, reversed: r.reversed });
        } else {
          high.push({ panel: pa, reversed: r.reversed });
          low.push({ panel: pb, reversed: r.reversed });
        }
      }
    }
    return { low, high };
  };
  const b = splitAt(bottom);
  const tp = splitAt(top);
  const cutPanels: Panel[] = [];
  const height = c.y1 - c.y0;
  const count = Math.max(1, Math.ceil(height / gammaMax - 1e-9));
  for (let k = 0; k < count; k++) {
    cutPanels.push({ aRe: x, aIm: c.y0 + (height * k) / count, bRe: x, bIm: k + 1 === count ? c.y1 : c.y0 + (height * (k + 1)) / count, nodes: null });
  }
  leftRefs.push(...b.low, ...referenceVertical(cutPanels, false), ...tp.low, ...leftEdge);
  rightRefs.push(...b.high, ...rightEdge, ...tp.high, ...referenceVertical(cutPanels, true));
  if (!b.low.length || !b.high.length) return null;
  const make = (refs: PanelRef[], x0: number, x1: number): Piece => ({
    ...piece,
    contour: { x0, x1, y0: c.y0, y1: c.y1, refs },
    depth: piece.depth + 1,
    winding: null,
    note: undefined,
  });
  return [make(leftRefs, c.x0, x), make(rightRefs, x, c.x1)];
}
