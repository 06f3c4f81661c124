import { cavityModelSchema, type CavityModel, type ModelIssue, type Shape } from '../../shared/model/cavity-model.js';
import { traceMaskOutline, type TracedOutline } from '../../shared/layout/outline-trace.js';
import { validateCavityModel } from '../../shared/model/model-validation.js';
import { deriveFigures, type DerivedFigures } from '../../shared/model/derived-figures.js';
import { deriveFiguresWithLeads } from '../../shared/engine/lead-channel-ranges.js';
import { physicsUnits, type PhysicsKind } from '../../shared/model/physics-mode.js';
import { ApiError } from '../http/error-handler.js';
import { formatIssuePath } from '../../shared/model/cavity-model.js';

/**
 * The dimensions a geometry is searched by, every one in nm (a microwave model's mm are
 * converted, so one filter means one length), null where the family lacks it:
 * width/height: bounding box of the cavity sites ((columns, rows) × a; a rectangle's own);
 * radius: disk, stadium; length: stadium; rx, ry: ellipse; inner, outer: annulus;
 * area: cavity sites × a² (nm²), for every family; × (3√3/4)a_CC² on the honeycomb.
 */
export interface GeometryColumns {
  widthNm: number | null;
  heightNm: number | null;
  radiusNm: number | null;
  lengthNm: number | null;
  rxNm: number | null;
  ryNm: number | null;
  innerNm: number | null;
  outerNm: number | null;
  areaNm2: number | null;
}

/** The dimension names of GeometryColumns as the API lists them (keyDimensions) and the catalogue filters them (dim.NAME.min/max). */
const geometryDimensionNames = ['width', 'height', 'radius', 'length', 'rx', 'ry', 'inner', 'outer', 'area'] as const;
type GeometryDimension = (typeof geometryDimensionNames)[number];

/** What the catalogue can search on, computed once per model version. */
export interface ModelColumns extends GeometryColumns {
  family: string;
  /** 'electrons' or 'microwave' (shared/model/physics-mode.ts). */
  physics: PhysicsKind;
  /** The material preset id, 'custom', 'honeycomb' for a graphene model, or for a microwave model 'eps_r=<ε_r>'. */
  material: string;
  /** m* / m_e; 0 for a microwave or honeycomb model (no mass). */
  effectiveMass: number;
  spacingNm: number;
  fieldT: number;
  siteCount: number;
  leadCount: number;
  /** t in the model's energy unit: meV, or mm⁻² (1/a²) for a microwave model. */
  hoppingMeV: number;
  keyDimensions: Record<string, number>;
}

export interface CheckedModel {
  model: CavityModel;
  columns: ModelColumns;
  derived: DerivedFigures;
  /** The cavity outline traced from the site mask (stored with the version; the fabrication layout reads it). */
  outline: TracedOutline;
}

/** Turns the model's validation issues into the API's 400, with the field path of each. */
export function invalidModel(issues: ModelIssue[]): ApiError {
  const fieldIssues = issues.map((i) => ({ path: ['document', ...i.path].map(String).join('.'), message: i.message }));
  const named = issues.map((i) => `${formatIssuePath(i.path)}: ${i.message}`).join('; ');
  return new ApiError(400, 'validation_failed', `The cavity model is not valid: ${named}.`, fieldIssues);
}

/** Validates a document (form and physics rules) and derives its searchable columns; throws the 400. */
export function checkModel(document: unknown): CheckedModel {
  const result = validateCavityModel(document);
  if (!result.ok) throw invalidModel(result.issues);
  const { model, mask, siteCount } = result;
  const derived = deriveFiguresWithLeads(model, siteCount);
  const geometry = geometryColumns(model, mask, siteCount);
  const microwave = model.physics.kind === 'microwave' ? model.physics : null;
  const honeycomb = model.lattice?.kind === 'honeycomb';
  return {
    model,
    derived,
    outline: traceMaskOutline(mask, model.grid.nx, model.grid.ny, model.spacing),
    columns: {
      family: shapeFamily(model.shape),
      physics: model.physics.kind,
      material: microwave ? `eps_r=${microwave.permittivity}` : honeycomb ? 'honeycomb' : typeof model.material === 'string' ? model.material : 'custom',
      effectiveMass: microwave || honeycomb ? 0 : derived.massRatio,
      spacingNm: model.spacing * physicsUnits(model.physics.kind).nmPerLength,
      fieldT: model.field,
      siteCount,
      leadCount: model.leads.length,
      hoppingMeV: derived.hopping,
      ...geometry,
      keyDimensions: keyDimensionsOf(geometry),
    },
  };
}

