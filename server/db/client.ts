import { drizzle, type NodePgDatabase } from 'drizzle-orm/node-postgres';
import pg from 'pg';
import * as schema from './schema/index.js';

export type Db = NodePgDatabase<typeof schema>;
/** A transaction handle; repositories accept either this or the Db. */
export type Tx = Parameters<Parameters<Db['transaction']>[0]>[0];
export type Queryable = Db | Tx;

export interface DbHandle {
  db: Db;
  pool: pg.Pool;
  close(): Promise<void>;
}

/** One pool per process; `max` stays small because the machine has 2 cores. */
export function connectDb(databaseUrl: string, max = 10): DbHandle {
  const pool = new pg.Pool({ connectionString: databaseUrl, max });
  // An idle client dropping (e.g. the server restarting) must not crash the process.
  pool.on('error', (err) => console.error('[poleward] idle database client error:', err.message));
  const db = drizzle(pool, { schema });
  return { db, pool, close: () => pool.end() };
}
