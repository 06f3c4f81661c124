/**
 * Zod schemas of what the API answers, for the OpenAPI description. Requests are
 * described by the schemas the routes validate with; answers had none, so they live
 * here in one place. Nothing parses answers with these at run time: the OpenAPI test
 * parses real answers with them so they cannot quietly drift from the services.
 * Units: energies and widths meV, lifetimes ps, lengths nm, field T; times ISO 8601.
 */
import { z } from 'zod';
import { membershipRole } from '../db/schema/groups.js';
import { RUN_KINDS } from '../jobs/queues.js';
import { cavityModelDescription } from './cavity-model-description.js';

const timestamp = () => z.iso.datetime({ offset: true });
/** Infinity (ℓ_B at B = 0, λ at E ≤ 0) leaves JSON.stringify as null. */
const numberOrInfinite = () => z.number().nullable().meta({ description: 'null stands for infinity' });

export const roleSchema = z.enum(membershipRole.enumValues).meta({ id: 'Role' });
const personRef = z.object({ id: z.uuid(), name: z.string() });


export const groupOfUserSchema = z.object({ id: z.uuid(), name: z.string(), slug: z.string(), role: roleSchema }).meta({ id: 'GroupOfUser' });

export const sessionSchema = z
  .object({
    user: z.object({ id: z.uuid(), email: z.string(), name: z.string() }),
    groups: z.array(groupOfUserSchema),
    csrfToken: z.string().meta({ description: "This session's CSRF value: echo it in X-CSRF-Token on unsafe requests; empty for personal-token callers." }),
    siteOperator: z.boolean().meta({ description: 'True for the site operator, who alone may read the local mail outbox.' }),
  })
  .meta({ id: 'Session' });

export const messageSchema = z.object({ message: z.string() }).meta({ id: 'Message' });

export const groupDetailSchema = groupOfUserSchema.extend({ memberCount: z.number().int().nonnegative() }).meta({ id: 'GroupDetail' });

export const memberSchema = z
  .object({ userId: z.uuid(), email: z.string(), name: z.string(), role: roleSchema, joinedAt: timestamp() })
  .meta({ id: 'Member' });

export const invitationSchema = z
  .object({
    id: z.uuid(),
    email: z.string(),
    role: roleSchema,
    invitedBy: personRef.nullable(),
    createdAt: timestamp(),
    expiresAt: timestamp(),
    status: z.enum(['pending', 'expired']),
  })
  .meta({ id: 'Invitation' });

export const invitationPreviewSchema = z
  .object({ email: z.string(), groupName: z.string(), role: roleSchema, invitedBy: z.string().nullable() })
  .meta({ id: 'InvitationPreview' });

export const activityEntrySchema = z
  .object({ id: z.uuid(), at: timestamp(), actor: personRef.nullable(), action: z.string(), subject: z.string(), details: z.unknown() })
  .meta({ id: 'ActivityEntry' });

export const apiTokenSchema = z
  .object({ id: z.uuid(), name: z.string(), createdAt: timestamp(), lastUsedAt: timestamp().nullable() })
  .meta({ id: 'ApiToken' });

export const createdApiTokenSchema = z
  .object({
    id: z.uuid(),
    name: z.string(),
    token: z.string().meta({ description: 'pwt_ and 43 characters; shown this once, stored only as its hash.' }),
    createdAt: timestamp(),
  })
  .meta({ id: 'CreatedApiToken' });

export const outboxSummarySchema = z
  .object({ id: z.uuid(), to: z.string(), subject: z.string(), receivedAt: timestamp() })
  .meta({ id: 'OutboxSummary' });

export const outboxMessageSchema = z
  .object({ id: z.uuid(), to: z.string(), subject: z.string(), text: z.string(), html: z.string().optional(), receivedAt: timestamp() })
  .meta({ id: 'OutboxMessage' });

// ---- models

