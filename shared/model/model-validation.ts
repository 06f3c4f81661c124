/**
 * The checks of a model document that need the rasterised cavity (mouths inside the
 * cavity, one connected piece, size caps). Apart from the schema file so that the
 * geometry can read the schema's types without an import loop.
 */
import { cavityModelSchema, MAX_CAVITY_SITES, MAX_GRID_POINTS, modelLattice, type CavityModel, type Lead, type Shape } from './cavity-model';
import { placementOf, removeDanglingSites } from './lattice-geometry';
import { DOCUMENT_LIMITS, checkDocumentLimits } from './document-limits';
import { connectedComponents, mouthSites, rasteriseShape, rasterWork } from './geometry';
import { findMaterial, MATERIAL_PRESETS } from './materials';
import type { ModelIssue } from './model-issue';

type ModelValidation = { ok: true; model: CavityModel; issues: []; mask: Uint8Array; siteCount: number } | { ok: false; issues: ModelIssue[] };

/** The rules of the microwave mode: no material, field, potential or lead offset (none has a meaning there). */
function checkPhysicsMode(model: CavityModel, doc: unknown, issues: ModelIssue[]): void {
  if (modelLattice(model).kind === 'honeycomb') {
    if (model.physics.kind === 'microwave')
      issues.push({ path: ['lattice'], message: 'the microwave mode uses the square lattice: remove lattice or set it to {"kind": "square"}' });
    if (model.material !== undefined)
      issues.push({ path: ['material'], message: 'a honeycomb lattice has no effective mass: remove material (the hopping is lattice.hopping, in eV)' });
    return;
  }
  if (model.physics.kind === 'electrons') {
    if (model.material === undefined)
      issues.push({ path: ['material'], message: 'material is missing: give a preset id (e.g. "gaas") or { "effectiveMass": m* / m_e }' });
    return;
  }
  const raw = doc as Record<string, unknown>;
  if (raw['material'] !== undefined) {
    issues.push({ path: ['material'], message: 'a microwave resonator has no material: remove it (the filling is physics.permittivity, ε_r)' });
  }
  if (model.field !== 0) issues.push({ path: ['field'], message: 'a magnetic field does not apply in the microwave mode: set it to 0 or remove it' });
  if (model.fieldInLeads === true)
    issues.push({
      path: ['fieldInLeads'],
      message: 'the microwave mode has no magnetic field, so there is none to put in the leads: remove fieldInLeads or set it to false',
    });
  if (model.potential.length > 0) {
    issues.push({ path: ['potential'], message: 'potential terms do not apply in the microwave mode: draw metal posts by subtracting them from the shape' });
  }
  model.leads.forEach((lead, k) => {
    if (lead.offset !== 0)
      issues.push({ path: ['leads', k, 'offset'], message: 'a lead offset does not apply in the microwave mode: the waveguides are empty, set it to 0' });
  });
}

function leadLabel(lead: Lead, index: number): string {
  return lead.name ? `lead '${lead.name}' (leads[${index}])` : `leads[${index}] (${lead.side})`;
}

/** Walks the shape tree and reports explicit sites or bitmaps that fall outside the grid. */
function checkShapeBounds(shape: Shape, path: (string | number)[], nx: number, ny: number, issues: ModelIssue[]): void {
  switch (shape.kind) {
    case 'sites':
      shape.list.forEach(([i, j], k) => {
        if (i >= nx || j >= ny) issues.push({ path: [...path, 'list', k], message: `site (${i}, ${j}) is outside the ${nx}×${ny} grid` });
      });
      break;
    case 'bitmap': {
      const i0 = shape.i0 ?? 0;
      const j0 = shape.j0 ?? 0;
      if (i0 + shape.width > nx || j0 + shape.height > ny) {
        issues.push({ path, message: `the ${shape.width}×${shape.height} bitmap at (${i0}, ${j0}) does not fit in the ${nx}×${ny} grid` });
      }
      const expected = Math.ceil(shape.width / 8) * shape.height;
      const bytes = Math.floor((shape.data.replace(/=+$/, '').length * 3) / 4);
      if (bytes !== expected)
        issues.push({
          path: [...path, 'data'],
          message: `data holds ${bytes} bytes, expected ${expected} (${shape.height} rows of ${Math.ceil(shape.width / 8)} bytes)`,
        });
      break;
    }
    case 'union':
      shape.of.forEach((s, k) => checkShapeBounds(s, [...path, 'of', k], nx, ny, issues));
      break;
    case 'subtract':
      checkShapeBounds(shape.from, [...path, 'from'], nx, ny, issues);
      shape.remove.forEach((s, k) => checkShapeBounds(s, [...path, 'remove', k], nx, ny, issues));
      break;
    default:
      break;
  }
}

/**
 * Parses and checks a model document. Returns the parsed model and its site
 * mask, or every problem found with its field path. Cost: one rasterisation and
 * one flood fill, O(nx·ny).
 */
