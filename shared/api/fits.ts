/** Measured traces and peak fits: upload, preview, fit, compare with computed poles. */
import * as z from 'zod';
import { noNul } from './catalogue-query.js';
import { LINESHAPES, type Lineshape } from '../engine/fit-lineshapes.js';
import { X_UNITS, Y_UNITS } from '../engine/fit-trace.js';
import { jobStatusSchema } from './enums.js';
import { groupParams, timestamp } from './fields.js';
import { declareRoute, json, media } from './route.js';

const blankIsAbsent = (v: unknown) => (v === '' || v === undefined || v === null ? undefined : v);
const optionalNumber = z.preprocess(blankIsAbsent, z.coerce.number().refine(Number.isFinite, 'must be a number').optional());

export const traceParams = z.object({ groupId: z.uuid(), traceId: z.uuid() });
export const fitParams = z.object({ groupId: z.uuid(), fitId: z.uuid() });

/** The fields of POST /traces (multipart: strings). */
export const traceFields = z
  .object({
    deviceName: z.string().trim().min(1, 'name the device').max(120).regex(noNul),
    temperatureMK: z.coerce.number().positive('must be above 0 mK').max(1e6, 'must be at most 1e6 mK'),
    notes: z.string().max(2000).regex(noNul).default(''),
    modelId: z.preprocess(blankIsAbsent, z.uuid().optional()),
    x: z.string().trim().min(1, 'choose the x column').max(200),
    y: z.string().trim().min(1, 'choose the y column').max(200),
    xUnit: z.enum(X_UNITS, { error: `must be one of ${X_UNITS.join(', ')}` }),
    yUnit: z.enum(Y_UNITS, { error: `must be one of ${Y_UNITS.join(', ')}` }),
    leverArm: z.preprocess(blankIsAbsent, z.coerce.number().positive('must be above 0 meV/mV').optional()),
    firstLine: z.preprocess(blankIsAbsent, z.coerce.number().int().min(1).optional()),
    lastLine: z.preprocess(blankIsAbsent, z.coerce.number().int().min(1).optional()),
    rangeFrom: optionalNumber,
    rangeTo: optionalNumber,
  })
  .superRefine((f, ctx) => {
    if (f.xUnit === 'mV' && f.leverArm === undefined)
      ctx.addIssue({ code: 'custom', path: ['leverArm'], message: 'a gate-voltage column needs a lever arm (meV/mV)' });
    if ((f.rangeFrom === undefined) !== (f.rangeTo === undefined))
      ctx.addIssue({ code: 'custom', path: ['rangeTo'], message: 'give both ends of the range or neither' });
  });

const finite = z.number().refine(Number.isFinite, 'must be a finite number');

export const fitBody = z
  .object({
    source: z.discriminatedUnion('kind', [
      z.object({ kind: z.literal('run'), runId: z.uuid(), pair: z.number().int().min(0).default(0), from: finite, to: finite }),
      z.object({ kind: z.literal('trace'), traceId: z.uuid(), from: finite.optional(), to: finite.optional() }),
    ]),
    lineshape: z.enum(LINESHAPES as [Lineshape, ...Lineshape[]], { error: `must be one of ${LINESHAPES.join(', ')}` }),
    background: z.enum(['constant', 'linear']).default('constant'),
    peaks: z.number().int().min(1).max(10).default(1),
    temperatureMK: z.number().positive().max(1e6).optional(),
    modelId: z.uuid().optional(),
    hints: z
      .array(z.object({ energy: finite, width: z.number().positive().optional() }))
      .max(10)
      .optional(),
  })
  .meta({ id: 'FitRequest' });
export type FitRequestBody = z.infer<typeof fitBody>;

export const traceSummarySchema = z
  .object({
    id: z.uuid(),
    deviceName: z.string(),
    fileName: z.string(),
    temperatureMK: z.number(),
    notes: z.string(),
    modelId: z.uuid().nullable(),
    modelName: z.string().nullable(),
    columns: z.array(z.string()),
    selection: z.record(z.string(), z.unknown()).meta({ description: 'Columns, units, lever arm, lines and range chosen at upload' }),
    points: z.number().int(),
    createdBy: z.string().nullable(),
    createdAt: timestamp(),
  })
  .meta({ id: 'TraceSummary' });
export type TraceSummary = z.infer<typeof traceSummarySchema>;

export const traceDetailSchema = traceSummarySchema
  .extend({
    energies: z.array(z.number()).meta({ description: 'meV, ascending' }),
    transmission: z.array(z.number()).meta({ description: 'T = G/(2e²/h)' }),
  })
  .meta({ id: 'TraceDetail' });
