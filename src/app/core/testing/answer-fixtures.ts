import type { z } from 'zod';
import type { JsonAnswer, RouteDeclaration } from '../../../../shared/api/route';
import { type ModelVersion, getModelVersionRoute } from '../../../../shared/api/models';
import { type ResonanceRow, resonanceRowSchema } from '../../../../shared/api/resonance-row';
import { type Run, type RunDetail, type RunEstimate, runDetailSchema, runEstimateSchema, runSchema } from '../../../../shared/api/runs';

/**
 * Spec fixtures of API answers, parsed through the answer schemas of shared/api: a fixture
 * that no longer fits the contract fails the spec at once, naming the field, instead of
 * testing a shape the server never sends.
 */
export function answerFixture<S extends z.ZodType>(schema: S, value: z.input<S>): z.output<S>;
export function answerFixture<D extends RouteDeclaration & { answer: JsonAnswer }>(
  route: D,
  value: z.input<D['answer']['schema']>,
): z.output<D['answer']['schema']>;
export function answerFixture(routeOrSchema: (RouteDeclaration & { answer: JsonAnswer }) | z.ZodType, value: unknown): unknown {
  const schema = 'answer' in routeOrSchema ? routeOrSchema.answer.schema : routeOrSchema;
  const result = schema.safeParse(value);
  if (result.success) return result.data;
  const issues = result.error.issues.map((i) => `${i.path.map(String).join('.') || '(top)'}: ${i.message}`).join('; ');
  throw new Error(`Spec fixture does not fit the answer schema: ${issues}`);
}

/** The n-th id of the specs, a valid UUID as the contract requires (fixtureId(1) → …-000000000001). */
export function fixtureId(n: number): string {
  return `00000000-0000-4000-8000-${n.toString(16).padStart(12, '0')}`;
}

/** A UUID named by a label, the same for the same label ('u-ada' → always one id), for specs that read better by name. */
export function specId(label: string): string {
  let h = 0x811c9dc5; // FNV-1a, 32 bits
  for (const c of label) h = Math.imul(h ^ c.charCodeAt(0), 0x01000193) >>> 0;
  return fixtureId(h);
}

/** A running pole search as the API lists it; vary it with `changes`. */
export function sampleRun(changes: Partial<Run> = {}): Run {
  return answerFixture(runSchema, {
    id: fixtureId(0x101),
    kind: 'pole-search',
    status: 'running',
    progress: { stage: 'contour', fraction: 0.1 },
    window: { emin: 1, emax: 5, gammaMax: 0.5 },
    note: '',
    modelId: fixtureId(0x201),
    modelName: 'Dot A',
    modelVersion: 2,
    createdBy: { id: fixtureId(0x301), name: 'Ada' },
    createdAt: '2025-01-01T10:00:00Z',
    startedAt: '2025-01-01T10:00:01Z',
    finishedAt: null,
    attempts: 1,
    error: null,
    notice: null,
    engineVersion: '0.1.0',
    resonanceCount: null,
    certificate: null,
    estimate: null,
    stats: null,
    ...changes,
  });
}

/** A run estimate of a small pole search; vary it with `changes`. */
export function sampleEstimate(changes: Partial<RunEstimate> = {}): RunEstimate {
  return answerFixture(runEstimateSchema, {
    sites: 2500,
    pieces: 1,
    thresholdsInWindow: [],
    expectedLevels: 12,
    factorisations: 400,
    secondsPerFactorisation: 0.01,
    expectedSeconds: 4,
    method: { kind: 'cost-model', engineVersion: '0.1.0', calibratedAt: '2026-12-01T00:00:00Z' },
    warnings: [],
    ...changes,
  });
}

/** The run page's answer: sampleRun with no poles, thresholds or spectrum unless given. */
export function sampleRunDetail(changes: Partial<RunDetail> = {}): RunDetail {
  return answerFixture(runDetailSchema, { ...sampleRun(), thresholds: [], poles: [], spectrum: null, leads: [], microwave: null, ...changes });
}

/** One computed resonance of sampleRun's model, as the catalogue and the run page list it. */
export function sampleResonance(changes: Partial<ResonanceRow> = {}): ResonanceRow {
  return answerFixture(resonanceRowSchema, {
    id: fixtureId(0x401),
    runId: fixtureId(0x101),
    source: 'computed',
    fitId: null,
    modelId: fixtureId(0x201),
    modelName: 'Dot A',
    modelVersion: 2,
    family: 'disk',
    keyDimensions: { radius: 500 },
    physics: 'electrons',
    microwave: null,
    validity: { limit: 20, wavelengthSpacings: 12, aboveLimit: false },
    material: 'GaAs',
    fieldT: 0,
    energy: 2.5,
    width: 0.05,
    lifetimePs: 0.658 / 0.05,
    quality: 2.5 / 0.05,
    partialWidths: [
      { lead: 'left', width: 0.025 },
      { lead: 'right', width: 0.025 },
    ],
    petermann: 1.01,
    residual: 1e-12,
    bound: false,
    nearThreshold: false,
    overlapping: false,
    tags: [],
    notes: '',
    createdAt: '2025-01-01T10:05:00Z',
    thumbnailUrl: null,
    imageUrl: null,
    ...changes,
  });
}

/** A version of a small GaAs rectangle (a = 5 nm, 60 × 40 sites) as GET /models/:id/versions/:v answers. */
export function sampleModelVersion(changes: Partial<ModelVersion> = {}): ModelVersion {
  return answerFixture(getModelVersionRoute, {
    version: 2,
    document: {
      name: 'Dot A',
      spacing: 5,
      material: 'gaas',
      grid: { nx: 60, ny: 40 },
      shape: { kind: 'rectangle', x0: 0, y0: 0, width: 300, height: 200 },
      leads: [],
    },
    derived: {
      siteCount: 2400,
      hopping: 22.75,
      massRatio: 0.067,
      energyCeiling: 11.4,
      wavelengthCeiling: 8.9,
      fluxPerPlaquette: 0,
      cyclotronEnergy: 0,
      magneticLength: null,
      leads: [],
    },
    createdAt: '2025-01-01T10:00:00Z',
    ...changes,
  });
}