const channelThreshold = z.object({
  channel: z.number().int().min(1),
  transverse: z.number().meta({ description: 'ε_m (meV)' }),
  opens: z.number().meta({ description: 'ε_m − 2t (meV)' }),
  closes: z.number().meta({ description: 'ε_m + 2t (meV)' }),
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
    leads: z.array(
      z.object({ name: z.string(), side: z.string(), width: z.number().int(), offset: z.number(), thresholds: z.array(channelThreshold) }),
    ),
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
    permittivity: z.number().optional().meta({ description: 'Microwave: ε_r of the filling' }),
    heightMm: z.number().optional().meta({ description: 'Microwave: height h of the resonator (mm)' }),
    twoDimensionalLimitGhz: z.number().optional().meta({ description: 'Microwave: c/(2h√ε_r) (GHz), above which the 2D picture fails' }),
  })
  .meta({ id: 'DerivedFigures', description: 'Figures that follow from a model: hopping, thresholds, magnetic length (docs/physics-model.md).' });

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
    spacingNm: z.number().meta({ description: 'Lattice spacing (nm; a microwave model\'s mm converted)' }),
    fieldT: z.number(),
    siteCount: z.number().int(),
    leadCount: z.number().int(),
    keyDimensions: modelKeyDimensions,
    updatedAt: timestamp(),
    createdBy: personRef.nullable(),
  })
  .meta({ id: 'ModelSummary' });

export const modelListSchema = z.object({ items: z.array(modelSummarySchema), total: z.number().int().nonnegative() }).meta({ id: 'ModelList' });

export const modelDetailSchema = modelSummarySchema
  .extend({
    document: cavityModelDescription,
    derived: derivedFiguresSchema,
    versions: z.array(
      z.object({ version: z.number().int().min(1), createdAt: timestamp(), createdBy: personRef.nullable(), usedByRuns: z.number().int().nonnegative() }),
    ),
  })
  .meta({ id: 'ModelDetail' });

export const modelVersionSchema = z
  .object({ version: z.number().int().min(1), document: cavityModelDescription, derived: derivedFiguresSchema, createdAt: timestamp() })
  .meta({ id: 'ModelVersion' });

export const modelCheckSchema = z
  .object({
    ok: z.literal(true),
    derived: derivedFiguresSchema,
    columns: z
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
      .meta({ description: 'What the catalogue will file the model under' }),
  })
  .meta({ id: 'ModelCheck' });

export const bitmapMaskSchema = z
  .object({
    shape: z.object({ kind: z.literal('bitmap'), width: z.number().int(), height: z.number().int(), data: z.string() }),
    grid: z.object({ nx: z.number().int(), ny: z.number().int() }),
    siteCount: z.number().int(),
  })
  .meta({ id: 'BitmapMask', description: 'A bitmap shape and grid to paste into a model document.' });

// ---- runs

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

export const runSchema = z
  .object({
    id: z.uuid(),
    kind: z.enum(RUN_KINDS as [string, ...string[]]),
    status: z.enum(['queued', 'running', 'completed', 'failed', 'cancelled']),
    progress: z.object({ stage: z.string(), fraction: z.number().min(0).max(1) }).nullable(),
    window: z.record(z.string(), z.number()).meta({ description: 'As submitted (meV; points for a transmission sweep)' }),
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
    notice: z.string().nullable().meta({ description: 'Set while the run looks stuck (queued with no worker taking it, or its worker silent): what is happening and what to do' }),
    engineVersion: z.string().nullable(),
    resonanceCount: z.number().int().nullable(),
    certificate: z.unknown().meta({ description: 'How far the pole count is certified, per window piece (pole searches), or null' }),
    estimate: runEstimateSchema.nullable(),
    stats: z.unknown().meta({ description: 'Engine counters (LU factorisations, Newton steps...), or null' }),
  })
  .meta({ id: 'Run' });

export const runListSchema = z.object({ items: z.array(runSchema), total: z.number().int().nonnegative() }).meta({ id: 'RunList' });

export const spectrumSchema = z
  .object({
    energies: z.array(z.number()).meta({ description: 'meV' }),
    pairs: z.array(z.object({ from: z.number().int(), to: z.number().int() })).meta({ description: 'Lead pairs in the order of transmission rows' }),
    transmission: z.array(z.array(z.number())),
    residual: z.array(z.number()),
    reflection: z
      .array(z.array(z.number()))
      .nullable()
      .meta({ description: 'R per lead in the model\'s lead order: reflection[lead][energy], summed over the lead\'s open channels; null for runs computed before reflection was kept' }),
  })
  .meta({ id: 'Spectrum' });

// ---- catalogue

