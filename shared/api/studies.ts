/**
 * Parameter studies and tolerance ensembles (issue 14): the request and answer schemas
 * and one declaration per route. Energies and widths in meV, lengths in nm, field in T.
 * The physics of the outcome (trajectories, marks, statistics): docs/physics-model.md,
 * "Parameter studies and tolerance ensembles".
 */
import * as z from 'zod';
import { declareRoute, json, media } from './route.js';
import { personRef, timestamp } from './fields.js';

const STUDY_KINDS = ['sweep', 'ensemble'] as const;
const STUDY_STATUSES = ['queued', 'running', 'completed', 'failed', 'cancelled'] as const;
type StudyStatus = (typeof STUDY_STATUSES)[number];
export const FINISHED_STUDY_STATUSES: readonly StudyStatus[] = ['completed', 'failed', 'cancelled'];

const modelPath = z
  .string()
  .regex(/^[A-Za-z0-9_]+(\.[A-Za-z0-9_]+)*$/, 'a dotted path into the model, e.g. field or potential.0.value')
  .max(200);

const studyWindowSchema = z
  .object({
    emin: z.number().finite(),
    emax: z.number().finite(),
    gammaMax: z.number().finite().positive(),
  })
  .refine((w) => w.emax > w.emin, { message: 'emax must be above emin', path: ['emax'] });

const searchOptions = z
  .object({
    probes: z.number().int().min(1).max(32).optional(),
    seed: z.number().int().min(0).max(0xffffffff).optional(),
    maxNodes: z.number().int().min(50).max(20_000).optional(),
  })
  .optional();

/** Values: an explicit list, or a range with a count (both ends included). */
export const parameterValuesSchema = z.union([
  z.object({ from: z.number().finite(), to: z.number().finite(), count: z.number().int().min(2).max(400) }),
  z.object({ list: z.array(z.number().finite()).min(1).max(400) }),
]);

const studyParameterSchema = z.object({ path: modelPath, values: parameterValuesSchema });

const range = z.object({ min: z.number().finite().optional(), max: z.number().finite().optional() });

export const sweepRequestSchema = z.object({
  kind: z.literal('sweep'),
  modelId: z.uuid(),
  /** Model version; the latest when left out. */
  version: z.number().int().min(1).optional(),
  name: z.string().max(200).optional(),
  parameters: z.array(studyParameterSchema).min(1).max(2),
  window: studyWindowSchema,
  search: searchOptions,
  transmissionPoints: z
    .number()
    .int()
    .min(0)
    .max(400)
    .optional()
    .meta({ description: 'Energies per step of the transmission map T(E, p) over the window; 0: no map; default 80' }),
});

export const ensembleRequestSchema = z.object({
  kind: z.literal('ensemble'),
  modelId: z.uuid(),
  version: z.number().int().min(1).optional(),
  name: z.string().max(200).optional(),
  window: studyWindowSchema,
  search: searchOptions,
  realisations: z.number().int().min(1).max(1000),
  seed: z.number().int().min(0).max(0xffffffff),
  roughness: z
    .object({ rmsNm: z.number().finite().min(0).max(100), correlationNm: z.number().finite().min(0).max(10_000) })
    .nullable()
    .optional(),
  jitter: z
    .array(z.object({ kind: z.enum(['dimension', 'lead-width', 'gate-offset']), path: modelPath, sigma: z.number().finite().min(0) }))
    .max(20)
    .optional(),
  disorder: z.boolean().optional(),
  follow: z.object({ energy: z.number().finite() }),
  tolerances: z.object({ energy: range.optional(), width: range.optional(), quality: range.optional() }).optional(),
  bins: z.number().int().min(1).max(100).optional(),
});

export const studyRequestSchema = z.discriminatedUnion('kind', [sweepRequestSchema, ensembleRequestSchema]);
export type StudyRequest = z.infer<typeof studyRequestSchema>;
export type SweepRequest = z.infer<typeof sweepRequestSchema>;
export type EnsembleRequest = z.infer<typeof ensembleRequestSchema>;

export const studyEstimateSchema = z.object({
  steps: z.number().int(),
  /** Seconds of one worker for one step (the run estimate of the model and window). */
  secondsPerStep: z.number(),
  /** Seconds for the whole study on one worker process; divide by the worker count. */
  secondsOneWorker: z.number(),
  sites: z.number().int(),
});
export type StudyEstimate = z.infer<typeof studyEstimateSchema>;

