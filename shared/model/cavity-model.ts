/**
 * The cavity model document: what a user edits and what every run is computed
 * from. Lengths in nm, energies in meV, field in T. The schema checks the form;
 * `validateCavityModel` also checks the physics rules that need the rasterised
 * cavity (mouths inside the cavity, one connected piece, size caps).
 */
import * as z from 'zod';
import { findMaterial, MATERIAL_PRESETS } from './materials';
import { DOCUMENT_LIMITS, checkDocumentLimits } from './document-limits';
import { connectedComponents, mouthSites, rasteriseShape, rasterWork } from './geometry';
import { physicsSchema } from './physics-mode';
import { hoppingEnergy } from '../units/constants';

/** Largest grid (nx·ny) a model may declare. */
export const MAX_GRID_POINTS = 250_000;
/** Largest number of cavity sites after rasterising. */
export const MAX_CAVITY_SITES = 100_000;

const finite = () => z.number().finite();
const positive = () => z.number().finite().positive();
const nonNegative = () => z.number().finite().nonnegative();
const siteIndex = () => z.number().int().nonnegative();
const point = z.tuple([finite(), finite()]);

export const rectangleSchema = z.object({
  kind: z.literal('rectangle'),
  x0: finite(),
  y0: finite(),
  width: positive(),
  height: positive(),
});
export const diskSchema = z.object({ kind: z.literal('disk'), cx: finite(), cy: finite(), radius: positive() });
export const ellipseSchema = z.object({
  kind: z.literal('ellipse'),
  cx: finite(),
  cy: finite(),
  rx: positive(),
  ry: positive(),
  angleDeg: finite().optional(),
});
export const stadiumSchema = z.object({
  kind: z.literal('stadium'),
  cx: finite(),
  cy: finite(),
  /** Length of the straight part (nm), along x. */
  length: nonNegative(),
  radius: positive(),
});
export const annulusSchema = z
  .object({ kind: z.literal('annulus'), cx: finite(), cy: finite(), inner: nonNegative(), outer: positive() })
  .refine((a) => a.inner < a.outer, { message: 'inner radius must be smaller than outer radius', path: ['inner'] });
export const polygonSchema = z.object({
  kind: z.literal('polygon'),
  vertices: z
    .array(point)
    .min(3, 'a polygon needs at least 3 vertices')
    .max(DOCUMENT_LIMITS.polygonVertices, `at most ${DOCUMENT_LIMITS.polygonVertices} vertices`),
});
export const siteListSchema = z.object({
  kind: z.literal('sites'),
  list: z
    .array(z.tuple([siteIndex(), siteIndex()]))
    .min(1, 'the site list is empty')
    .max(DOCUMENT_LIMITS.explicitSites, `at most ${DOCUMENT_LIMITS.explicitSites} sites`),
});
/**
 * A packed bitmap mask: `data` is base64 of `height` rows of ceil(width/8) bytes,
 * row r at lattice row j0 + r (row 0 at the bottom), most significant bit first
 * (leftmost site i0 first). A set bit marks a cavity site.
 */
export const bitmapSchema = z.object({
  kind: z.literal('bitmap'),
  i0: siteIndex().optional(),
  j0: siteIndex().optional(),
  width: z.number().int().positive(),
  height: z.number().int().positive(),
  data: z.string().regex(/^[A-Za-z0-9+/]*={0,2}$/, 'data must be base64'),
});

export type RectangleShape = z.infer<typeof rectangleSchema>;
export type DiskShape = z.infer<typeof diskSchema>;
export type EllipseShape = z.infer<typeof ellipseSchema>;
export type StadiumShape = z.infer<typeof stadiumSchema>;
export type AnnulusShape = z.infer<typeof annulusSchema>;
export type PolygonShape = z.infer<typeof polygonSchema>;
export type SiteListShape = z.infer<typeof siteListSchema>;
export type BitmapShape = z.infer<typeof bitmapSchema>;
export interface UnionShape {
  kind: 'union';
  of: Shape[];
}
export interface SubtractShape {
  kind: 'subtract';
  from: Shape;
  remove: Shape[];
}
export type Shape =
  | RectangleShape
  | DiskShape
  | EllipseShape
  | StadiumShape
  | AnnulusShape
  | PolygonShape
  | SiteListShape
  | BitmapShape
  | UnionShape
  | SubtractShape;

