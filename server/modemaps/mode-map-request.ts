import { z } from 'zod';

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
        if (b[f] !== undefined) ctx.addIssue({ code: 'custom', path: [f], message: 'give either resonanceId or a model with energy, lead and channel, not both' });
      }
      return;
    }
    for (const f of ['modelId', 'energy', 'lead', 'channel'] as const) {
      if (b[f] === undefined) ctx.addIssue({ code: 'custom', path: [f], message: 'required for a scattering state (or give resonanceId)' });
    }
  });

export type ModeMapRequest = z.infer<typeof modeMapRequestSchema>;
export type HusimiRequest = z.infer<typeof husimiSchema>;