/** The searchable dimensions of a validated model (see GeometryColumns). Cost O(nx·ny). */
export function geometryColumns(model: CavityModel, mask: Uint8Array, siteCount: number): GeometryColumns {
  const scale = physicsUnits(model.physics.kind).nmPerLength;
  const a = model.spacing;
  // Column and row pitch and area per site: a, a, a² on the square lattice; on the honeycomb
  // (√3/2)a_CC, (3/2)a_CC and (3√3/4)a_CC² (one hexagon, (3√3/2)a_CC², holds two atoms).
  // The square lattice keeps its exact arithmetic.
  const honeycomb = model.lattice?.kind === 'honeycomb';
  const dx = honeycomb ? (Math.sqrt(3) / 2) * a : a;
  const dy = honeycomb ? 1.5 * a : a;
  const perSite = ((3 * Math.sqrt(3)) / 4) * a * a;
  const box = maskBox(mask, model.grid.nx, model.grid.ny);
  const body = bodyShape(model.shape);
  const nm = (v: number | undefined) => (v === undefined ? null : v * scale);
  const own = body === model.shape && body.kind === 'rectangle';
  return {
    widthNm: own ? body.width * scale : box ? (box.imax - box.imin + 1) * dx * scale : null,
    heightNm: own ? body.height * scale : box ? (box.jmax - box.jmin + 1) * dy * scale : null,
    radiusNm: nm(body.kind === 'disk' || body.kind === 'stadium' ? body.radius : undefined),
    lengthNm: nm(body.kind === 'stadium' ? body.length : undefined),
    rxNm: nm(body.kind === 'ellipse' ? body.rx : undefined),
    ryNm: nm(body.kind === 'ellipse' ? body.ry : undefined),
    innerNm: nm(body.kind === 'annulus' ? body.inner : undefined),
    outerNm: nm(body.kind === 'annulus' ? body.outer : undefined),
    areaNm2: honeycomb ? siteCount * perSite * scale * scale : siteCount * a * a * scale * scale,
  };
}

/** The geometry columns of a row that has them (a resonance copies its model version's). */
export function geometryOf(m: GeometryColumns): GeometryColumns {
  return {
    widthNm: m.widthNm,
    heightNm: m.heightNm,
    radiusNm: m.radiusNm,
    lengthNm: m.lengthNm,
    rxNm: m.rxNm,
    ryNm: m.ryNm,
    innerNm: m.innerNm,
    outerNm: m.outerNm,
    areaNm2: m.areaNm2,
  };
}

/** The dimensions the family has, by name (nm; area nm²). */
export function keyDimensionsOf(g: GeometryColumns): Record<string, number> {
  const values: Record<GeometryDimension, number | null> = {
    width: g.widthNm,
    height: g.heightNm,
    radius: g.radiusNm,
    length: g.lengthNm,
    rx: g.rxNm,
    ry: g.ryNm,
    inner: g.innerNm,
    outer: g.outerNm,
    area: g.areaNm2,
  };
  const out: Record<string, number> = {};
  for (const name of geometryDimensionNames) if (values[name] !== null) out[name] = values[name];
  return out;
}

/**
 * The primitive that forms the body of a shape: a union is filed under its first
 * member (lead stubs and bumps are usually added after the body), a subtraction
 * under what is subtracted from.
 */
function bodyShape(shape: Shape): Shape {
  if (shape.kind === 'union') return shape.of.length ? bodyShape(shape.of[0]) : shape;
  if (shape.kind === 'subtract') return bodyShape(shape.from);
  return shape;
}

/** The family a geometry is filed under: the primitive of its body (see bodyShape). */
function shapeFamily(shape: Shape): string {
  const body = bodyShape(shape);
  return body.kind === 'union' || body.kind === 'subtract' ? 'composite' : body.kind;
}

function maskBox(mask: Uint8Array, nx: number, ny: number) {
  let imin = nx,
    imax = -1,
    jmin = ny,
    jmax = -1;
  for (let i = 0; i < nx; i++) {
    for (let j = 0; j < ny; j++) {
      if (!mask[i * ny + j]) continue;
      if (i < imin) imin = i;
      if (i > imax) imax = i;
      if (j < jmin) jmin = j;
      if (j > jmax) jmax = j;
    }
  }
  return imax < 0 ? null : { imin, imax, jmin, jmax };
}

/** The fields of a document the derived figures read (not the shape or the potential). */
const figureFields = cavityModelSchema.pick({
  name: true,
  spacing: true,
  material: true,
  field: true,
  leads: true,
  physics: true,
  lattice: true,
  grid: true,
  fieldInLeads: true,
});

/**
 * Derived figures of a stored document from its stored site count (nothing rasterised, no
 * lead solved: a numerical lead's channel ranges, which checkModel stores, are left empty):
 * for versions saved before the figures were stored with them (the back-fill,
 * model-backfill.ts) and for restored versions. Null when the document's figure fields
 * do not validate.
 */
export function figuresOfStored(document: unknown, siteCount: number): DerivedFigures | null {
  const v = figureFields.safeParse(document);
  if (!v.success) return null;
  try {
    // No engine work here (restores and reads call it): numerical leads list no channel ranges.
    return deriveFigures(v.data as CavityModel, siteCount);
  } catch {
    return null; // a value the form allows but the figures refuse (an unknown material name, say)
  }
}
