/** Mode maps: the stored current of a pole, and maps (scattering-state currents, Husimi maps) computed on demand. */
import * as z from 'zod';
import { jobStatusSchema } from './enums.js';
import { groupParams, timestamp } from './fields.js';
import { resonanceParams } from './catalogue.js';
import { declareRoute, json } from './route.js';

const husimiSchema = z.strictObject({
  sigmaNm: z.number({ error: 'must be a number of nm' }).positive('must be positive').max(10_000, 'must be at most 10,000 nm').optional(),
  directions: z.number({ error: 'must be a whole number' }).int('must be a whole number').min(4, 'at least 4').max(360, 'at most 360').optional(),
  gridNm: z.number({ error: 'must be a number of nm' }).positive('must be positive').max(100_000, 'must be at most 100,000 nm').optional(),
  peakThreshold: z.number({ error: 'must be a number' }).gt(0, 'must be above 0').max(1, 'must be at most 1').optional(),
});

/**
 * POST /api/groups/:groupId/mode-maps. Either a catalogued resonance (its mode), or a
 * scattering state of a model version at a real energy E (meV) injected from lead
 * `lead` (0-based, the model's order) in channel `channel` (1-based). `husimi` asks for
 * the Husimi map too (its fields default as in docs/physics-model.md).
 */
export const modeMapRequestSchema = z
  .strictObject({
    resonanceId: z.uuid({ error: 'must be a resonance id' }).optional(),
    modelId: z.uuid({ error: 'must be a model id' }).optional(),
    version: z.number().int().positive().optional(),
    energy: z.number({ error: 'must be an energy in meV' }).refine(Number.isFinite, 'must be finite').optional(),
    lead: z.number({ error: 'must be a lead index' }).int('must be a whole number').min(0, 'leads are numbered from 0').optional(),
    channel: z.number({ error: 'must be a channel number' }).int('must be a whole number').min(1, 'channels are numbered from 1').optional(),
    husimi: husimiSchema.nullable().default(null),
  })
  .superRefine((b, ctx) => {
    if (b.resonanceId) {
      for (const f of ['modelId', 'version', 'energy', 'lead', 'channel'] as const) {
        if (b[f] !== undefined)
          ctx.addIssue({ code: 'custom', path: [f], message: 'give either resonanceId or a model with energy, lead and channel, not both' });
      }
      return;
    }
    for (const f of ['modelId', 'energy', 'lead', 'channel'] as const) {
      if (b[f] === undefined) ctx.addIssue({ code: 'custom', path: [f], message: 'required for a scattering state (or give resonanceId)' });
    }
  });

export type ModeMapRequest = z.infer<typeof modeMapRequestSchema>;
export type HusimiRequest = z.infer<typeof husimiSchema>;

const b64 = (what: string) => z.string().meta({ description: `${what}, base64 of little-endian float32` });