const SHAPE_KINDS = ['rectangle', 'disk', 'ellipse', 'stadium', 'annulus', 'polygon', 'sites', 'bitmap', 'union', 'subtract'];

// The shape tree is recursive; z.lazy defers the reference, and the kind check
// first gives one clear message instead of ten failed union branches.
export const shapeSchema: z.ZodType<Shape> = z.lazy(() =>
  z
    .object({ kind: z.string() })
    .loose()
    .superRefine((v, ctx) => {
      if (!SHAPE_KINDS.includes(v.kind)) {
        ctx.addIssue({ code: 'custom', path: ['kind'], message: `unknown shape kind '${v.kind}' (expected one of ${SHAPE_KINDS.join(', ')})` });
      }
    })
    .pipe(
      z.discriminatedUnion('kind', [
        rectangleSchema,
        diskSchema,
        ellipseSchema,
        stadiumSchema,
        annulusSchema,
        polygonSchema,
        siteListSchema,
        bitmapSchema,
        z.object({
          kind: z.literal('union'),
          of: z.array(shapeSchema).min(1, 'a union needs at least one shape').max(DOCUMENT_LIMITS.shapeMembers, `at most ${DOCUMENT_LIMITS.shapeMembers} shapes`),
        }),
        z.object({
          kind: z.literal('subtract'),
          from: shapeSchema,
          remove: z.array(shapeSchema).max(DOCUMENT_LIMITS.shapeMembers, `at most ${DOCUMENT_LIMITS.shapeMembers} shapes`),
        }),
      ]),
    ),
) as unknown as z.ZodType<Shape>;

export const blockPotentialSchema = z.object({
  kind: z.literal('block'),
  x0: finite(),
  y0: finite(),
  width: positive(),
  height: positive(),
  /** Added potential (meV). */
  value: finite(),
});
export const gaussianPotentialSchema = z.object({
  kind: z.literal('gaussian'),
  cx: finite(),
  cy: finite(),
  sigma: positive(),
  /** Peak value (meV); V = A·exp(−r²/(2σ²)). */
  amplitude: finite(),
});
export const disorderPotentialSchema = z.object({
  kind: z.literal('disorder'),
  /** Anderson strength W (meV): V uniform in [−W/2, W/2] on each site. */
  strength: nonNegative(),
  seed: z.number().int().min(0).max(0xffffffff),
});
export const sitePotentialSchema = z.object({
  kind: z.literal('sites'),
  /** Explicit [i, j, V (meV)] entries, added to the other terms. */
  values: z.array(z.tuple([siteIndex(), siteIndex(), finite()])).min(1),
});
export const potentialTermSchema = z.discriminatedUnion('kind', [
  blockPotentialSchema,
  gaussianPotentialSchema,
  disorderPotentialSchema,
  sitePotentialSchema,
]);
export type PotentialTerm = z.infer<typeof potentialTermSchema>;

export const leadSideSchema = z.enum(['left', 'right', 'bottom', 'top']);
export type LeadSide = z.infer<typeof leadSideSchema>;
export const leadSchema = z.object({
  side: leadSideSchema,
  /** First site index along the edge (row j for left/right, column i for bottom/top). */
  start: siteIndex(),
  /** Number of mouth sites. */
  width: z.number().int().positive(),
  /** Potential offset V_L of the lead (meV). */
  offset: finite().default(0),
  name: z.string().max(80).optional(),
});
export type Lead = z.infer<typeof leadSchema>;

export const materialSchema = z.union([
  z.string().min(1),
  z.object({ effectiveMass: positive() }),
]);

export const cavityModelSchema = z.object({
  name: z.string().min(1, 'name is empty').max(200),
  notes: z.string().max(10_000).optional(),
  /** Electrons in a 2DEG (default; lengths nm) or a flat microwave resonator (lengths mm). */
  physics: physicsSchema,
  /** Lattice spacing a (nm; mm in the microwave mode). */
  spacing: positive(),
  /** The 2DEG's material; required for electrons, absent in the microwave mode. */
  material: materialSchema.optional(),
  grid: z.object({ nx: z.number().int().positive(), ny: z.number().int().positive() }),
  shape: shapeSchema,
  potential: z.array(potentialTermSchema).max(DOCUMENT_LIMITS.potentialTerms).default([]),
  /** Perpendicular field B (T), along +z. */
  field: finite().default(0),
  leads: z.array(leadSchema).max(DOCUMENT_LIMITS.leads).default([]),
});
/** A parsed model (defaults filled in). */
export type CavityModel = z.infer<typeof cavityModelSchema>;
/** A model as written in JSON (defaults optional). */
export type CavityModelInput = z.input<typeof cavityModelSchema>;