export const resonanceRowSchema = z
  .object({
    id: z.uuid(),
    runId: z.uuid().nullable().meta({ description: 'The run; null for a fitted resonance of a measured trace' }),
    source: z.enum(['computed', 'fitted']).meta({ description: 'computed: a pole a run found; fitted: a peak fit (fitId)' }),
    fitId: z.uuid().nullable(),
    modelId: z.uuid(),
    modelName: z.string(),
    modelVersion: z.number().int().min(1),
    family: z.string(),
    keyDimensions: z
      .object({
        width: z.number().optional(),
        height: z.number().optional(),
        radius: z.number().optional(),
        length: z.number().optional(),
        rx: z.number().optional(),
        ry: z.number().optional(),
        inner: z.number().optional(),
        outer: z.number().optional(),
        area: z.number().optional(),
      })
      .meta({ description: 'The dimensions the family has, by their own names (nm; area nm²): width/height bounding box, radius (disk, stadium), length (stadium), rx/ry (ellipse), inner/outer (annulus), area (all)' }),
    physics: z.enum(['electrons', 'microwave']).meta({ description: 'electrons: E, Γ in meV; microwave: E, Γ are k² in mm⁻², frequencies in `microwave`' }),
    microwave: z
      .object({
        frequencyGhz: z.number().meta({ description: 'Re f = c·Re√z/(2π√ε_r) (GHz)' }),
        widthMhz: z.number().meta({ description: 'Γ_f = 2|Im f| (MHz)' }),
        lifetimeNs: z.number().nullable().meta({ description: 'τ = 1/(2πΓ_f) (ns); null when bound' }),
        quality: z.number().nullable().meta({ description: 'Q = Re f/Γ_f; null when bound' }),
        validityLimitGhz: z.number().nullable().meta({ description: 'The lattice-validity limit as a frequency (GHz)' }),
      })
      .nullable()
      .meta({ description: 'The complex frequency of a microwave-mode resonance; null for electrons' }),
    validity: z
      .object({
        limit: z.number().nullable().meta({ description: 'Energy below which the lattice is trusted (meV; mm⁻² for microwave)' }),
        wavelengthSpacings: z.number().nullable().meta({ description: 'λ/a at this resonance (null: infinite)' }),
        aboveLimit: z.boolean().nullable().meta({ description: 'true: above the limit, the lattice is not trusted here; null: unknown (a fit on a gate axis)' }),
      })
      .meta({ description: 'Lattice validity of the resonance (docs/physics-model.md)' }),
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

export const cataloguePageSchema = z
  .object({
    items: z.array(resonanceRowSchema),
    total: z.number().int().nonnegative().meta({ description: 'Number of matches, obtained as totalKind says' }),
    totalKind: z
      .enum(['exact', 'cached', 'estimated'])
      .meta({ description: 'exact: counted for this answer; cached: counted exactly countAgeSeconds ago; estimated: the database planner\'s estimate (ask count=exact)' }),
    countedAt: timestamp().nullable().meta({ description: 'When the exact count was taken; null for an estimate' }),
    countAgeSeconds: z.number().int().nonnegative().nullable(),
    page: z.number().int().min(1).meta({ description: 'Page number: exact with page=, carried as a label by cursors' }),
    pageSize: z.number().int(),
    nextCursor: z.string().nullable().meta({ description: 'Opaque cursor of the next page (pass as cursor=); null on the last page' }),
    prevCursor: z.string().nullable().meta({ description: 'Opaque cursor of the previous page; null on the first page' }),
  })
  .meta({ id: 'CataloguePage' });

export const resonanceDetailSchema = resonanceRowSchema
  .extend({
    run: z.object({ id: z.uuid(), kind: z.string(), window: z.record(z.string(), z.number()), certificate: z.unknown(), status: z.string() }).nullable(),
    model: z.object({ id: z.uuid(), name: z.string(), version: z.number().int() }),
    otherPoles: z.array(z.object({ id: z.uuid(), energy: z.number(), width: z.number() })),
    thresholds: z.array(z.number()).meta({ description: 'Channel thresholds in the run window (meV)' }),
    leads: z.array(z.object({ name: z.string(), side: z.string(), width: z.number().int() })),
  })
  .meta({ id: 'ResonanceDetail' });

export const runDetailSchema = runSchema
  .extend({
    thresholds: z.array(z.number()),
    poles: z.array(resonanceRowSchema),
    spectrum: spectrumSchema.nullable(),
    leads: z
      .array(z.object({ name: z.string(), side: z.string(), width: z.number().int() }))
      .meta({ description: "The model version's leads in engine order (spectrum pairs index into it)" }),
  })
  .meta({ id: 'RunDetail' });

export const catalogueExportSchema = z
  .object({
    exportedAt: timestamp(),
    units: z.record(z.string(), z.string()),
    items: z.array(resonanceRowSchema),
    /** The model versions the items came from, so POST /catalogue/import can rebuild them in another group. */
    models: z.array(z.object({ modelId: z.uuid(), name: z.string(), version: z.number().int(), document: z.unknown() })),
  })
  .meta({ id: 'CatalogueExport' });
