import type { Lead, RectangleShape, Shape } from '../../../shared/model/cavity-model';
import { rasteriseShape } from '../../../shared/model/geometry';
import type { SitePlacement } from '../../../shared/model/lattice-geometry';

/** What the one-click helper found: the stub to add and the shape with it, or why none is needed. */
type LeadStubResult = { ok: true; stub: RectangleShape; shape: Shape } | { ok: false; reason: string };

/**
 * The rectangle joining a lead's mouth (on the grid edge) to the cavity: over the
 * lead's rows (or columns) it reaches from the edge to the deepest first cavity
 * site, so every mouth site is a cavity site and the stub touches the cavity on
 * every row. Rectangles are half-open (geometry.ts), so N columns take N·Δx and N rows
 * N·Δy (the lattice's column and row pitch: a and a on the square lattice, (√3/2)a_CC and
 * (3/2)a_CC on the honeycomb, whose lifted atoms, a_CC/2 above their row, stay inside).
 * The stub joins the shape as a union member (a union gets one more member).
 * Cost: one rasterisation, O(nx·ny).
 */
export function addLeadStub(shape: Shape, lead: Pick<Lead, 'side' | 'start' | 'width'>, nx: number, ny: number, placement: SitePlacement): LeadStubResult {
  const along = lead.side === 'left' || lead.side === 'right' ? ny : nx;
  if (lead.start < 0 || lead.width < 1 || lead.start + lead.width > along) {
    return { ok: false, reason: `the lead runs past the end of the ${lead.side} edge; fix its first site and width first` };
  }
  const mask = rasteriseShape(shape, nx, ny, placement.length, placement);
  const { dx, dy } = placement;
  const at = (i: number, j: number) => mask[i * ny + j] === 1;
  const horizontal = lead.side === 'left' || lead.side === 'right';
  const depthLimit = horizontal ? nx : ny;
  // Distance from the edge to the first cavity site, per row (or column) of the mouth.
  const depths: number[] = [];
  for (let p = lead.start; p < lead.start + lead.width; p++) {
    let d = 0;
    for (; d < depthLimit; d++) {
      const i = lead.side === 'left' ? d : lead.side === 'right' ? nx - 1 - d : p;
      const j = lead.side === 'bottom' ? d : lead.side === 'top' ? ny - 1 - d : p;
      if (at(i, j)) break;
    }
    depths.push(d);
  }
  if (depths.every((d) => d === 0)) return { ok: false, reason: 'every mouth site is already in the cavity: no stub needed' };
  const reached = depths.filter((d) => d < depthLimit);
  if (reached.length === 0) {
    return { ok: false, reason: `the cavity does not reach the lead's ${horizontal ? 'rows' : 'columns'} at all; move the lead in front of the cavity` };
  }
  // Rows that miss the cavity entirely take the depth of the rows that meet it.
  const depth = Math.max(...reached) + 1;
  const stub: RectangleShape =
    lead.side === 'left'
      ? rect(0, lead.start * dy, depth * dx, lead.width * dy)
      : lead.side === 'right'
        ? rect((nx - depth) * dx, lead.start * dy, depth * dx, lead.width * dy)
        : lead.side === 'bottom'
          ? rect(lead.start * dx, 0, lead.width * dx, depth * dy)
          : rect(lead.start * dx, (ny - depth) * dy, lead.width * dx, depth * dy);
  const joined: Shape = shape.kind === 'union' ? { kind: 'union', of: [...shape.of, stub] } : { kind: 'union', of: [shape, stub] };
  return { ok: true, stub, shape: joined };
}

function rect(x0: number, y0: number, width: number, height: number): RectangleShape {
  // Rounded so the document reads as typed numbers (a·N in floating point may end in …0000001).
  const r = (v: number) => Number(v.toPrecision(10));
  return { kind: 'rectangle', x0: r(x0), y0: r(y0), width: r(width), height: r(height) };
}