const stepCounts = z.object({
  queued: z.number().int(),
  running: z.number().int(),
  completed: z.number().int(),
  failed: z.number().int(),
  cancelled: z.number().int(),
});

export const studySummarySchema = z.object({
  id: z.uuid(),
  kind: z.enum(STUDY_KINDS),
  name: z.string(),
  status: z.enum(STUDY_STATUSES),
  modelId: z.uuid(),
  modelName: z.string(),
  modelVersion: z.number().int(),
  stepCount: z.number().int(),
  steps: stepCounts,
  /** Steps whose search result was reused from an identical step computed before. */
  reusedSteps: z.number().int(),
  estimateSeconds: z.number().nullable(),
  error: z.string().nullable(),
  createdBy: personRef.nullable(),
  createdAt: timestamp(),
  finishedAt: timestamp().nullable(),
});
export type StudySummary = z.infer<typeof studySummarySchema>;

const studyStepViewSchema = z.object({
  index: z.number().int(),
  /** Parameter values of a sweep step; [] for an ensemble realisation. */
  values: z.array(z.number()),
  status: z.enum(STUDY_STATUSES),
  attempts: z.number().int(),
  reused: z.boolean(),
  seconds: z.number().nullable(),
  worker: z.string().nullable(),
  error: z.string().nullable(),
});

const poleSchema = z.object({
  energy: z.number(),
  width: z.number(),
  lifetimePs: z.number().nullable(),
  quality: z.number().nullable(),
  petermann: z.number(),
  partialWidths: z.array(z.number()),
  bound: z.boolean(),
  nearThreshold: z.object({ threshold: z.number(), distanceInWidths: z.number() }).nullable(),
});

export const trajectoryMarkSchema = z.object({
  kind: z.enum(['crossing', 'avoided-crossing', 'width-exchange']),
  trajectories: z.tuple([z.number().int(), z.number().int()]),
  step: z.number().int(),
  distance: z.number(),
  from: z.number().int(),
  to: z.number().int(),
  petermann: z.number(),
  widthSums: z.tuple([z.number(), z.number(), z.number()]),
});
export type TrajectoryMark = z.infer<typeof trajectoryMarkSchema>;

export const trajectorySchema = z.object({
  id: z.number().int(),
  entered: z.boolean(),
  left: z.boolean(),
  points: z.array(
    z.object({
      step: z.number().int(),
      value: z.number(),
      pole: z.number().int(),
      energy: z.number(),
      width: z.number(),
      link: z.enum(['start', 'continuation', 'overlap']),
      overlap: z.number().nullable(),
    }),
  ),
});
export type Trajectory = z.infer<typeof trajectorySchema>;

const transmissionMapSchema = z.object({
  /** Column energies (meV), evenly spaced over the window; each value is the largest T sampled within half a column of it. */
  energies: z.array(z.number()),
  /** The lead the transmission leaves from and those it enters (T summed over them); null: fewer than two leads. */
  from: z.string().nullable(),
  into: z.array(z.string()),
  worstCurrentResidual: z.number(),
  /** Steps whose adaptive sweep ran out of energies with intervals still flagged (a peak may be lower than drawn). */
  budgetExhaustedSteps: z.array(z.number().int()),
  /** Steps whose row sampled every pole the step found at E and E ± Γ/2 (those peaks are drawn at full height); absent in studies stored before. */
  poleSampledSteps: z.array(z.number().int()).optional(),
});

export const sweepOutcomeSchema = z.object({
  kind: z.literal('sweep'),
  parameters: z.array(z.object({ path: z.string(), values: z.array(z.number()) })),
  window: z.object({ emin: z.number(), emax: z.number(), gammaMax: z.number() }),
  steps: z.array(
    z.object({
      index: z.number().int(),
      values: z.array(z.number()),
      status: z.string(),
      certified: z.boolean(),
      summary: z.string(),
      factorisations: z.number(),
      coveredByContinuation: z.boolean(),
      poles: z.array(poleSchema),
      /** The step's row of the transmission map (one value per `transmission.energies`); null without a map. */
      transmission: z.array(z.number()).nullable().optional(),
    }),
  ),
  /** The transmission map's columns and leads; null when the study asked for no map (absent in studies from before maps). */
  transmission: transmissionMapSchema.nullable().optional(),
  lines: z.array(z.object({ value: z.number().nullable(), trajectories: z.array(trajectorySchema), marks: z.array(trajectoryMarkSchema) })),
  fullSearchFraction: z.number(),
  /**
   * Step size against the level spacing: links from one step to the next, and how many moved
   * a pole by more than half the mean level spacing of the window (the window's width over its
   * pole count) — then the steps are too coarse to be sure a trajectory stays on one resonance.
   * Absent in studies stored before.
   */
  moves: z.object({ links: z.number().int(), large: z.number().int(), spacing: z.number().nullable() }).optional(),
  units: z.object({ energy: z.string(), width: z.string(), lifetime: z.string() }),
});
export type SweepOutcome = z.infer<typeof sweepOutcomeSchema>;

