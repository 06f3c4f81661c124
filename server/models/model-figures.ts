import { type CavityModel, type ModelIssue, type Shape } from '../../shared/model/cavity-model.js';
import { validateCavityModel } from '../../shared/model/model-validation.js';
import { deriveFigures, type DerivedFigures } from '../../shared/model/derived-figures.js';
import { ApiError } from '../http/error-handler.js';
import { formatIssuePath } from '../../shared/model/cavity-model.js';

/** What the catalogue can search on, computed once per model version. */
export interface ModelColumns {
  family: string;
  material: string;
  effectiveMass: number;
  spacingNm: number;
  fieldT: number;
  siteCount: number;
  leadCount: number;
  hoppingMeV: number;
  widthNm: number | null;
  heightNm: number | null;
  radiusNm: number | null;
  lengthNm: number | null;
  keyDimensions: Record<string, number>;
}

export interface CheckedModel {
  model: CavityModel;
  columns: ModelColumns;
  derived: DerivedFigures;
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
  const derived = deriveFigures(model, siteCount);
  const box = maskBox(mask, model.grid.nx, model.grid.ny);
  const a = model.spacing;
  const width = box ? (box.imax - box.imin + 1) * a : null;
  const height = box ? (box.jmax - box.jmin + 1) * a : null;
  const shapeDims = shapeDimensions(model.shape);
  const keyDimensions: Record<string, number> = {};
  if (width !== null) keyDimensions['width'] = width;
  if (height !== null) keyDimensions['height'] = height;
  if (shapeDims.radius !== undefined) keyDimensions['radius'] = shapeDims.radius;
  if (shapeDims.length !== undefined) keyDimensions['length'] = shapeDims.length;
  return {
    model,
    derived,
    columns: {
      family: shapeFamily(model.shape),
      material: typeof model.material === 'string' ? model.material : 'custom',
      effectiveMass: derived.massRatio,
      spacingNm: a,
      fieldT: model.field,
      siteCount,
      leadCount: model.leads.length,
      hoppingMeV: derived.hopping,
      widthNm: width,
      heightNm: height,
      radiusNm: shapeDims.radius ?? null,
      lengthNm: shapeDims.length ?? null,
      keyDimensions,
    },
  };
}

/**
 * The primitive that forms the body of a shape: a union is filed under its first
 * member (lead stubs and bumps are usually added after the body), a subtraction
 * under what is subtracted from.
 */
export function bodyShape(shape: Shape): Shape {
  if (shape.kind === 'union') return shape.of.length ? bodyShape(shape.of[0]) : shape;
  if (shape.kind === 'subtract') return bodyShape(shape.from);
  return shape;
}

/** The family a geometry is filed under: the primitive of its body (see bodyShape). */
export function shapeFamily(shape: Shape): string {
  const body = bodyShape(shape);
  return body.kind === 'union' || body.kind === 'subtract' ? 'composite' : body.kind;
}

function shapeDimensions(shape: Shape): { radius?: number; length?: number } {
  const body = bodyShape(shape);
  switch (body.kind) {
    case 'disk':
      return { radius: body.radius };
    case 'stadium':
      return { radius: body.radius, length: body.length };
    case 'annulus':
      return { radius: body.outer };
    case 'ellipse':
      return { radius: Math.max(body.rx, body.ry) };
    default:
      return {};
  }
}

function maskBox(mask: Uint8Array, nx: number, ny: number) {
  let imin = nx, imax = -1, jmin = ny, jmax = -1;
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
