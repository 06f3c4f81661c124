/** Answer schemas of the mode-map routes, for the OpenAPI document (docs/api.md, "Mode maps"). */
import { z } from 'zod';

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
    spacingNm: z.number(),
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
        kineticEnergy: b64('E − V per point (meV); ≤ 0 is forbidden'),
        peaks: z.array(z.object({ point: z.number().int(), angle: z.number(), share: z.number() })),
      })
      .nullable(),
  })
  .meta({ id: 'ModeMapPayload' });

export const modeMapViewSchema = z
  .object({
    id: z.uuid(),
    status: z.enum(['queued', 'running', 'completed', 'failed']),
    progress: z.object({ stage: z.string(), fraction: z.number() }).nullable(),
    params: z.record(z.string(), z.unknown()),
    resonanceId: z.uuid().nullable(),
    error: z.string().nullable(),
    createdAt: z.string(),
    finishedAt: z.string().nullable(),
    result: modeMapPayloadSchema.nullable(),
  })
  .meta({ id: 'ModeMap' });
