/** One catalogued resonance z = E − iΓ/2, as the catalogue, a run's poles and a fit's results show it. */
import * as z from 'zod';
import { timestamp } from './fields.js';

const RESONANCE_SOURCES = ['computed', 'fitted'] as const;

const keyDimensionsSchema = z.object({
  width: z.number().optional(),
  height: z.number().optional(),
  radius: z.number().optional(),
  length: z.number().optional(),
  rx: z.number().optional(),
  ry: z.number().optional(),
  inner: z.number().optional(),
  outer: z.number().optional(),
  area: z.number().optional().meta({ description: 'nm²' }),
});

const PHYSICS_KINDS = ['electrons', 'microwave'] as const;

/** Microwave mode: the complex frequency's figures (GHz, MHz, ns, Q = Re f/Γ_f). */
const microwaveFiguresSchema = z.object({
  frequencyGhz: z.number(),
  widthMhz: z.number(),
  lifetimeNs: z.number().nullable(),
  quality: z.number().nullable(),
  validityLimitGhz: z.number().nullable(),
});

/**
 * Lattice validity of a resonance's model: the energy below which the lattice is trusted
 * (meV, or mm⁻² in the microwave mode), λ/a at this energy (null: infinite), and whether the
 * resonance lies above the limit (null: not known, e.g. a fit on a gate-voltage axis).
 */
const resonanceValiditySchema = z.object({
  limit: z.number().nullable(),
  wavelengthSpacings: z.number().nullable(),
  aboveLimit: z.boolean().nullable(),
});

export const resonanceRowSchema = z
  .object({
    id: z.uuid(),
    runId: z.uuid().nullable().meta({ description: 'The run; null for a fitted resonance of a measured trace' }),
    source: z.enum(RESONANCE_SOURCES).meta({ description: 'computed: a pole a run found; fitted: a peak fit (fitId)' }),
    fitId: z.uuid().nullable(),
    modelId: z.uuid(),
    modelName: z.string(),
    modelVersion: z.number().int().min(1),
    family: z.string(),
    keyDimensions: keyDimensionsSchema.meta({
      description: "Only the dimensions the family has, each by its own name (nm; area nm²); a microwave model's mm converted",
    }),
    physics: z.enum(PHYSICS_KINDS).meta({ description: 'electrons (E, Γ in meV) or microwave (E, Γ are k² in mm⁻²; see microwave)' }),
    microwave: microwaveFiguresSchema.nullable().meta({ description: 'Microwave mode only; null for electrons' }),
    validity: resonanceValiditySchema,
    material: z.string(),
    fieldT: z.number(),
    energy: z.number().meta({ description: 'E = Re z (meV)' }),
    width: z.number().meta({ description: 'Γ = −2 Im z (meV)' }),
    lifetimePs: z.number().nullable().meta({ description: 'τ = ħ/Γ (ps); null for a bound state' }),
    quality: z.number().nullable().meta({ description: 'Q = E/Γ; null for a bound state' }),
    partialWidths: z.array(z.object({ lead: z.string(), width: z.number() })),
    petermann: z.number().nullable().meta({ description: 'null for fitted resonances' }),
    residual: z.number().nullable().meta({ description: 'null for fitted resonances' }),
    bound: z.boolean(),
    nearThreshold: z.boolean(),
    overlapping: z.boolean(),
    tags: z.array(z.string()),
    notes: z.string(),
    createdAt: timestamp(),
    thumbnailUrl: z.string().nullable().meta({ description: 'null for fitted resonances (no mode image)' }),
    imageUrl: z.string().nullable(),
  })
  .meta({ id: 'ResonanceRow', description: 'One catalogued resonance z = E − iΓ/2.' });
export type ResonanceRow = z.infer<typeof resonanceRowSchema>;