export const modeMapPayloadSchema = z
  .object({
    engineVersion: z.string(),
    state: z.object({
      kind: z.enum(['pole', 'bound', 'scattering']),
      energy: z.number().meta({ description: 'E (meV)' }),
      width: z.number().meta({ description: 'Γ (meV); 0 for a scattering state' }),
      lead: z.number().int().optional(),
      leadName: z.string().optional(),
      channel: z.number().int().optional(),
      label: z.string(),
    }),
    unit: z.string().meta({ description: "Currents: '1/ps' for a mode with Σ|ψ|² = 1, 'incoming flux' for a scattering state" }),
    spacingNm: z.number().meta({ description: 'The lattice length (nm): the spacing a, or a_CC on the honeycomb' }),
    lattice: z
      .enum(['square', 'honeycomb'])
      .optional()
      .meta({ description: 'Where site (i, j) sits (docs/physics-model.md, "Lattices"); absent in maps stored before it was sent: \'square\'' }),
    grid: z.object({ nx: z.number().int(), ny: z.number().int() }),
    mask: z.string().meta({ description: 'Cavity sites as a bitset over the grid, bit i·ny + j, most significant bit first (base64)' }),
    psi: b64('ψ per site (re, im), sites in lexicographic (i, j) order'),
    vectors: b64('Current (j_x, j_y) per site'),
    leads: z.array(z.object({ name: z.string(), side: z.string(), current: z.number() })),
    kirchhoffResidual: z.number().nullable(),
    ldos: b64('Local density of states per site (1/meV)').nullable(),
    husimi: z
      .object({
        sigmaNm: z.number(),
        gridNm: z.number(),
        directions: z.array(z.number()).meta({ description: 'Directions (rad from +x, counterclockwise)' }),
        angularResolution: z.number().meta({ description: '1/(2σk) at the mean wavenumber (rad)' }),
        meanWavenumber: z.number(),
        peakThreshold: z.number(),
        points: b64('Sample points (x, y) in nm'),
        distribution: b64('P(point, direction), one row per point'),
        vectorSum: b64('Vector sum per point (x, y)'),
        kineticEnergy: b64('E − V per point (meV); ≤ 0 is forbidden. On the honeycomb E − V − E_D (below 0: hole-like)'),
        peaks: z.array(z.object({ point: z.number().int(), angle: z.number(), share: z.number() })),
        diracEnergy: z.number().optional().meta({ description: 'Honeycomb only: the Dirac energy E_D = E0 + 3t′ (meV)' }),
        diracCutoff: z.number().optional().meta({ description: 'Honeycomb only: points with t·|f(k)| below this fraction of t are empty' }),
        carrier: b64(
          'Honeycomb only: +1 electron-like, −1 hole-like, 0 empty (near the Dirac energy, in the gap or beyond the van Hove energy) per point',
        ).optional(),
        valleyShare: b64("Honeycomb only: valley K's share of each point's total (NaN where empty)").optional(),
        valleys: z
          .array(
            z.object({
              name: z.enum(['K', 'K′']),
              centre: z.tuple([z.number(), z.number()]).meta({ description: 'The valley centre (1/nm)' }),
              distribution: b64('P of this valley, one row per point'),
              vectorSum: b64("This valley's vector sum per point (x, y)"),
              peaks: z.array(z.object({ point: z.number().int(), angle: z.number(), share: z.number() })),
            }),
          )
          .length(2)
          .optional()
          .meta({
            description:
              'Honeycomb only: the map of each valley (the top-level distribution, vector sum and peaks are of their sum); angles are ray directions',
          }),
      })
      .nullable(),
  })
  .meta({ id: 'ModeMapPayload' });

export const modeMapViewSchema = z
  .object({
    id: z.uuid(),
    status: jobStatusSchema,
    progress: z.object({ stage: z.string(), fraction: z.number() }).nullable(),
    params: z.record(z.string(), z.unknown()),
    resonanceId: z.uuid().nullable(),
    error: z.string().nullable(),
    createdAt: timestamp(),
    finishedAt: timestamp().nullable(),
    result: modeMapPayloadSchema.nullable(),
  })
  .meta({ id: 'ModeMap' });
export type ModeMapPayload = z.infer<typeof modeMapPayloadSchema>;
export type ModeMapView = z.infer<typeof modeMapViewSchema>;

/** A malformed map id answers 404 (the handler checks it), like the resonance ids. */
export const modeMapParams = z.object({ groupId: z.uuid(), mapId: z.string().meta({ format: 'uuid' }) });

export const resonanceCurrentRoute = declareRoute({
  id: 'getResonanceCurrent',
  method: 'get',
  path: '/groups/{groupId}/resonances/{id}/current',
  tag: 'catalogue',
  summary: "Probability current of the resonance's mode, as its run stored it, with the mode",
  access: 'member',
  notes: '404 no_current for resonances catalogued before current maps were stored (ask for a map with POST /mode-maps).',
  params: resonanceParams,
  answer: json(200, 'The current map', modeMapPayloadSchema),
});

export const resonanceModeMapsRoute = declareRoute({
  id: 'listResonanceModeMaps',
  method: 'get',
  path: '/groups/{groupId}/resonances/{id}/mode-maps',
  tag: 'catalogue',
  summary: 'Maps already asked for this resonance (without their results), newest first',
  access: 'member',
  params: resonanceParams,
  answer: json(200, 'The maps', z.object({ items: z.array(modeMapViewSchema) })),
});

export const createModeMapRoute = declareRoute({
  id: 'createModeMap',
  method: 'post',
  path: '/groups/{groupId}/mode-maps',
  tag: 'catalogue',
  summary: 'Queue a map (current of a scattering state, Husimi map) or get the cached one',
  access: 'member',
  notes: '202 when queued, 200 when the same map (same parameters and engine version) already exists; a failed map is queued again.',
  params: groupParams,
  body: modeMapRequestSchema,
  answer: json(202, 'The map, queued (200: the same map already exists)', modeMapViewSchema, [200]),
  errors: { 503: 'queue_unavailable: this server has no computation queue' },
});

export const getModeMapRoute = declareRoute({
  id: 'getModeMap',
  method: 'get',
  path: '/groups/{groupId}/mode-maps/{mapId}',
  tag: 'catalogue',
  summary: 'Status, progress and (when completed) the result of a map',
  access: 'member',
  params: modeMapParams,
  answer: json(200, 'The map', modeMapViewSchema),
});
