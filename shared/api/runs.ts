/** Runs: pole searches and transmission sweeps on a model version, their progress and results. */
import * as z from 'zod';
import { RUN_KINDS, RUN_STATUSES, runKindSchema, runStatusSchema } from './enums.js';
import { groupParams, personRef, timestamp } from './fields.js';
import { resonanceRowSchema } from './resonance-row.js';
import { declareRoute, json, media } from './route.js';

const MAX_POINTS = 20_000;

/** A pole search looks for poles with E in [emin, emax] meV and Γ ≤ gammaMax meV. */
export const poleWindowSchema = z
  .object({
    emin: z.number().finite(),
    emax: z.number().finite(),
    gammaMax: z.number().finite().positive('gammaMax (largest width Γ searched, meV) must be positive'),
  })
  .refine((w) => w.emax > w.emin, { message: 'emax must be larger than emin', path: ['emax'] });

/** A transmission sweep samples `points` real energies in [emin, emax] meV. */
export const transmissionWindowSchema = z
  .object({
    emin: z.number().finite(),
    emax: z.number().finite(),
    points: z.number().int().min(2, 'at least 2 energies').max(MAX_POINTS, `at most ${MAX_POINTS} energies`),
  })
  .refine((w) => w.emax > w.emin, { message: 'emax must be larger than emin', path: ['emax'] });

export const runRequestSchema = z
  .discriminatedUnion('kind', [
    z.object({
      kind: z.literal('pole-search'),
      modelId: z.uuid(),
      version: z.number().int().min(1).optional(),
      window: poleWindowSchema,
      note: z.string().max(2000).optional(),
    }),
    z.object({
      kind: z.literal('transmission'),
      modelId: z.uuid(),
      version: z.number().int().min(1).optional(),
      window: transmissionWindowSchema,
      note: z.string().max(2000).optional(),
    }),
  ])
  .meta({ id: 'RunRequest' });
export type RunRequest = z.infer<typeof runRequestSchema>;

export const runEstimateSchema = z
  .object({
    sites: z.number().int(),
    pieces: z.number().int(),
    thresholdsInWindow: z.array(z.number()),
    expectedLevels: z.number().int().describe("closed-cavity levels in the window by Weyl's law"),
    factorisations: z.number().int(),
    secondsPerFactorisation: z.number().describe('modelled seconds of one pole-search step (an LU and its probe solves)'),
    expectedSeconds: z.number().describe('the cost model applied to the run (deterministic; measured accuracy in docs/api.md)'),
    method: z.object({ kind: z.literal('cost-model'), engineVersion: z.string(), calibratedAt: z.string() }),
    limitSeconds: z.number().optional().describe("this server's limit per run (POLEWARD_RUN_MAX_SECONDS)"),
    withinLimit: z.boolean().optional().describe('false: POST /runs would refuse this run with 422 run_too_large'),
    warnings: z.array(z.string()),
  })
  .meta({ id: 'RunEstimate' });
export type RunEstimate = z.infer<typeof runEstimateSchema>;

/** The argument-principle check of one piece of the window (shared/engine/pole-types.ts). */
export const certificatePieceSchema = z.object({
  emin: z.number().meta({ description: 'Real extent of the piece (meV)' }),
  emax: z.number(),
  polesFound: z.number().int(),
  windingNumber: z.number().int().nullable().meta({ description: 'Winding number of det T(z) around the contour; null when it could not be settled' }),
  certified: z.boolean().meta({ description: 'True when windingNumber is settled and equals polesFound' }),
  nodes: z.number().int().meta({ description: 'Contour nodes (LU factorisations) spent on this piece' }),
  note: z.string().optional(),
});
export type CertificatePiece = z.infer<typeof certificatePieceSchema>;

export const runCertificateSchema = z
  .object({ pieces: z.array(certificatePieceSchema), certified: z.boolean(), summary: z.string() })
  .meta({ id: 'RunCertificate', description: 'How far the pole count is certified, per window piece' });
export type RunCertificate = z.infer<typeof runCertificateSchema>;

export const runProgressSchema = z.object({ stage: z.string(), fraction: z.number().min(0).max(1) });
export type RunProgress = z.infer<typeof runProgressSchema>;

export const runSchema = z
  .object({
    id: z.uuid(),
    kind: runKindSchema,
    status: runStatusSchema,
    progress: runProgressSchema.nullable(),
    window: z.record(z.string(), z.number()).meta({ description: 'As submitted: emin, emax (meV) and gammaMax (meV) or points' }),
    note: z.string(),
    modelId: z.uuid(),
    modelName: z.string(),
    modelVersion: z.number().int().min(1),
    createdBy: personRef.nullable(),
    createdAt: timestamp(),
    startedAt: timestamp().nullable(),
    finishedAt: timestamp().nullable(),
    attempts: z.number().int().nonnegative(),
    error: z.string().nullable(),
    notice: z
      .string()
      .nullable()
      .meta({ description: 'Set while the run looks stuck (queued with no worker taking it, or its worker silent): what is happening and what to do' }),
    engineVersion: z.string().nullable(),
    resonanceCount: z.number().int().nullable(),
    certificate: runCertificateSchema
      .nullable()
      .meta({ description: 'Pole searches: how far the pole count is certified, per window piece; null otherwise or before the end' }),
    estimate: runEstimateSchema.nullable(),
    stats: z.unknown().meta({ description: 'Engine counters (LU factorisations, Newton steps...), or null' }),
  })
  .meta({ id: 'Run' });
