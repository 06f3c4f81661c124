import { randomBytes } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { z } from 'zod';

/** The project root (one folder above server/), used for .data/, migrations/ and dist/. */
export const projectRoot = join(dirname(fileURLToPath(import.meta.url)), '..');

const port = (fallback: number) => z.coerce.number({ error: 'must be a port number' }).int('must be a port number').min(0).max(65535).default(fallback);

const envSchema = z.object({
  NODE_ENV: z.enum(['development', 'production', 'test']).default('development'),
  POLEWARD_PORT: port(8640),
  // Loopback only unless asked: the app is meant to sit behind a TLS proxy when shared.
  POLEWARD_HOST: z
    .string()
    .trim()
    .regex(/^[0-9A-Za-z.:[\]-]+$/, 'must be an IP address or host name, e.g. 127.0.0.1 or 0.0.0.0')
    .default('127.0.0.1'),
  // Behind a reverse proxy every request comes from the proxy: name it, so client addresses
  // (for the per-address sign-in limits and the audit log) come from X-Forwarded-For.
  POLEWARD_TRUST_PROXY: z
    .string()
    .trim()
    .regex(/^(loopback|\d{1,2}|[0-9a-fA-F.:/, ]+)$/, 'must be "loopback", a number of proxy hops, or proxy addresses (comma-separated)')
    .optional(),
  POLEWARD_DB_PORT: port(54329),
  DATABASE_URL: z.url({ protocol: /^postgres(ql)?$/ }).optional(),
  POLEWARD_JWT_SECRET: z.string().min(32, 'must be at least 32 characters').optional(),
  POLEWARD_PUBLIC_URL: z.url({ protocol: /^https?$/ }).default('http://127.0.0.1:8640'),
  POLEWARD_SMTP_URL: z.url({ protocol: /^smtps?$/ }).default('smtp://127.0.0.1:2526'),
  POLEWARD_MAIL_FROM: z.string().min(3).default('Poleward <no-reply@poleward.invalid>'),
  POLEWARD_THREADS_PER_RUN: z.coerce.number().int().min(1).max(16).default(1),
  POLEWARD_RUN_STALE_SECONDS: z.coerce.number().int().min(2).max(3600).default(30),
  POLEWARD_STUDY_STEP_EXPIRE_SECONDS: z.coerce.number().int().min(2).max(86_400).default(900),
  POLEWARD_WORKERS: z.coerce.number({ error: 'must be a whole number' }).int('must be a whole number').min(0).max(64).default(2),
  POLEWARD_COMPUTE_THREADS: z.coerce.number().int().min(1).max(64).optional(),
  POLEWARD_COMPUTE_TIMEOUT_SECONDS: z.coerce.number().int().min(1).max(3600).default(60),
  POLEWARD_RUN_MAX_SECONDS: z.coerce.number().positive().default(7200),
  POLEWARD_RUNS_PER_GROUP: z.coerce.number().int().min(1).default(12),
  POLEWARD_RUNS_PER_USER: z.coerce.number().int().min(1).default(4),
});

export interface Config {
  nodeEnv: 'development' | 'production' | 'test';
  port: number;
  /** Address the HTTP server binds (default 127.0.0.1: loopback only). */
  host: string;
  /** Express's `trust proxy` setting: false (no proxy), a hop count, or proxy addresses. */
  trustProxy: false | number | string;
  dbPort: number;
  databaseUrl: string;
  jwtSecret: string;
  /** Base of links in e-mails, without a trailing slash. */
  publicUrl: string;
  smtpUrl: string;
  mailFrom: string;
  /** True when mail goes to the local SMTP stand-in, whose messages GET /api/outbox lists. */
  mailStandIn: boolean;
  workers: number;
  /** Worker threads one pole search may use (its window is split between them). */
  threadsPerRun: number;
  /** A running run with no worker heartbeat for this long is put back in the queue. */
  runStaleSeconds: number;
  /** Seconds after which a study step's job counts as lost and is retried (server/studies). */
  studyStepExpireSeconds: number;
  /** Threads of the API's compute pool (geometry and estimates off the event loop); default cores − 1. */
  computeThreads: number | undefined;
  /** A request's computation running longer is stopped with a 503. */
  computeTimeoutSeconds: number;
  /** Run size and runs in flight (POLEWARD_RUN_MAX_SECONDS, POLEWARD_RUNS_PER_GROUP, POLEWARD_RUNS_PER_USER). */
  runLimits: { maxSeconds: number; perGroup: number; perUser: number };
  /** Folder of the built Angular client (may not exist in development). */
  clientDir: string;
  version: string;
}

