import { z } from 'zod';

const MAX_POINTS = 20_000;

export const poleWindowSchema = z
  .object({
    emin: z.number().finite(),
    emax: z.number().finite(),
    gammaMax: z.number().finite().positive('gammaMax (largest width Γ searched, meV) must be positive'),
  })
  .refine((w) => w.emax > w.emin, { message: 'emax must be larger than emin', path: ['emax'] });

export const transmissionWindowSchema = z
  .object({
    emin: z.number().finite(),
    emax: z.number().finite(),
    points: z.number().int().min(2, 'at least 2 energies').max(MAX_POINTS, `at most ${MAX_POINTS} energies`),
  })
  .refine((w) => w.emax > w.emin, { message: 'emax must be larger than emin', path: ['emax'] });

export const runRequestSchema = z.discriminatedUnion('kind', [
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
]);
export type RunRequest = z.infer<typeof runRequestSchema>;