export type Run = z.infer<typeof runSchema>;

export const runListSchema = z.object({ items: z.array(runSchema), total: z.number().int().nonnegative() }).meta({ id: 'RunList' });
export type RunList = z.infer<typeof runListSchema>;

export const spectrumSchema = z
  .object({
    energies: z.array(z.number()).meta({ description: 'meV' }),
    pairs: z
      .array(z.object({ from: z.number().int(), to: z.number().int() }))
      .meta({ description: "Lead pairs (indices in the model's lead order) in the order of transmission rows" }),
    transmission: z.array(z.array(z.number())).meta({ description: 'transmission[pair][energy]' }),
    residual: z.array(z.number()),
    reflection: z.array(z.array(z.number())).nullable().meta({
      description:
        "R per lead in the model's lead order: reflection[lead][energy], summed over the lead's open channels; null for runs computed before reflection was kept",
    }),
  })
  .meta({ id: 'Spectrum' });
export type Spectrum = z.infer<typeof spectrumSchema>;

export const runLeadSchema = z.object({ name: z.string(), side: z.string(), width: z.number().int() });

export const runDetailSchema = runSchema
  .extend({
    thresholds: z.array(z.number()),
    poles: z.array(resonanceRowSchema),
    spectrum: spectrumSchema.nullable(),
    leads: z.array(runLeadSchema).meta({ description: "The model version's leads in engine order (spectrum pairs index into it)" }),
    microwave: z.object({ permittivity: z.number(), heightMm: z.number(), twoDimensionalLimitGhz: z.number() }).nullable().meta({
      description:
        "A microwave model's filling ε_r, height h (mm) and 2D limit c/(2h√ε_r) (GHz): the run's window, thresholds and spectrum energies are k² (mm⁻²), f = c·√k²/(2π√ε_r); null for electrons",
    }),
  })
  .meta({ id: 'RunDetail' });
export type RunDetail = z.infer<typeof runDetailSchema>;

/** One `progress` event of a run's event stream. */
export const runProgressEventSchema = z.object({
  id: z.uuid(),
  status: runStatusSchema,
  progress: runProgressSchema.nullable(),
  attempts: z.number().int(),
  error: z.string().nullable(),
  resonanceCount: z.number().int().nullable(),
});
export type RunProgressEvent = z.infer<typeof runProgressEventSchema>;

export const runListQuery = z.object({
  status: z.enum(RUN_STATUSES).optional(),
  kind: z.enum(RUN_KINDS).optional(),
  modelId: z.uuid().optional(),
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(25),
});
export const runParams = z.object({ groupId: z.uuid(), runId: z.uuid() });

export const estimateRunRoute = declareRoute({
  id: 'estimateRun',
  method: 'post',
  path: '/groups/{groupId}/runs/estimate',
  tag: 'runs',
  summary: 'What a pole search or transmission sweep would cost, before launching it',
  access: 'designer',
  params: groupParams,
  body: runRequestSchema,
  answer: json(200, 'The estimate', runEstimateSchema),
});

export const launchRunRoute = declareRoute({
  id: 'launchRun',
  method: 'post',
  path: '/groups/{groupId}/runs',
  tag: 'runs',
  summary: 'Queue a pole search or transmission sweep on a model version',
  access: 'designer',
  params: groupParams,
  body: runRequestSchema,
  answer: json(201, 'Queued', runSchema),
  errors: {
    422: 'run_too_large: estimated above POLEWARD_RUN_MAX_SECONDS; the message says what to shrink',
    429: 'too_many_runs: queued + running runs at the limit; see Retry-After',
  },
});

export const listRunsRoute = declareRoute({
  id: 'listRuns',
  method: 'get',
  path: '/groups/{groupId}/runs',
  tag: 'runs',
  summary: 'Runs of the group, newest first',
  access: 'member',
  params: groupParams,
  query: runListQuery,
  answer: json(200, 'One page of runs', runListSchema),
});

export const getRunRoute = declareRoute({
  id: 'getRun',
  method: 'get',
  path: '/groups/{groupId}/runs/{runId}',
  tag: 'runs',
  summary: 'A run with its poles, thresholds and spectrum',
  access: 'member',
  params: runParams,
  answer: json(200, 'The run', runDetailSchema),
});

export const getRunSpectrumRoute = declareRoute({
  id: 'getRunSpectrum',
  method: 'get',
  path: '/groups/{groupId}/runs/{runId}/spectrum',
  tag: 'runs',
  summary: 'The transmission spectrum a run computed',
  access: 'member',
  params: runParams,
  answer: json(200, 'The spectrum', spectrumSchema),
});

export const cancelRunRoute = declareRoute({
  id: 'cancelRun',
  method: 'post',
  path: '/groups/{groupId}/runs/{runId}/cancel',
  tag: 'runs',
  summary: 'Cancel a queued or running run',
  access: 'designer',
  notes: 'Only the person who launched it, or a group admin.',
  params: runParams,
  answer: json(202, 'Cancellation requested', runSchema),
});

export const runEventsRoute = declareRoute({
  id: 'runEvents',
  method: 'get',
  path: '/groups/{groupId}/runs/{runId}/events',
  tag: 'runs',
  summary: 'Live status and progress of a run',
  access: 'member',
  params: runParams,
  answer: media(
    200,
    'text/event-stream',
    'An event stream that ends after `done`',
    z.string().meta({
      description:
        'Server-sent events: `progress` with { id, status, progress, attempts, error, resonanceCount } on every change, then `done` with { status }.',
    }),
  ),
});
