/**
 * The group backup archive: gzip'd JSON lines (`.jsonl.gz`), one record per line,
 * each with a `type`. Plain and open: `zcat file | jq` reads it. Ids are the
 * source server's; a restore gives every row a new id and keeps the links.
 * Binary columns (mode vectors, PNG images) are base64. People are named by
 * e-mail, never by id.
 *
 * Order: header, members, models, model versions, runs, spectra, (computed)
 * resonances, modes, mode images, then the extension sections (measured traces,
 * peak fits, fitted resonances, pole currents, completed mode maps; fabrication
 * records… as they arrive: see BackupSection), then `end` with the record counts,
 * so a truncated file is refused.
 */
import { RUN_KINDS } from '../../shared/api/enums.js';
import { z } from 'zod';

export const BACKUP_FORMAT = 'poleward-group-backup';
/** Version 2 added the peak-fit and mode-map records; version 1 files are still read. */
export const BACKUP_FORMAT_VERSION = 2;
/** Refused beyond this many bytes once decompressed (a gzip bomb, or not a group backup). */
export const MAX_RESTORE_BYTES = 512 * 1024 * 1024;
/** Refused beyond this many bytes as uploaded. */
export const MAX_UPLOAD_BYTES = 256 * 1024 * 1024;

const id = z.uuid();
const when = z.iso.datetime({ offset: true });
const email = z.string().max(320).nullable();
const num = z.number().finite();
const base64 = z.string().regex(/^[A-Za-z0-9+/]*={0,2}$/, 'must be base64');

const headerRecord = z.object({
  type: z.literal('header'),
  format: z.literal(BACKUP_FORMAT, { error: `must be "${BACKUP_FORMAT}" (this is not a Poleward group backup)` }),
  version: z.union([z.literal(1), z.literal(BACKUP_FORMAT_VERSION)], {
    error: `this server reads versions 1 to ${BACKUP_FORMAT_VERSION} of the backup format`,
  }),
  createdAt: when,
  engineVersion: z.string().optional(),
  group: z.object({ name: z.string(), slug: z.string() }),
});

const memberRecord = z.object({
  type: z.literal('member'),
  email: z.string().max(320),
  name: z.string().max(200),
  role: z.enum(['admin', 'designer', 'reviewer', 'viewer']),
});

const modelRecord = z.object({
  type: z.literal('model'),
  id,
  name: z.string().min(1).max(200),
  latestVersion: z.number().int().min(1),
  referenceKey: z.string().max(200).nullable(),
  createdBy: email,
  createdAt: when,
  updatedAt: when,
});

/**
 * Columns added with the microwave mode and the per-family dimensions: optional, so a
 * backup written before them still restores (the back-fill computes them after a restore).
 */
export const geometryFields = {
  physics: z.enum(['electrons', 'microwave']).optional(),
  rxNm: num.nullable().optional(),
  ryNm: num.nullable().optional(),
  innerNm: num.nullable().optional(),
  outerNm: num.nullable().optional(),
  areaNm2: num.nullable().optional(),
};
/** The lattice-validity and frequency columns of a resonance (optional for the same reason). */
export const validityFields = {
  validityLimit: num.nullable().optional(),
  wavelengthSpacings: num.nullable().optional(),
  aboveValidity: z.boolean().nullable().optional(),
  frequencyGhz: num.nullable().optional(),
};

const modelVersionRecord = z.object({
  type: z.literal('modelVersion'),
  id,
  modelId: id,
  version: z.number().int().min(1),
  document: z.record(z.string(), z.unknown()),
  family: z.string(),
  material: z.string(),
  effectiveMass: num,
  spacingNm: num,
  fieldT: num,
  siteCount: z.number().int().nonnegative(),
  leadCount: z.number().int().nonnegative(),
  hoppingMeV: num,
  widthNm: num.nullable(),
  heightNm: num.nullable(),
  radiusNm: num.nullable(),
  lengthNm: num.nullable(),
  ...geometryFields,
  keyDimensions: z.record(z.string(), num),
  createdBy: email,
  createdAt: when,
});

const runRecord = z.object({
  type: z.literal('run'),
  id,
  modelVersionId: id,
  kind: z.enum(RUN_KINDS),
  status: z.enum(['queued', 'running', 'completed', 'failed', 'cancelled']),
  window: z.record(z.string(), num),
  note: z.string().max(10_000),
  progressStage: z.string().nullable(),
  progressFraction: num.nullable(),
  attempt: z.number().int().nonnegative(),
  error: z.string().nullable(),
  engineVersion: z.string().nullable(),
  thresholds: z.array(num).nullable(),
  certificate: z.unknown(),
  stats: z.unknown(),
  estimate: z.unknown(),
  resonanceCount: z.number().int().nonnegative().nullable(),
  createdBy: email,
  createdAt: when,
  startedAt: when.nullable(),
  finishedAt: when.nullable(),
});

const spectrumRecord = z.object({
  type: z.literal('spectrum'),
  runId: id,
  energies: z.array(num),
  pairs: z.array(z.object({ from: z.number().int(), to: z.number().int() })),
  transmission: z.array(z.array(num)),
  residual: z.array(num),
  /** R per lead; absent or null in backups of runs stored before it was kept. */
  reflection: z.array(z.array(num)).nullish(),
  createdAt: when,
});

const resonanceRecord = z.object({
  type: z.literal('resonance'),
  id,
  runId: id,
  modelId: id,
  modelVersionId: id,
  idx: z.number().int().nonnegative(),
  energy: num,
  width: num.nonnegative(),
  lifetimePs: num.nullable(),
  quality: num.nullable(),
  partialWidths: z.array(z.object({ lead: z.string(), width: num })),
  petermann: num,
  residual: num,
  bound: z.boolean(),
  nearThreshold: z.boolean(),
  overlapping: z.boolean(),
  details: z.record(z.string(), z.unknown()),
  tags: z.array(z.string().max(100)).max(100),
  notes: z.string().max(20_000),
  modelName: z.string(),
  modelVersion: z.number().int().min(1),
  family: z.string(),
  material: z.string(),
  fieldT: num,
  spacingNm: num,
  widthNm: num.nullable(),
  heightNm: num.nullable(),
  radiusNm: num.nullable(),
  lengthNm: num.nullable(),
  ...geometryFields,
  ...validityFields,
  createdAt: when,
});

const modeRecord = z.object({
  type: z.literal('mode'),
  resonanceId: id,
  sites: z.number().int().nonnegative(),
  /** Float64 pairs (re, im) per site, little-endian, base64. */
  vector: base64,
});

const modeImageRecord = z.object({
  type: z.literal('modeImage'),
  resonanceId: id,
  size: z.enum(['thumb', 'full']),
  width: z.number().int().positive(),
  height: z.number().int().positive(),
  etag: z.string(),
  png: base64,
});

const endRecord = z.object({
  type: z.literal('end'),
  counts: z.record(z.string(), z.number().int().nonnegative()),
});

export const coreRecord = z.discriminatedUnion('type', [
  headerRecord,
  memberRecord,
  modelRecord,
  modelVersionRecord,
  runRecord,
  spectrumRecord,
  resonanceRecord,
  modeRecord,
  modeImageRecord,
  endRecord,
]);

export type CoreRecord = z.infer<typeof coreRecord>;
export type RecordOf<T extends CoreRecord['type']> = Extract<CoreRecord, { type: T }>;