const distributionSchema = z.object({
  count: z.number().int(),
  mean: z.number().nullable(),
  std: z.number().nullable(),
  min: z.number().nullable(),
  max: z.number().nullable(),
  histogram: z.object({ edges: z.array(z.number()), counts: z.array(z.number().int()) }),
});

const ensembleSampleSchema = z.object({
  realisation: z.number().int(),
  seed: z.number().int(),
  followed: z.boolean(),
  reason: z.string().nullable(),
  pole: z.number().int().nullable(),
  overlap: z.number().nullable(),
  energy: z.number().nullable(),
  width: z.number().nullable(),
  quality: z.number().nullable(),
  certified: z.boolean().nullable(),
  withinTolerances: z.boolean(),
  record: z.object({
    realisation: z.number().int(),
    seed: z.number().int(),
    jitter: z.array(z.object({ path: z.string(), kind: z.string(), value: z.number(), delta: z.number() })),
    roughness: z.object({ added: z.number().int(), removed: z.number().int(), droppedIslands: z.number().int() }).nullable(),
    disorderSeeds: z.array(z.number().int()),
  }),
});

export const ensembleOutcomeSchema = z.object({
  kind: z.literal('ensemble'),
  nominal: z.object({ certified: z.boolean(), poles: z.array(poleSchema) }).optional(),
  error: z.string().optional(),
  statistics: z
    .object({
      nominal: z.object({ pole: z.number().int(), energy: z.number(), width: z.number(), quality: z.number().nullable() }).nullable(),
      samples: z.array(ensembleSampleSchema),
      followed: z.number().int(),
      notFollowed: z.number().int(),
      energy: distributionSchema,
      width: distributionSchema,
      quality: distributionSchema,
      sensitivities: z.array(
        z.object({
          path: z.string(),
          kind: z.string(),
          energySlope: z.number().nullable(),
          widthSlope: z.number().nullable(),
          energySpread: z.number().nullable(),
          widthSpread: z.number().nullable(),
        }),
      ),
      residualSpread: z.object({ energy: z.number().nullable(), width: z.number().nullable() }),
      yield: z.object({ fraction: z.number(), within: z.number().int(), total: z.number().int() }).nullable(),
    })
    .nullable(),
  units: z.object({ energy: z.string(), width: z.string(), roughness: z.string() }).optional(),
});
export type EnsembleOutcome = z.infer<typeof ensembleOutcomeSchema>;

export const studyDetailSchema = studySummarySchema.extend({
  definition: z.object({}).loose(),
  stepList: z.array(studyStepViewSchema),
  outcome: z.union([sweepOutcomeSchema, ensembleOutcomeSchema]).nullable(),
});
export type StudyDetail = z.infer<typeof studyDetailSchema>;

export const studyListSchema = z.object({ items: z.array(studySummarySchema), total: z.number().int() });

export const studyStepDetailSchema = z.object({
  index: z.number().int(),
  values: z.array(z.number()),
  status: z.enum(STUDY_STATUSES),
  certified: z.boolean().nullable(),
  summary: z.string().nullable(),
  /** The step's model document (the nominal one with the parameters set, or the realisation). */
  document: z.object({}).loose(),
  grid: z.object({ nx: z.number().int(), ny: z.number().int() }),
  sites: z.object({ i: z.array(z.number().int()), j: z.array(z.number().int()) }),
  poles: z.array(poleSchema.extend({ density: z.array(z.number()).meta({ description: '|ψ|² per site, Σ = 1, float32 precision' }) })),
});
export type StudyStepDetail = z.infer<typeof studyStepDetailSchema>;

export const savedStepSchema = z.object({
  modelId: z.uuid(),
  version: z.number().int(),
  /** Resonances of the step filed in the catalogue under the new version. */
  resonances: z.number().int(),
  /** Whether the step's search was certified (an uncertified step may have missed poles). */
  certified: z.boolean(),
});
export type SavedStep = z.infer<typeof savedStepSchema>;