/** Thrown by loadConfig with one line per bad variable, so a wrong env fails at start, readably. */
export class ConfigError extends Error {}

/**
 * Reads the environment once at start. In development the JWT secret is generated
 * and kept in .data/jwt-secret so sessions survive restarts; production must set it.
 */
export function loadConfig(env: NodeJS.ProcessEnv = process.env): Config {
  const parsed = envSchema.safeParse(env);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `  ${i.path.join('.')}: ${i.message}`);
    throw new ConfigError(`Poleward configuration is not valid:\n${lines.join('\n')}`);
  }
  const e = parsed.data;
  if (e.NODE_ENV === 'production' && !e.POLEWARD_JWT_SECRET) {
    throw new ConfigError('Poleward configuration is not valid:\n  POLEWARD_JWT_SECRET: required when NODE_ENV=production');
  }
  const smtp = new URL(e.POLEWARD_SMTP_URL);
  const local = smtp.protocol === 'smtp:' && ['127.0.0.1', 'localhost', '[::1]'].includes(smtp.hostname);
  return {
    nodeEnv: e.NODE_ENV,
    port: e.POLEWARD_PORT,
    host: e.POLEWARD_HOST,
    trustProxy: e.POLEWARD_TRUST_PROXY === undefined ? false : /^\d+$/.test(e.POLEWARD_TRUST_PROXY) ? Number(e.POLEWARD_TRUST_PROXY) : e.POLEWARD_TRUST_PROXY,
    dbPort: e.POLEWARD_DB_PORT,
    databaseUrl: e.DATABASE_URL ?? `postgres://postgres@127.0.0.1:${e.POLEWARD_DB_PORT}/poleward`,
    jwtSecret: e.POLEWARD_JWT_SECRET ?? developmentSecret(),
    publicUrl: e.POLEWARD_PUBLIC_URL.replace(/\/+$/, ''),
    smtpUrl: e.POLEWARD_SMTP_URL,
    mailFrom: e.POLEWARD_MAIL_FROM,
    mailStandIn: local,
    workers: e.POLEWARD_WORKERS,
    runStaleSeconds: e.POLEWARD_RUN_STALE_SECONDS,
    studyStepExpireSeconds: e.POLEWARD_STUDY_STEP_EXPIRE_SECONDS,
    threadsPerRun: e.POLEWARD_THREADS_PER_RUN,
    computeThreads: e.POLEWARD_COMPUTE_THREADS,
    computeTimeoutSeconds: e.POLEWARD_COMPUTE_TIMEOUT_SECONDS,
    runLimits: { maxSeconds: e.POLEWARD_RUN_MAX_SECONDS, perGroup: e.POLEWARD_RUNS_PER_GROUP, perUser: e.POLEWARD_RUNS_PER_USER },
    clientDir: join(projectRoot, 'dist', 'poleward', 'browser'),
    version: packageVersion(),
  };
}

function developmentSecret(): string {
  const file = join(projectRoot, '.data', 'jwt-secret');
  if (existsSync(file)) return readFileSync(file, 'utf8').trim();
  mkdirSync(dirname(file), { recursive: true });
  const secret = randomBytes(48).toString('base64url');
  writeFileSync(file, secret + '\n', { mode: 0o600 });
  return secret;
}

function packageVersion(): string {
  const pkg = JSON.parse(readFileSync(join(projectRoot, 'package.json'), 'utf8')) as { version?: string };
  return pkg.version ?? '0.0.0';
}
