// Answer shapes of the peak-fit routes (server/fits), for the OpenAPI document.
import { z } from 'zod';

const timestamp = () => z.string().meta({ description: 'ISO 8601 date-time' });

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
    createdAt: z.union([timestamp(), z.unknown()]),
  })
  .meta({ id: 'TraceSummary' });

export const traceDetailSchema = traceSummarySchema
  .extend({
    energies: z.array(z.number()).meta({ description: 'meV, ascending' }),
    transmission: z.array(z.number()).meta({ description: 'T = G/(2e²/h)' }),
  })
  .meta({ id: 'TraceDetail' });

export const tracePreviewSchema = z
  .object({
    columns: z.array(z.string()),
    hasHeader: z.boolean(),
    delimiter: z.string(),
    rowCount: z.number().int(),
    rows: z.array(z.object({ line: z.number().int(), cells: z.array(z.string()) })),
  })
  .meta({ id: 'TracePreview' });

export const fitSchema = z
  .object({
    id: z.uuid(),
    runId: z.uuid().nullable(),
    traceId: z.uuid().nullable(),
    modelId: z.uuid().nullable(),
    modelName: z.string().nullable(),
    modelVersionId: z.uuid().nullable(),
    request: z.record(z.string(), z.unknown()),
    status: z.enum(['queued', 'running', 'completed', 'failed']),
    progressFraction: z.number().nullable(),
    attempt: z.number().int(),
    error: z.string().nullable(),
    comparison: z.unknown().meta({ description: 'Per fitted peak: the nearest computed pole and the agreement in % and in standard errors' }),
    deviceName: z.string().nullable(),
    createdBy: z.string().nullable(),
    createdAt: timestamp(),
    finishedAt: timestamp().nullable(),
  })
  .meta({ id: 'FitSummary' });

export const fitListSchema = z.array(fitSchema.extend({ peaks: z.unknown(), warnings: z.unknown() }));

export const fitDetailSchema = fitSchema
  .extend({
    result: z.unknown().meta({ description: 'Parameters with standard errors, covariance, χ², peaks (E0, Γ, τ, Q, q), warnings and the curve' }),
    catalogueIds: z.array(z.uuid()).meta({ description: 'The fitted resonances filed in the catalogue' }),
  })
  .meta({ id: 'FitDetail' });
