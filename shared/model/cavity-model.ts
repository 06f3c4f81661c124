/**
 * The cavity model document: what a user edits and what every run is computed
 * from. Lengths in nm, energies in meV, field in T. The schema checks the form;
 * `validateCavityModel` (model-validation.ts) also checks the physics rules that
 * need the rasterised cavity (mouths inside the cavity, one connected piece, size caps).
 */
import * as z from 'zod';
import { findMaterial } from './materials';
import { DOCUMENT_LIMITS } from './document-limits';
import { physicsSchema } from './physics-mode';
import { hoppingEnergy } from '../units/constants';

export { formatIssuePath, type ModelIssue } from './model-issue';

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
  RectangleShape | DiskShape | EllipseShape | StadiumShape | AnnulusShape | PolygonShape | SiteListShape | BitmapShape | UnionShape | SubtractShape;

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
          of: z
            .array(shapeSchema)
            .min(1, 'a union needs at least one shape')
            .max(DOCUMENT_LIMITS.shapeMembers, `at most ${DOCUMENT_LIMITS.shapeMembers} shapes`),
        }),
        z.object({
          kind: z.literal('subtract'),
          from: shapeSchema,
          remove: z.array(shapeSchema).max(DOCUMENT_LIMITS.shapeMembers, `at most ${DOCUMENT_LIMITS.shapeMembers} shapes`),
        }),
      ]),
    ),
) as unknown as z.ZodType<Shape>;

const blockPotentialSchema = z.object({
  kind: z.literal('block'),
  x0: finite(),
  y0: finite(),
  width: positive(),
  height: positive(),
  /** Added potential (meV). */
  value: finite(),
});
const gaussianPotentialSchema = z.object({
  kind: z.literal('gaussian'),
  cx: finite(),
  cy: finite(),
  sigma: positive(),
  /** Peak value (meV); V = A·exp(−r²/(2σ²)). */
  amplitude: finite(),
});
const disorderPotentialSchema = z.object({
  kind: z.literal('disorder'),
  /** Anderson strength W (meV): V uniform in [−W/2, W/2] on each site. */
  strength: nonNegative(),
  seed: z.number().int().min(0).max(0xffffffff),
});
const sitePotentialSchema = z.object({
  kind: z.literal('sites'),
  /** Explicit [i, j, V (meV)] entries, added to the other terms. */
  values: z.array(z.tuple([siteIndex(), siteIndex(), finite()])).min(1),
});
export const potentialTermSchema = z.discriminatedUnion('kind', [blockPotentialSchema, gaussianPotentialSchema, disorderPotentialSchema, sitePotentialSchema]);
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

/** Today's lattice: square, spacing `spacing`, t from the material's effective mass. */
const squareLatticeSchema = z.object({ kind: z.literal('square') });
/**
 * The honeycomb lattice of graphene (docs/physics-model.md, "Lattices"): `spacing` is the
 * carbon–carbon distance a_CC (nm); the energies of this block are in eV, as the
 * tight-binding literature quotes them (every other energy of the document stays in meV).
 */
const honeycombLatticeSchema = z.object({
  kind: z.literal('honeycomb'),
  /** Nearest-neighbour hopping t (eV), H[s',s] = −t. */
  hopping: positive(),
  /** Sublattice potential Δ (eV): +Δ on sublattice A, −Δ on B. */
  sublatticePotential: finite().default(0),
  /** Next-nearest-neighbour hopping t' (eV), H[s',s] = −t'. */
  nextHopping: finite().default(0),
  /** Remove atoms with fewer than two neighbours in the cavity, repeatedly (the clean-up of an etched edge). */
  removeDangling: z.boolean().default(false),
});
const latticeSchema = z.discriminatedUnion('kind', [squareLatticeSchema, honeycombLatticeSchema], {
  error: 'lattice.kind must be "square" or "honeycomb"',
});
type LatticeChoice = z.infer<typeof latticeSchema>;

const materialSchema = z.union([z.string().min(1), z.object({ effectiveMass: positive() })]);

export const cavityModelSchema = z.object({
  name: z.string().min(1, 'name is empty').max(200),
  notes: z.string().max(10_000).optional(),
  /** Electrons in a 2DEG (default; lengths nm) or a flat microwave resonator (lengths mm). */
  physics: physicsSchema,
  /** Lattice spacing a (nm; mm in the microwave mode); on the honeycomb lattice the carbon–carbon distance a_CC (nm). */
  spacing: positive().refine((a) => a <= 0 || a >= DOCUMENT_LIMITS.smallestSpacing, {
    message: `must be at least ${DOCUMENT_LIMITS.smallestSpacing} (nm, or mm for a resonator)`,
  }),
  /** The lattice; absent means square (every document written before lattices were a choice). */
  lattice: latticeSchema.optional(),
  /** The 2DEG's material; required for electrons, absent in the microwave mode. */
  material: materialSchema.optional(),
  grid: z.object({ nx: z.number().int().positive(), ny: z.number().int().positive() }),
  shape: shapeSchema,
  potential: z.array(potentialTermSchema).max(DOCUMENT_LIMITS.potentialTerms).default([]),
  /** Perpendicular field B (T), along +z. */
  field: finite()
    .min(-DOCUMENT_LIMITS.fieldTesla, `must be at least −${DOCUMENT_LIMITS.fieldTesla.toLocaleString('en-US')} T`)
    .max(DOCUMENT_LIMITS.fieldTesla, `must be at most ${DOCUMENT_LIMITS.fieldTesla.toLocaleString('en-US')} T`)
    .default(0),
  leads: z.array(leadSchema).max(DOCUMENT_LIMITS.leads).default([]),
  /**
   * Let the field act in the leads too (docs/physics-model.md, "A field in the leads"): each lead
   * in a gauge that keeps it translation-invariant along its axis. Absent or false: the contract's
   * field-free leads, every result as before. Not in the microwave mode (no field there).
   */
  fieldInLeads: z.boolean().optional(),
});
/** A parsed model (defaults filled in). */
export type CavityModel = z.infer<typeof cavityModelSchema>;
/** A model as written in JSON (defaults optional). */
export type CavityModelInput = z.input<typeof cavityModelSchema>;

/** The lattice of a parsed model: square when the document names none. */
export function modelLattice(model: Pick<CavityModel, 'lattice'>): LatticeChoice {
  return model.lattice ?? { kind: 'square' };
}

/** The mass ratio m* / m_e of a parsed model's material (throws on an unknown preset); 1 in the microwave mode and on the honeycomb lattice (unused there). */
export function modelMassRatio(model: CavityModel): number {
  if (model.physics.kind === 'microwave' || modelLattice(model).kind === 'honeycomb') return 1;
  if (model.material === undefined) throw new Error('the model has no material');
  if (typeof model.material !== 'string') return model.material.effectiveMass;
  const preset = findMaterial(model.material);
  if (!preset) throw new Error(`unknown material '${model.material}'`);
  return preset.effectiveMass;
}
/**
 * The hopping t of the lattice operator: (ħ²/2m_e)/(m* / m_e)/a² in meV for electrons,
 * the honeycomb's t (given in eV) in meV, 1/a² in mm⁻² for the microwave mode (docs/physics-model.md, "Physics modes"). Cost O(1).
 */
export function modelHopping(model: CavityModel): number {
  const lattice = modelLattice(model);
  // The honeycomb's t is given in eV; the engine works in meV.
  if (lattice.kind === 'honeycomb') return 1000 * lattice.hopping;
  if (model.physics.kind === 'microwave') return 1 / (model.spacing * model.spacing);
  return hoppingEnergy(model.spacing, modelMassRatio(model));
}