export type TraceDetail = z.infer<typeof traceDetailSchema>;

export const tracePreviewSchema = z
  .object({
    columns: z.array(z.string()),
    hasHeader: z.boolean(),
    delimiter: z.string(),
    rowCount: z.number().int(),
    rows: z.array(z.object({ line: z.number().int(), cells: z.array(z.string()) })),
  })
  .meta({ id: 'TracePreview' });
export type TracePreview = z.infer<typeof tracePreviewSchema>;

/** One fitted parameter with its standard error (shared/engine/fit.ts). */
export const fittedParameterSchema = z.object({
  name: z.string(),
  role: z.enum(['background', 'slope', 'energy', 'width', 'amplitude', 'asymmetry']),
  peak: z.number().int().nullable(),
  unit: z.string(),
  value: z.number(),
  error: z.number().nullable(),
  atBound: z.enum(['lower', 'upper']).nullable(),
  min: z.number().nullable().meta({ description: 'null stands for −infinity' }),
  max: z.number().nullable().meta({ description: 'null stands for +infinity' }),
});
export type FittedParameter = z.infer<typeof fittedParameterSchema>;

/** One fitted peak: E0, Γ, τ = ħ/Γ, Q with standard errors (null when not determined). */
export const fittedPeakSchema = z.object({
  energy: z.number(),
  energyError: z.number().nullable(),
  width: z.number(),
  widthError: z.number().nullable(),
  lifetimePs: z.number().nullable(),
  lifetimeError: z.number().nullable(),
  quality: z.number().nullable(),
  qualityError: z.number().nullable(),
  amplitude: z.number(),
  amplitudeError: z.number().nullable(),
  q: z.number().nullable(),
  qError: z.number().nullable(),
  fwhm: z.number().nullable(),
});
export type FittedPeakView = z.infer<typeof fittedPeakSchema>;

export const fitWarningSchema = z.object({ code: z.string(), message: z.string() });

export const fitResultSchema = z
  .object({
    lineshape: z.enum(LINESHAPES as [Lineshape, ...Lineshape[]]),
    background: z.enum(['constant', 'linear']),
    peakCount: z.number().int(),
    temperatureMK: z.number().nullable(),
    kT: z.number(),
    parameters: z.array(fittedParameterSchema),
    covariance: z.array(z.array(z.number().nullable())),
    chiSquare: z.number(),
    reducedChiSquare: z.number().nullable(),
    degreesOfFreedom: z.number().int(),
    points: z.number().int(),
    iterations: z.number().int(),
    converged: z.boolean(),
    peaks: z.array(fittedPeakSchema),
    warnings: z.array(fitWarningSchema),
    curve: z.object({
      x: z.array(z.number()),
      y: z.array(z.number()),
      fit: z.array(z.number()),
      background: z.array(z.number()),
      components: z.array(z.array(z.number())),
      residuals: z.array(z.number()),
    }),
  })
  .meta({ id: 'FitResult', description: 'Parameters with standard errors, covariance, χ², peaks (E0, Γ, τ, Q, q), warnings and the curve' });
export type FitResult = z.infer<typeof fitResultSchema>;

export const poleComparisonSchema = z.object({
  peak: z.number().int(),
  pole: z
    .object({
      id: z.uuid(),
      energy: z.number(),
      width: z.number(),
      petermann: z.number().nullable(),
      overlapping: z.boolean(),
      runId: z.uuid().nullable(),
      modelVersion: z.number().int(),
    })
    .nullable(),
  energyPercent: z.number().nullable(),
  energySigmas: z.number().nullable(),
  widthPercent: z.number().nullable(),
  widthSigmas: z.number().nullable(),
  positionComparable: z.boolean(),
  warnings: z.array(z.string()),
});
export type PoleComparison = z.infer<typeof poleComparisonSchema>;

export const fitSchema = z
  .object({
    id: z.uuid(),
    runId: z.uuid().nullable(),
    traceId: z.uuid().nullable(),
    modelId: z.uuid().nullable(),
    modelName: z.string().nullable(),
    modelVersionId: z.uuid().nullable(),
    request: z.record(z.string(), z.unknown()),
    status: jobStatusSchema,
    progressFraction: z.number().nullable(),
    attempt: z.number().int(),
    error: z.string().nullable(),
    comparison: z
      .array(poleComparisonSchema)
      .nullable()
      .meta({ description: 'Per fitted peak: the nearest computed pole and the agreement in % and in standard errors' }),
    deviceName: z.string().nullable(),
    createdBy: z.string().nullable(),
    createdAt: timestamp(),
    finishedAt: timestamp().nullable(),
  })
  .meta({ id: 'FitSummary' });
