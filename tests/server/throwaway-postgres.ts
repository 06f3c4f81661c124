// A PostgreSQL server of a test's own (another port, a data folder in /tmp), for tests
// that stop or restart the database: the project's shared server is never touched.
// Runs as the postgres OS user (PostgreSQL refuses root), fsync off (disposable data).
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

const bin = '/usr/lib/postgresql/15/bin';

export interface ThrowawayPostgres {
  port: number;
  url(database: string): string;
  createDatabase(name: string): void;
  stop(): void;
  start(): void;
  /** Stops the server and deletes its data folder. */
  destroy(): void;
}

function asPostgres(cmd: string, args: string[]) {
  return execFileSync('runuser', ['-u', 'postgres', '--', join(bin, cmd), ...args], { encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] });
}

export function startThrowawayPostgres(port: number): ThrowawayPostgres {
  const dir = mkdtempSync(join(tmpdir(), 'poleward-pg-'));
  execFileSync('chown', ['postgres:postgres', dir]);
  const data = join(dir, 'data');
  asPostgres('initdb', ['-D', data, '-U', 'postgres', '--auth=trust', '--no-sync']);
  const opts = `-p ${port} -k ${dir} -c listen_addresses=127.0.0.1 -c fsync=off -c synchronous_commit=off`;
  const pg: ThrowawayPostgres = {
    port,
    url: (database) => `postgres://postgres@127.0.0.1:${port}/${database}`,
    createDatabase(name) {
      execFileSync(join(bin, 'createdb'), ['-h', '127.0.0.1', '-p', String(port), '-U', 'postgres', name]);
    },
    start() {
      asPostgres('pg_ctl', ['-D', data, '-l', join(dir, 'postgres.log'), '-w', '-o', opts, 'start']);
    },
    stop() {
      // fast: ends the sessions at once, as an operator's restart would.
      asPostgres('pg_ctl', ['-D', data, '-m', 'fast', '-w', 'stop']);
    },
    destroy() {
      spawnSync('runuser', ['-u', 'postgres', '--', join(bin, 'pg_ctl'), '-D', data, '-m', 'immediate', '-w', 'stop'], { stdio: 'ignore' });
      rmSync(dir, { recursive: true, force: true });
    },
  };
  pg.start();
  return pg;
}