/** One validation problem, tagged with the field it concerns. */
export interface ModelIssue {
  /** Path into the document, e.g. ['leads', 1, 'start']. */
  path: (string | number)[];
  message: string;
}

export type ModelValidation =
  | { ok: true; model: CavityModel; issues: []; mask: Uint8Array; siteCount: number }
  | { ok: false; issues: ModelIssue[] };

/** 'leads[1].start' style text for a path. */
export function formatIssuePath(path: readonly (string | number)[]): string {
  let out = '';
  for (const p of path) out += typeof p === 'number' ? `[${p}]` : out ? `.${p}` : p;
  return out || '(document)';
}

/** The mass ratio m* / m_e of a parsed model's material (throws on an unknown preset); 1 in the microwave mode (unused there). */
export function modelMassRatio(model: CavityModel): number {
  if (model.physics.kind === 'microwave') return 1;
  if (model.material === undefined) throw new Error('the model has no material');
  if (typeof model.material !== 'string') return model.material.effectiveMass;
  const preset = findMaterial(model.material);
  if (!preset) throw new Error(`unknown material '${model.material}'`);
  return preset.effectiveMass;
}

/**
 * The hopping t of the lattice operator: (ħ²/2m_e)/(m* / m_e)/a² in meV for electrons,
 * 1/a² in mm⁻² for the microwave mode (docs/physics-model.md, "Physics modes"). Cost O(1).
 */
export function modelHopping(model: CavityModel): number {
  if (model.physics.kind === 'microwave') return 1 / (model.spacing * model.spacing);
  return hoppingEnergy(model.spacing, modelMassRatio(model));
}

/** The rules of the microwave mode: no material, field, potential or lead offset (none has a meaning there). */
function checkPhysicsMode(model: CavityModel, doc: unknown, issues: ModelIssue[]): void {
  if (model.physics.kind === 'electrons') {
    if (model.material === undefined) issues.push({ path: ['material'], message: 'material is missing: give a preset id (e.g. "gaas") or { "effectiveMass": m* / m_e }' });
    return;
  }
  const raw = doc as Record<string, unknown>;
  if (raw['material'] !== undefined) {
    issues.push({ path: ['material'], message: 'a microwave resonator has no material: remove it (the filling is physics.permittivity, ε_r)' });
  }
  if (model.field !== 0) issues.push({ path: ['field'], message: 'a magnetic field does not apply in the microwave mode: set it to 0 or remove it' });
  if (model.potential.length > 0) {
    issues.push({ path: ['potential'], message: 'potential terms do not apply in the microwave mode: draw metal posts by subtracting them from the shape' });
  }
  model.leads.forEach((lead, k) => {
    if (lead.offset !== 0) issues.push({ path: ['leads', k, 'offset'], message: 'a lead offset does not apply in the microwave mode: the waveguides are empty, set it to 0' });
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
      if (bytes !== expected) issues.push({ path: [...path, 'data'], message: `data holds ${bytes} bytes, expected ${expected} (${shape.height} rows of ${Math.ceil(shape.width / 8)} bytes)` });
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

  const work = rasterWork(model.shape, nx, ny, model.spacing);
  if (work > DOCUMENT_LIMITS.rasterWork) {
    issues.push({
      path: ['shape'],
      message:
        `drawing this shape on the ${nx}×${ny} grid takes about ${work.toExponential(1)} site tests, above the limit of ${DOCUMENT_LIMITS.rasterWork.toExponential(1)}; ` +
        'use fewer polygon vertices, fewer combined shapes, or a smaller grid',
    });
    return { ok: false, issues };
  }
  const mask = rasteriseShape(model.shape, nx, ny, model.spacing);
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
  const parts = connectedComponents(mask, nx, ny);
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