export type FitSummary = z.infer<typeof fitSchema>;

export const fitListItemSchema = fitSchema.extend({ peaks: z.array(fittedPeakSchema).nullable(), warnings: z.array(fitWarningSchema).nullable() });
export type FitListItem = z.infer<typeof fitListItemSchema>;

export const fitDetailSchema = fitSchema
  .extend({
    result: fitResultSchema.nullable(),
    catalogueIds: z.array(z.uuid()).meta({ description: 'The fitted resonances filed in the catalogue' }),
  })
  .meta({ id: 'FitDetail' });
export type FitDetail = z.infer<typeof fitDetailSchema>;

/** One `progress` event of a fit's event stream. */
export const fitProgressSchema = z.object({
  id: z.uuid(),
  status: jobStatusSchema,
  progressFraction: z.number().nullable(),
  attempt: z.number().int(),
  error: z.string().nullable(),
});
export type FitProgress = z.infer<typeof fitProgressSchema>;

const traceFile = { field: 'file', mediaType: 'text/csv', description: 'The trace: CSV or TSV, UTF-8, at most 2 MB.' };

export const listTracesRoute = declareRoute({
  id: 'listTraces',
  method: 'get',
  path: '/groups/{groupId}/traces',
  tag: 'fits',
  summary: "The group's measured traces, newest first",
  access: 'member',
  params: groupParams,
  answer: json(200, 'The traces', z.array(traceSummarySchema)),
});

export const previewTraceRoute = declareRoute({
  id: 'previewTrace',
  method: 'post',
  path: '/groups/{groupId}/traces/preview',
  tag: 'fits',
  summary: 'Columns and first rows of a CSV/TSV file, to choose columns before uploading (stores nothing)',
  access: 'analyst',
  params: groupParams,
  upload: traceFile,
  answer: json(200, 'The preview', tracePreviewSchema),
  errors: { 413: 'The file is over 2 MB', 415: 'The file is not CSV/TSV text' },
});

export const uploadTraceRoute = declareRoute({
  id: 'uploadTrace',
  method: 'post',
  path: '/groups/{groupId}/traces',
  tag: 'fits',
  summary: 'Upload a measured trace with its columns, units, temperature and device',
  access: 'analyst',
  notes: 'A bad file answers 400 invalid_trace naming the line and the column; nothing is stored.',
  params: groupParams,
  body: traceFields,
  upload: traceFile,
  answer: json(201, 'The stored trace', traceDetailSchema),
  errors: { 413: 'The file is over 2 MB', 415: 'The file is not CSV/TSV text' },
});

export const getTraceRoute = declareRoute({
  id: 'getTrace',
  method: 'get',
  path: '/groups/{groupId}/traces/{traceId}',
  tag: 'fits',
  summary: 'A measured trace with its points (meV, T)',
  access: 'member',
  params: traceParams,
  answer: json(200, 'The trace', traceDetailSchema),
});

export const listFitsRoute = declareRoute({
  id: 'listFits',
  method: 'get',
  path: '/groups/{groupId}/fits',
  tag: 'fits',
  summary: "The group's peak fits, newest first",
  access: 'member',
  params: groupParams,
  answer: json(200, 'The fits', z.array(fitListItemSchema)),
});

export const createFitRoute = declareRoute({
  id: 'createFit',
  method: 'post',
  path: '/groups/{groupId}/fits',
  tag: 'fits',
  summary: "Fit peaks to a range of a run's spectrum or to a measured trace",
  access: 'analyst',
  notes: 'Small fits answer 201 completed; larger ones 202 queued (poll getFit for progress).',
  params: groupParams,
  body: fitBody,
  answer: json(201, 'The fit (202 when queued)', fitDetailSchema, [202]),
  errors: { 409: 'The run has no spectrum yet' },
});

export const fitEventsRoute = declareRoute({
  id: 'fitEvents',
  method: 'get',
  path: '/groups/{groupId}/fits/{fitId}/events',
  tag: 'fits',
  summary: 'Live status and progress of a fit',
  access: 'member',
  params: fitParams,
  answer: media(
    200,
    'text/event-stream',
    'An event stream that ends after `done`',
    z.string().meta({
      description:
        'Server-sent events: `progress` with { id, status, progressFraction, attempt, error } on every change, then `done` with { status } (completed or failed).',
    }),
  ),
});

export const getFitRoute = declareRoute({
  id: 'getFit',
  method: 'get',
  path: '/groups/{groupId}/fits/{fitId}',
  tag: 'fits',
  summary: 'A fit with its result, comparison and catalogue rows',
  access: 'member',
  params: fitParams,
  answer: json(200, 'The fit', fitDetailSchema),
});
