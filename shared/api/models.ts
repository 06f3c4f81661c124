/** Versioned cavity models: the document, its derived figures, and drawings turned into masks. */
import * as z from 'zod';
import { cavityModelDescription } from './cavity-model-description.js';
import { groupParams, numberOrInfinite, personRef, timestamp } from './fields.js';
import { declareRoute, json } from './route.js';

const channelThreshold = z
  .object({
    channel: z.number().int().min(1),
    transverse: z.number().meta({ description: 'ε_m (meV); a numerical lead: the middle of the range' }),
    opens: z.number().meta({ description: 'ε_m − 2t (meV); a numerical lead: a band edge' }),
    closes: z.number().meta({ description: 'ε_m + 2t (meV); a numerical lead: a band edge' }),
  })
  .meta({
    description:
      'Channel m is open for opens < E < closes. A numerical lead (honeycomb, or a field in the leads) numbers its open channels 1..N(E) and may list a channel on several ranges.',
  });

export const derivedFiguresSchema = z
  .object({
    siteCount: z.number().int().nonnegative(),
    hopping: z.number().meta({ description: 't = ħ²/(2m*a²) (meV)' }),
    massRatio: z.number().meta({ description: 'm*/m_e' }),
    energyCeiling: z.number().meta({ description: 'Recommended largest kinetic energy (meV)' }),
    wavelengthCeiling: z.number().meta({ description: 'Energy where λ = 10 a (meV)' }),
    fluxPerPlaquette: z.number(),
    cyclotronEnergy: z.number().meta({ description: 'ħω_c (meV), 0 at B = 0' }),
    magneticLength: numberOrInfinite(),
    leads: z.array(z.object({ name: z.string(), side: z.string(), width: z.number().int(), offset: z.number(), thresholds: z.array(channelThreshold) })),
    validity: z
      .object({
        energy: z.number(),
        dispersionError: z.number(),
        wavelength: numberOrInfinite(),
        wavelengthOverSpacing: numberOrInfinite(),
        warnings: z.array(z.string()),
      })
      .optional(),
    physics: z.enum(['electrons', 'microwave']).optional().meta({ description: 'microwave: every energy above is k² (mm⁻²), hopping 1/a²' }),
    lattice: z.enum(['square', 'honeycomb']).optional().meta({
      description:
        'absent: square. honeycomb: hopping is t in meV, the ceilings are t/4 (Dirac picture), and lead thresholds come from the numerical leads (channelRanges) where computed',
    }),
    dirac: z
      .object({
        hbarVelocity: z.number().meta({ description: 'ħv_F = 3t·a_CC/2 (meV·nm)' }),
        velocity: z.number().meta({ description: 'v_F (m/s)' }),
        energy: z.number().meta({ description: 'Dirac-point energy 3t′ (meV)' }),
      })
      .optional()
      .meta({ description: 'Honeycomb only: the Dirac cone' }),
    permittivity: z.number().optional().meta({ description: 'Microwave: ε_r of the filling' }),
    heightMm: z.number().optional().meta({ description: 'Microwave: height h of the resonator (mm)' }),
    twoDimensionalLimitGhz: z.number().optional().meta({ description: 'Microwave: c/(2h√ε_r) (GHz), above which the 2D picture fails' }),
  })
  .meta({ id: 'DerivedFigures', description: 'Figures that follow from a model: hopping, thresholds, magnetic length (docs/physics-model.md).' });
/** The derived figures as they arrive: infinities (ℓ_B at B = 0) are null. */
export type DerivedFiguresAnswer = z.infer<typeof derivedFiguresSchema>;

const modelKeyDimensions = z
  .record(z.string(), z.number())
  .meta({ description: 'width, height, radius, length, rx, ry, inner, outer (nm) and area (nm²) of the cavity, as the family has them' });

export const modelSummarySchema = z
  .object({
    id: z.uuid(),
    name: z.string(),
    family: z.string().meta({ description: 'The shape kind, or composite for union and subtract' }),
    latestVersion: z.number().int().min(1),
    material: z.string().meta({ description: 'Preset id, or custom; eps_r=<ε_r> for a microwave model' }),
    physics: z.enum(['electrons', 'microwave']),
    spacingNm: z.number().meta({ description: "Lattice spacing (nm; a microwave model's mm converted)" }),
    fieldT: z.number(),
    siteCount: z.number().int(),
    leadCount: z.number().int(),
    keyDimensions: modelKeyDimensions,
    updatedAt: timestamp(),
    createdBy: personRef.nullable(),
  })
  .meta({ id: 'ModelSummary' });
export type ModelSummary = z.infer<typeof modelSummarySchema>;

export const modelListSchema = z.object({ items: z.array(modelSummarySchema), total: z.number().int().nonnegative() }).meta({ id: 'ModelList' });
export type ModelList = z.infer<typeof modelListSchema>;

export const modelVersionEntrySchema = z.object({
  version: z.number().int().min(1),
  createdAt: timestamp(),
  createdBy: personRef.nullable(),
  usedByRuns: z.number().int().nonnegative(),
});
export type ModelVersionEntry = z.infer<typeof modelVersionEntrySchema>;

export const modelDetailSchema = modelSummarySchema
  .extend({ document: cavityModelDescription, derived: derivedFiguresSchema, versions: z.array(modelVersionEntrySchema) })
  .meta({ id: 'ModelDetail' });
export type ModelDetail = z.infer<typeof modelDetailSchema>;