const studyParams = z.object({ groupId: z.uuid(), studyId: z.uuid() });
const stepParams = z.object({ groupId: z.uuid(), studyId: z.uuid(), index: z.string().regex(/^\d{1,4}$/, 'a step number (0, 1, 2, …)') });

export const studyEstimateRoute = declareRoute({
  id: 'estimateStudy',
  method: 'post',
  path: '/groups/{groupId}/studies/estimate',
  access: 'designer',
  tag: 'studies',
  summary: 'Estimate the cost of a study before launching it',
  params: z.object({ groupId: z.uuid() }),
  body: studyRequestSchema,
  answer: json(200, 'The estimate', studyEstimateSchema),
});

export const createStudyRoute = declareRoute({
  id: 'createStudy',
  method: 'post',
  path: '/groups/{groupId}/studies',
  access: 'designer',
  tag: 'studies',
  summary: 'Launch a parameter study or a tolerance ensemble (one queue job per step)',
  notes:
    'A path must lead to a number of the model (400 naming the parameter otherwise). Each step is a pole search over the same window; identical steps (same model, window, options, engine version) reuse stored results.',
  params: z.object({ groupId: z.uuid() }),
  body: studyRequestSchema,
  answer: json(201, 'The study, queued', studyDetailSchema),
  errors: { 503: 'No queue for studies is configured' },
});

export const listStudiesRoute = declareRoute({
  id: 'listStudies',
  method: 'get',
  path: '/groups/{groupId}/studies',
  access: 'member',
  tag: 'studies',
  summary: "The group's studies, newest first",
  params: z.object({ groupId: z.uuid() }),
  query: z.object({ page: z.coerce.number().int().min(1).default(1), pageSize: z.coerce.number().int().min(1).max(200).default(25) }),
  answer: json(200, 'A page of studies', studyListSchema),
});

export const studyDetailRoute = declareRoute({
  id: 'getStudy',
  method: 'get',
  path: '/groups/{groupId}/studies/{studyId}',
  access: 'member',
  tag: 'studies',
  summary: 'A study: progress per step and, once ended, its trajectories or statistics',
  params: studyParams,
  answer: json(200, 'The study', studyDetailSchema),
});

export const cancelStudyRoute = declareRoute({
  id: 'cancelStudy',
  method: 'post',
  path: '/groups/{groupId}/studies/{studyId}/cancel',
  access: 'designer',
  tag: 'studies',
  summary: 'Cancel the steps not started (running ones stop); finished steps are kept',
  params: studyParams,
  answer: json(202, 'Cancellation requested', studyDetailSchema),
});

export const studyStepRoute = declareRoute({
  id: 'getStudyStep',
  method: 'get',
  path: '/groups/{groupId}/studies/{studyId}/steps/{index}',
  access: 'member',
  tag: 'studies',
  summary: 'One step: its model, its poles and their mode images',
  params: stepParams,
  answer: json(200, 'The step', studyStepDetailSchema),
});

export const saveStudyStepRoute = declareRoute({
  id: 'saveStudyStep',
  method: 'post',
  path: '/groups/{groupId}/studies/{studyId}/steps/{index}/save',
  access: 'designer',
  tag: 'studies',
  summary: "Keep a step's model as a new version of the study's model and file its resonances in the catalogue",
  notes:
    'The version and the catalogue rows (with mode images and details.provenance.study: study id, step, parameter values) are written in one transaction. 409 when the step has not completed.',
  params: stepParams,
  answer: json(201, 'The new version', savedStepSchema),
});

export const exportStudyRoute = declareRoute({
  id: 'exportStudy',
  method: 'get',
  path: '/groups/{groupId}/studies/{studyId}/export',
  access: 'member',
  tag: 'studies',
  summary: 'Trajectories (a sweep) or samples (an ensemble) as CSV or JSON',
  notes:
    "format=json gives the whole outcome (trajectories, marks, every step's poles and transmission-map row). In CSV, table=transmission gives a sweep's map T(E, p) as one row per step and energy instead of the trajectory points.",
  params: studyParams,
  query: z.object({
    format: z.enum(['csv', 'json']).default('csv'),
    table: z.enum(['trajectories', 'transmission']).default('trajectories'),
  }),
  answer: media(200, 'text/csv', 'CSV (or JSON with format=json)', z.string()),
});

export const studyRoutesDeclared = [
  studyEstimateRoute,
  createStudyRoute,
  listStudiesRoute,
  studyDetailRoute,
  cancelStudyRoute,
  studyStepRoute,
  saveStudyStepRoute,
  exportStudyRoute,
] as const;