export function validateCavityModel(doc: unknown): ModelValidation {
  // Size caps first, on the raw JSON: the schema check below recurses through the shape tree.
  const tooLarge = checkDocumentLimits(doc);
  if (tooLarge.length) return { ok: false, issues: tooLarge };
  const parsed = cavityModelSchema.safeParse(doc);
  if (!parsed.success) {
    return {
      ok: false,
      issues: parsed.error.issues.map((iss) => ({ path: iss.path.map((p) => (typeof p === 'symbol' ? String(p) : p)), message: iss.message })),
    };
  }
  const model = parsed.data;
  const issues: ModelIssue[] = [];
  const { nx, ny } = model.grid;

  checkPhysicsMode(model, doc, issues);
  if (typeof model.material === 'string' && !findMaterial(model.material)) {
    issues.push({
      path: ['material'],
      message: `unknown material '${model.material}' (presets: ${MATERIAL_PRESETS.map((m) => m.id).join(', ')}; or give { "effectiveMass": m* / m_e })`,
    });
  }
  if (nx * ny > MAX_GRID_POINTS) {
    issues.push({ path: ['grid'], message: `the ${nx}×${ny} grid has ${nx * ny} points, above the cap of ${MAX_GRID_POINTS}` });
    return { ok: false, issues };
  }
  checkShapeBounds(model.shape, ['shape'], nx, ny, issues);
  model.potential.forEach((term, k) => {
    if (term.kind !== 'sites') return;
    term.values.forEach(([i, j], e) => {
      if (i >= nx || j >= ny) issues.push({ path: ['potential', k, 'values', e], message: `site (${i}, ${j}) is outside the ${nx}×${ny} grid` });
    });
  });
  if (issues.length) return { ok: false, issues };

  const latticeChoice = modelLattice(model);
  const placement = placementOf(latticeChoice.kind, model.spacing);
  const work = rasterWork(model.shape, nx, ny, model.spacing, placement);
  if (work > DOCUMENT_LIMITS.rasterWork) {
    issues.push({
      path: ['shape'],
      message:
        `drawing this shape on the ${nx}×${ny} grid takes about ${work.toExponential(1)} site tests, above the limit of ${DOCUMENT_LIMITS.rasterWork.toExponential(1)}; ` +
        'use fewer polygon vertices, fewer combined shapes, or a smaller grid',
    });
    return { ok: false, issues };
  }
  const mask = rasteriseShape(model.shape, nx, ny, model.spacing, placement);
  if (latticeChoice.kind === 'honeycomb' && latticeChoice.removeDangling) {
    // Lead mouths stay: the lead itself is their missing neighbour.
    const keep = new Uint8Array(nx * ny);
    for (const lead of model.leads) {
      const edgeLength = lead.side === 'left' || lead.side === 'right' ? ny : nx;
      if (lead.start + lead.width > edgeLength) continue;
      const m = mouthSites(lead, nx, ny);
      for (let p = 0; p < m.i.length; p++) keep[m.i[p] * ny + m.j[p]] = 1;
    }
    removeDanglingSites(mask, nx, ny, placement, keep);
  }
  let siteCount = 0;
  for (let s = 0; s < mask.length; s++) siteCount += mask[s];
  if (siteCount === 0) {
    issues.push({ path: ['shape'], message: 'the cavity is empty: the shape covers no lattice site of the grid' });
    return { ok: false, issues };
  }
  if (siteCount > MAX_CAVITY_SITES) {
    issues.push({ path: ['shape'], message: `the cavity has ${siteCount} sites, above the cap of ${MAX_CAVITY_SITES}` });
    return { ok: false, issues };
  }
  const parts = connectedComponents(mask, nx, ny, placement);
  if (parts.length > 1) {
    const list = parts
      .slice(0, 5)
      .map((p) => `${p.size} sites around (${p.firstI}, ${p.firstJ})`)
      .join('; ');
    issues.push({
      path: ['shape'],
      message: `the cavity falls into ${parts.length} disconnected parts (${list}${parts.length > 5 ? '; …' : ''}); join them or remove the extra pieces`,
    });
  }

  const owner = new Int32Array(nx * ny).fill(-1);
  model.leads.forEach((lead, k) => {
    const edgeLength = lead.side === 'left' || lead.side === 'right' ? ny : nx;
    if (lead.start + lead.width > edgeLength) {
      issues.push({
        path: ['leads', k, 'width'],
        message: `${leadLabel(lead, k)} runs from ${lead.start} to ${lead.start + lead.width - 1}, past the end of the ${lead.side} edge (indices 0..${edgeLength - 1})`,
      });
      return;
    }
    const { i, j } = mouthSites(lead, nx, ny);
    for (let p = 0; p < i.length; p++) {
      const s = i[p] * ny + j[p];
      if (!mask[s]) {
        // Say what to do: a rounded cavity rarely reaches the grid edge across a whole lead width.
        issues.push({
          path: ['leads', k, 'start'],
          message:
            `mouth site (${i[p]}, ${j[p]}) of ${leadLabel(lead, k)} is outside the cavity; ` +
            `move the lead, or extend the cavity to the ${lead.side} edge over these ${lead.width} sites (e.g. a union with a rectangular lead stub)`,
        });
        return;
      }
      if (owner[s] >= 0) {
        const other = owner[s];
        issues.push({
          path: ['leads', k],
          message: `${leadLabel(lead, k)} overlaps ${leadLabel(model.leads[other], other)} at mouth site (${i[p]}, ${j[p]})`,
        });
        return;
      }
    }
    for (let p = 0; p < i.length; p++) owner[i[p] * ny + j[p]] = k;
  });

  if (issues.length) return { ok: false, issues };
  return { ok: true, model, issues: [], mask, siteCount };
}