export const modelVersionSchema = z
  .object({ version: z.number().int().min(1), document: cavityModelDescription, derived: derivedFiguresSchema, createdAt: timestamp() })
  .meta({ id: 'ModelVersion' });
export type ModelVersion = z.infer<typeof modelVersionSchema>;

export const catalogueColumnsSchema = z
  .object({
    family: z.string(),
    material: z.string(),
    effectiveMass: z.number(),
    spacingNm: z.number(),
    fieldT: z.number(),
    siteCount: z.number().int(),
    leadCount: z.number().int(),
    hoppingMeV: z.number(),
    widthNm: z.number().nullable(),
    heightNm: z.number().nullable(),
    radiusNm: z.number().nullable(),
    lengthNm: z.number().nullable(),
    rxNm: z.number().nullable(),
    ryNm: z.number().nullable(),
    innerNm: z.number().nullable(),
    outerNm: z.number().nullable(),
    areaNm2: z.number().nullable(),
    physics: z.string(),
    keyDimensions: modelKeyDimensions,
  })
  .meta({ description: 'What the catalogue will file the model under' });

export const modelCheckSchema = z.object({ ok: z.literal(true), derived: derivedFiguresSchema, columns: catalogueColumnsSchema }).meta({ id: 'ModelCheck' });
export type ModelCheck = z.infer<typeof modelCheckSchema>;

export const bitmapMaskSchema = z
  .object({
    shape: z.object({ kind: z.literal('bitmap'), width: z.number().int(), height: z.number().int(), data: z.string() }),
    grid: z.object({ nx: z.number().int(), ny: z.number().int() }),
    siteCount: z.number().int(),
  })
  .meta({ id: 'BitmapMask', description: 'A bitmap shape and grid to paste into a model document.' });
export type BitmapMask = z.infer<typeof bitmapMaskSchema>;

export const modelListQuery = z.object({
  search: z.string().max(200).optional(),
  family: z.string().max(40).optional(),
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(25),
});
export const modelParams = z.object({ groupId: z.uuid(), modelId: z.uuid() });
export const versionParams = modelParams.extend({ version: z.coerce.number().int().min(1) });
/** Any JSON is taken as `document` and checked by the model rules (validateCavityModel), which name each field. */
export const documentBody = z.object({ document: z.unknown().refine((d) => d !== undefined, 'the model document is missing') });
const describedDocumentBody = z.object({ document: cavityModelDescription });
export const bitmapBody = z.object({
  spacingNm: z.coerce.number().positive().max(1000),
  widthNm: z.coerce.number().positive().max(1e6),
});

export const listModelsRoute = declareRoute({
  id: 'listModels',
  method: 'get',
  path: '/groups/{groupId}/models',
  tag: 'models',
  summary: 'Cavity models of the group, newest change first',
  access: 'member',
  params: groupParams,
  query: modelListQuery,
  answer: json(200, 'One page of models', modelListSchema),
});

export const createModelRoute = declareRoute({
  id: 'createModel',
  method: 'post',
  path: '/groups/{groupId}/models',
  tag: 'models',
  summary: 'Create a cavity model (version 1)',
  access: 'designer',
  params: groupParams,
  body: documentBody,
  described: { body: describedDocumentBody },
  answer: json(201, 'The new model', modelDetailSchema),
});

export const checkModelRoute = declareRoute({
  id: 'checkModel',
  method: 'post',
  path: '/groups/{groupId}/models/validate',
  tag: 'models',
  summary: 'Check a model document and show its derived figures, without saving',
  access: 'member',
  params: groupParams,
  body: documentBody,
  described: { body: describedDocumentBody },
  answer: json(200, 'The document is valid', modelCheckSchema),
});

export const maskFromBitmapRoute = declareRoute({
  id: 'maskFromBitmap',
  method: 'post',
  path: '/groups/{groupId}/models/mask-from-bitmap',
  tag: 'models',
  summary: 'Turn a drawn outline (PNG, at most 8 MB) into a bitmap shape on the lattice',
  access: 'designer',
  params: groupParams,
  body: bitmapBody,
  upload: { field: 'file', mediaType: 'image/png', description: 'The drawing: dark pixels are inside the cavity.' },
  answer: json(200, 'The mask', bitmapMaskSchema),
  errors: {
    413: 'payload_too_large (file over 8 MiB) or image_too_large (over 4096×4096 pixels, read from the header)',
    415: 'unsupported_media_type: not a PNG',
  },
});

export const getModelRoute = declareRoute({
  id: 'getModel',
  method: 'get',
  path: '/groups/{groupId}/models/{modelId}',
  tag: 'models',
  summary: 'A model: latest document, derived figures, versions',
  access: 'member',
  params: modelParams,
  answer: json(200, 'The model', modelDetailSchema),
});

export const getModelVersionRoute = declareRoute({
  id: 'getModelVersion',
  method: 'get',
  path: '/groups/{groupId}/models/{modelId}/versions/{version}',
  tag: 'models',
  summary: 'One stored version of a model (versions never change)',
  access: 'member',
  params: versionParams,
  answer: json(200, 'The version', modelVersionSchema),
});

export const updateModelRoute = declareRoute({
  id: 'updateModel',
  method: 'put',
  path: '/groups/{groupId}/models/{modelId}',
  tag: 'models',
  summary: 'Save an edited document as the next version',
  access: 'designer',
  params: modelParams,
  body: documentBody,
  described: { body: describedDocumentBody },
  answer: json(200, 'The model with its new version', modelDetailSchema),
});
