// Starts, stops and reports the project's own PostgreSQL 15 (Debian's server binaries),
// with its data under .data/pg. Used by the start and test scripts and as a CLI:
//   tsx scripts/db.ts start [--fast-unsafe]|stop|status   (--fast-unsafe: fsync off, for test machines only)
import { execFileSync, spawnSync } from 'node:child_process';
import { chmodSync, existsSync, mkdirSync, statSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import pg from 'pg';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const bin = '/usr/lib/postgresql/15/bin';
const dataDir = join(root, '.data', 'pg');
// Socket and log live beside the data (not in it) so initdb finds an empty folder.
const runDir = join(root, '.data', 'pg-run');
const logFile = join(runDir, 'postgres.log');

export interface EnsureDatabaseOptions {
  /** TCP port on 127.0.0.1; default POLEWARD_DB_PORT or 54329. */
  port?: number;
  /** Databases to create when missing; default ['poleward']. */
  databases?: string[];
  /** Drop and recreate these databases (a clean test run). */
  recreate?: boolean;
  /** Tests only: fsync=off, synchronous_commit=off (a crash may lose data). Only applies when this call starts the server. */
  fastUnsafe?: boolean;
  log?: (line: string) => void;
}

export interface DatabaseServer {
  port: number;
  /** postgres:// URL of one database on this server. */
  url(database: string): string;
}

function defaultPort(): number {
  return Number(process.env.POLEWARD_DB_PORT ?? 54329);
}

function run(cmd: string, args: string[], asPostgres = false): string {
  const [file, argv] = asPostgres ? ['runuser', ['-u', 'postgres', '--', cmd, ...args]] : [cmd, args];
  return execFileSync(file, argv, { encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] });
}

function isReady(port: number): boolean {
  return spawnSync(join(bin, 'pg_isready'), ['-q', '-h', '127.0.0.1', '-p', String(port), '-U', 'postgres']).status === 0;
}

function installServer(log: (line: string) => void): void {
  if (existsSync(join(bin, 'initdb'))) return;
  log('[db] PostgreSQL 15 server binaries missing: apt-get install -y postgresql-15');
  execFileSync('sh', ['-c', 'apt-get update && DEBIAN_FRONTEND=noninteractive apt-get install -y postgresql-15'], {
    stdio: 'inherit',
  });
}

/**
 * PostgreSQL refuses to run as root, so it runs as the `postgres` OS user; that user must
 * be able to walk into the project folder, so every parent folder gets o+x (traverse
 * only, no listing) when it lacks it.
 */
function makeTraversable(dir: string): void {
  for (let d = dirname(dir); ; d = dirname(d)) {
    const mode = statSync(d).mode;
    if ((mode & 0o001) === 0) chmodSync(d, mode | 0o001);
    if (d === dirname(d)) break;
  }
}

function initCluster(log: (line: string) => void): void {
  for (const dir of [dataDir, runDir]) {
    mkdirSync(dir, { recursive: true, mode: 0o700 });
    run('chown', ['postgres:postgres', dir]);
  }
  chmodSync(dataDir, 0o700);
  makeTraversable(dataDir);
  if (existsSync(join(dataDir, 'PG_VERSION'))) return;
  log(`[db] initdb ${dataDir}`);
  run(join(bin, 'initdb'), ['-D', dataDir, '-U', 'postgres', '--auth=trust', '-E', 'UTF8', '--locale=C.UTF-8'], true);
}

function startServer(port: number, fastUnsafe: boolean, log: (line: string) => void): void {
  const opts = [`-p ${port}`, `-k ${runDir}`, '-c listen_addresses=127.0.0.1'];
  if (fastUnsafe) opts.push('-c fsync=off', '-c synchronous_commit=off', '-c full_page_writes=off');
  log(`[db] starting PostgreSQL on 127.0.0.1:${port}${fastUnsafe ? ' (fsync off, tests only)' : ''}`);
  try {
    run(join(bin, 'pg_ctl'), ['-D', dataDir, '-l', logFile, '-w', '-t', '60', '-o', opts.join(' '), 'start'], true);
  } catch (err) {
    // A concurrent caller may have started it in the meantime; only fail if it is not up.
    if (!isReady(port)) {
      const stderr = (err as { stderr?: string }).stderr ?? String(err);
      throw new Error(`PostgreSQL did not start on port ${port}: ${stderr.trim()} (see ${logFile})`, { cause: err });
    }
  }
}

async function createDatabases(port: number, names: string[], recreate: boolean): Promise<void> {
  const client = new pg.Client({ host: '127.0.0.1', port, user: 'postgres', database: 'postgres' });
  await client.connect();
  try {
    for (const name of names) {
      if (!/^[a-z_][a-z0-9_]*$/.test(name)) throw new Error(`Database name "${name}" must be lower-case letters, digits and _.`);
      if (recreate) await client.query(`DROP DATABASE IF EXISTS "${name}" WITH (FORCE)`);
      const found = await client.query('SELECT 1 FROM pg_database WHERE datname = $1', [name]);
      if (found.rowCount === 0) {
        try {
          await client.query(`CREATE DATABASE "${name}"`);
        } catch (err) {
          // 42P04 = duplicate_database: a concurrent caller won the race, which is fine.
          if ((err as { code?: string }).code !== '42P04') throw err;
        }
      }
    }
  } finally {
    await client.end();
  }
}

/** Idempotent: installs, initialises and starts the server only when needed, then creates the databases. */
export async function ensureDatabase(opts: EnsureDatabaseOptions = {}): Promise<DatabaseServer> {
  const port = opts.port ?? defaultPort();
  const log = opts.log ?? ((line: string) => console.log(line));
  if (!isReady(port)) {
    installServer(log);
    initCluster(log);
    startServer(port, opts.fastUnsafe ?? false, log);
  }
  await createDatabases(port, opts.databases ?? ['poleward'], opts.recreate ?? false);
  return { port, url: (database) => `postgres://postgres@127.0.0.1:${port}/${database}` };
}

/** Stops the server started from .data/pg (fast shutdown: open sessions are ended). */
export function stopDatabase(): void {
  if (!existsSync(join(dataDir, 'postmaster.pid'))) return;
  run(join(bin, 'pg_ctl'), ['-D', dataDir, '-m', 'fast', '-w', 'stop'], true);
}

export function databaseStatus(port = defaultPort()): string {
  return isReady(port) ? `running on 127.0.0.1:${port} (data ${dataDir})` : `not running on 127.0.0.1:${port}`;
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const command = process.argv[2];
  if (command === 'start') {
    const server = await ensureDatabase({ fastUnsafe: process.argv.includes('--fast-unsafe') });
    console.log(`[db] ready: ${server.url('poleward')}`);
  } else if (command === 'stop') {
    stopDatabase();
    console.log('[db] stopped');
  } else if (command === 'status') {
    console.log(`[db] ${databaseStatus()}`);
  } else {
    console.error('usage: tsx scripts/db.ts start [--fast-unsafe] | stop | status');
    process.exit(2);
  }
}
